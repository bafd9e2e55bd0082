package vcfscan

import (
	"bytes"
	"fmt"
	"os"
)

// lineIndex builds the tabix index of a table while it passes through a
// BGZFWriter (BGZFWriter.IndexLines), so that a finished table need not
// be read back and inflated again as IndexBGZFTable does: each line's
// uncompressed extent is noted as it is written, and turned into virtual
// offsets once the writer has written the blocks holding it (it logs each
// block's inflated and compressed size, in order). The chunks are those
// scanBGZFLines finds in the written file, so the index bytes are the
// same as IndexBGZFTable's (TestIndexLinesMatchesReread).
type lineIndex struct {
	cols    TabixColumns
	tw      *TabixWriter
	partial []byte // the start of a line split across writes
	u       int64  // inflated bytes passed so far
	lineNum int64
	chrom   string
	pend    []pendingLine
	err     error // the first error (a malformed line, or the index's own)
	errLine int64

	// cursor over the block log: block bi starts at inflated offset bu
	// and compressed offset bc
	bi     int
	bu, bc int64
	blocks []bgzfBlockLen // a copy of the log's new entries
}

// bgzfBlockLen is one written block: its inflated and compressed sizes.
type bgzfBlockLen struct{ u, c int64 }

type pendingLine struct {
	chrom    string
	beg, end int64
	u0, u1   int64
}

// IndexLines makes bw build the tabix index of the table written through
// it, laid out as cols, for WriteIndex. It must be called before the
// first Write.
func (bw *BGZFWriter) IndexLines(cols TabixColumns) {
	if !bw.started {
		bw.li = &lineIndex{cols: cols, tw: NewTabixWriter(cols)}
	}
}

// feed notes the lines of p, which starts at inflated offset li.u.
func (li *lineIndex) feed(p []byte) {
	for len(p) > 0 {
		j := bytes.IndexByte(p, '\n')
		if j < 0 {
			li.partial = append(li.partial, p...)
			li.u += int64(len(p))
			return
		}
		line := p[:j]
		if len(li.partial) > 0 {
			li.partial = append(li.partial, line...)
			line = li.partial
		}
		u1 := li.u + int64(j) + 1
		li.line(line, u1-int64(len(line))-1, u1)
		li.partial = li.partial[:0]
		li.u = u1
		p = p[j+1:]
	}
}

// line notes one line (without its newline) spanning [u0, u1).
func (li *lineIndex) line(line []byte, u0, u1 int64) {
	li.lineNum++
	if li.err != nil {
		return
	}
	cols := li.cols
	if int(li.lineNum) <= cols.Skip || (cols.Meta != 0 && len(line) > 0 && line[0] == cols.Meta) {
		return
	}
	chromB, beg, end, err := tabixFields(line, cols)
	if err != nil {
		li.err, li.errLine = err, li.lineNum
		return
	}
	if string(chromB) != li.chrom { // no allocation per line
		li.chrom = string(chromB)
	}
	li.pend = append(li.pend, pendingLine{li.chrom, beg, end, u0, u1})
}

// at returns the virtual offset of inflated offset u, advancing the
// cursor over the known blocks; ok is false while the block holding u is
// not yet written. An offset at the end of the written blocks is the start
// of the next block, as scanBGZFLines gives a line ending a block.
func (li *lineIndex) at(u int64) (Offset, bool) {
	for li.bi < len(li.blocks) && u >= li.bu+li.blocks[li.bi].u {
		li.bu += li.blocks[li.bi].u
		li.bc += li.blocks[li.bi].c
		li.bi++
	}
	if li.bi < len(li.blocks) || u == li.bu {
		return Offset{File: li.bc, Block: uint16(u - li.bu)}, true
	}
	return Offset{}, false
}

// resolve adds to the index every pending line whose blocks are written.
func (li *lineIndex) resolve(bw *BGZFWriter) {
	bw.blkMu.Lock()
	li.blocks = append(li.blocks, bw.blkLog...)
	bw.blkLog = bw.blkLog[:0]
	bw.blkMu.Unlock()
	written := li.writtenU() // the cursor's moves below leave it unchanged
	k := 0
	for ; k < len(li.pend) && li.err == nil; k++ {
		pl := li.pend[k]
		if pl.u1 > written {
			break
		}
		b, _ := li.at(pl.u0)
		e, _ := li.at(pl.u1)
		if err := li.tw.Add(pl.chrom, pl.beg, pl.end, Chunk{b, e}); err != nil {
			li.err, li.errLine = err, -1
		}
	}
	li.pend = li.pend[:copy(li.pend, li.pend[k:])]
	// drop the consumed blocks
	li.blocks = li.blocks[:copy(li.blocks, li.blocks[li.bi:])]
	li.bi = 0
}

// writtenU is the inflated size of the blocks written so far.
func (li *lineIndex) writtenU() int64 {
	u := li.bu
	for _, b := range li.blocks[li.bi:] {
		u += b.u
	}
	return u
}

// WriteIndex writes the tabix index built since IndexLines to path (the
// table's own path plus ".tbi"), after Close, through a temporary file
// renamed into place. It returns the first error met instead: a line
// that is not a record of the layout (naming table and line), records
// out of order (ErrUnsorted) or past the tabix limit (ErrLimit), as
// IndexBGZFTable would for the same table.
func (bw *BGZFWriter) WriteIndex(table string) error {
	li := bw.li
	switch {
	case li == nil:
		return fmt.Errorf("vcfscan: WriteIndex without IndexLines")
	case !bw.closed:
		return fmt.Errorf("vcfscan: WriteIndex before Close")
	}
	li.resolve(bw)
	if li.err == nil && len(li.partial) > 0 {
		li.err, li.errLine = fmt.Errorf("%w: last line has no newline", ErrTruncated), li.lineNum+1
	}
	if li.err != nil {
		if li.errLine > 0 {
			return &ParseError{File: table, Line: li.errLine, Offset: -1, Record: -1, Err: li.err}
		}
		return li.err
	}
	if len(li.pend) > 0 {
		return fmt.Errorf("internal: %d lines of %s left unindexed", len(li.pend), table)
	}
	return writeTBIFile(table+".tbi", li.tw)
}

// writeTBIFile writes t to path through a temporary file renamed into
// place, so a failed run leaves no index.
func writeTBIFile(path string, t *TabixWriter) (err error) {
	tmp := path + ".tmp"
	f, err := os.Create(tmp)
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			os.Remove(tmp)
		}
	}()
	if _, err = t.WriteTo(f); err != nil {
		f.Close()
		return err
	}
	if err = f.Close(); err != nil {
		return err
	}
	return os.Rename(tmp, path)
}
