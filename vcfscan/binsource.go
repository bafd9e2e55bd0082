package vcfscan

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"sync/atomic"
)

// bcfSource feeds BCF records, read one by one from the (possibly
// parallel-inflated) stream, to the BCF helper's decoder.
type bcfSource struct {
	r     io.Reader
	dec   *bcfDecoder
	buf   []byte
	index int64
	eof   bool
}

// bcfBatchRecords is the number of records read into one BCF batch.
const bcfBatchRecords = 4096

// bcfBatchCalls caps the genotype calls of one BCF batch, about those of a
// 2 MiB VCF text chunk, so that many samples do not make huge batches.
const bcfBatchCalls = 1 << 19

// openBCF reads the BCF header from tb and prepares record decoding.
func (r *Reader) openBCF(tb *bufio.Reader, path string) error {
	hdr, err := readBCFHeader(tb, r.name, r.opt.Limits, r.warn)
	if err != nil {
		return err
	}
	r.hdr = hdr
	sel, out, err := selectSampleList(r.name, hdr.Samples, r.opt.Samples, r.opt.ExcludeSamples)
	if err != nil {
		return err
	}
	r.samples = out
	var src io.Reader = tb
	if len(r.opt.Regions) > 0 {
		if r.format != FormatBCF || path == "" {
			return fmt.Errorf("%s: %w: regions need a BGZF-compressed BCF file with a .csi index", r.name, ErrNoIndex)
		}
		s, err := r.regionStream(path)
		if err != nil {
			return err
		}
		src = s
	}
	dec := newBCFDecoder(hdr, sel, r.opt)
	dec.name = r.name
	r.bcf = &bcfSource{r: src, dec: dec}
	r.doneChroms = map[int]bool{} // for finishBatch's sortedness checks
	r.free = make(chan *Batch, 4)
	return nil
}

// selectSampleList is selectSamples returning, for each output position,
// the file column it comes from.
func selectSampleList(name string, file, keep, exclude []string) ([]int, []string, error) {
	dest, out, err := selectSamples(name, file, keep, exclude)
	if err != nil {
		return nil, nil, err
	}
	sel := make([]int, len(out))
	if dest == nil {
		for i := range sel {
			sel[i] = i
		}
		return sel, out, nil
	}
	for j, o := range dest {
		if o >= 0 {
			sel[o] = j
		}
	}
	return sel, out, nil
}

func (r *Reader) nextBCF() (*Batch, error) {
	s := r.bcf
	if s.eof {
		return nil, io.EOF
	}
	b := r.newBatch()
	if b.st == nil {
		b.st = &batchState{done: make(chan struct{}, 1)}
	}
	b.Records, b.GT, b.PL, b.HasPL = b.Records[:0], b.GT[:0], b.PL[:0], b.HasPL[:0]
	b.DP, b.HasDP = b.DP[:0], b.HasDP[:0]
	b.Skipped = [NumSkipReasons]int64{}
	b.Read, b.Masked = 0, 0
	b.arena = b.arena[:0]
	b.NSamples = len(r.samples)
	b.st.reset()
	s.dec.st = b.st // haploid/polyploid warnings and sortedness blocks
	for len(b.Records) < bcfBatchRecords && len(b.arena) < chunkTarget && len(b.GT) < bcfBatchCalls {
		rec, err := readBCFRecord(s.r, s.buf, r.opt.Limits.MaxLineBytes)
		s.buf = rec
		if err == io.EOF {
			s.eof = true
			break
		}
		if err != nil {
			return nil, s.dec.frameError(s.index, err) // ParseError with the virtual offset
		}
		kept, reason, err := s.dec.decode(rec, s.index, b)
		s.index++
		b.Read++
		if err != nil {
			return nil, err
		}
		if !kept {
			b.Skipped[reason]++
		}
	}
	if s.eof {
		r.finishWarnings()
		if b.Read == 0 {
			return nil, io.EOF
		}
	}
	if err := r.finishBatch(b); err != nil { // warnings, RequireSorted, Seq
		return nil, err
	}
	return b, nil
}

// regionStream stops the sequential BGZF reader and returns a reader of
// only the indexed chunks that cover Options.Regions (hts-specs tabix/CSI).
func (r *Reader) regionStream(path string) (io.Reader, error) {
	chunks, err := regionChunks(path, r.hdr, r.opt.Regions)
	if err != nil {
		return nil, err
	}
	r.bz.Close()
	r.bz = nil
	if len(chunks) == 0 {
		return eofReader{}, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	r.regionFile = f
	// Progress now counts the bytes of the chunks against their total span.
	var span int64
	for _, c := range chunks {
		span += c.End.File - c.Begin.File
	}
	r.cnt.n.Store(0)
	r.total = span
	r.regionMode = true
	bz, err := newBGZFReader(&seekCounter{f: f, n: &r.cnt.n}, r.name, r.opt.Threads, r.opt.Limits.MaxBlockExpand, chunks)
	if err != nil {
		return nil, err
	}
	r.bz = bz
	return bz, nil
}

// seekCounter counts the bytes read from a seekable file for Progress.
type seekCounter struct {
	f *os.File
	n *atomic.Int64
}

func (c *seekCounter) Read(p []byte) (int, error) {
	n, err := c.f.Read(p)
	c.n.Add(int64(n))
	return n, err
}

func (c *seekCounter) Seek(off int64, whence int) (int64, error) { return c.f.Seek(off, whence) }

func newRegionFilter(regs []Region) regionFilter { return newRegionSet(regs) }
