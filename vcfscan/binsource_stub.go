//go:build !bcfseam

package vcfscan

import (
	"bufio"
	"fmt"
	"io"
)

// Until the BCF decoder and the index reader land, BCF input and regions
// are refused with a clear message.

type bcfSource struct{}

func (r *Reader) openBCF(tb *bufio.Reader, path string) error {
	return fmt.Errorf("%s: %w", r.name, errBCFPending)
}

func (r *Reader) nextBCF() (*Batch, error) { return nil, io.EOF }

func (r *Reader) regionStream(path string) (io.Reader, error) {
	return nil, fmt.Errorf("%s: region queries are not supported yet", r.name)
}

func newRegionFilter(regs []Region) regionFilter { return nil }
