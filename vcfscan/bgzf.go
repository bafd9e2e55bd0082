package vcfscan

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"runtime"
	"sync"
	"sync/atomic"

	"github.com/biogo/hts/bgzf"
	"github.com/klauspost/compress/flate"
)

// BGZF is gzip made of independent members of at most 64 KiB each, with the
// compressed size of the member in an extra field (SAM/BAM format
// specification, section 4.1, "The BGZF compression format", hts-specs).
// This file holds a parallel block reader and a block writer.

const (
	bgzfHeaderLen   = 18    // fixed header with a single BC extra subfield
	bgzfMaxBlock    = 65536 // largest total block size (BSIZE+1) the format allows
	bgzfDefaultMaxI = 65536 // default largest ISIZE accepted
	bgzfWriteChunk  = 0xff00
)

// BGZFSitesLevel is the compression level of a scan's sites.tsv.gz:
// Huffman coding without string matching. Its rows of counts and
// shortest-form floats repeat little beyond their digits: on a tiled
// real cohort (100 samples) level 1 gives 31% of the text for 3.3 times
// the CPU of Huffman only (46%), and level 1 took 15 of 90 ns of CPU per
// genotype of that scan (BenchmarkBGZFWrite). sites_by_population.tsv.gz
// repeats chromosome, position and population name on every row, which
// matching compresses to less than half: it stays at level 1.
const BGZFSitesLevel = flate.HuffmanOnly

// bgzfEOF is BGZFEOF as bytes.
var bgzfEOF = []byte(BGZFEOF)

// isBGZFHeader reports whether p starts like a BGZF block: gzip magic,
// deflate, FEXTRA set and a BC subfield in the extra field.
func isBGZFHeader(p []byte) bool {
	if len(p) < 12 || p[0] != 0x1f || p[1] != 0x8b || p[2] != 8 || p[3] != 4 {
		return false
	}
	xlen := int(binary.LittleEndian.Uint16(p[10:12]))
	if len(p) < 12+xlen {
		xlen = len(p) - 12
	}
	_, ok := findBC(p[12 : 12+xlen])
	return ok
}

// findBC returns BSIZE from the BC subfield of a gzip extra field.
func findBC(extra []byte) (int, bool) {
	for len(extra) >= 4 {
		slen := int(binary.LittleEndian.Uint16(extra[2:4]))
		if extra[0] == 'B' && extra[1] == 'C' && slen == 2 && len(extra) >= 6 {
			return int(binary.LittleEndian.Uint16(extra[4:6])), true
		}
		if 4+slen > len(extra) {
			return 0, false
		}
		extra = extra[4+slen:]
	}
	return 0, false
}

// bgzfJob is a run of consecutive blocks travelling through the
// decompression pipeline together (one block when reading index chunks),
// so that goroutines hand over about a megabyte at a time.
type bgzfJob struct {
	raw      []byte  // the raw blocks, back to back
	ends     []int   // end of each block in raw
	coffs    []int64 // file offset of each block
	buf      []byte  // backing array of out, which starts bgzfHeadroom bytes in
	out      []byte
	lo, hi   int // part of out to deliver (regions trim the first/last block)
	err      error
	done     chan struct{}
	terminal bool // no more blocks after this one; err says why (io.EOF when clean)
}

func (j *bgzfJob) reset() {
	j.raw, j.ends, j.coffs = j.raw[:0], j.ends[:0], j.coffs[:0]
	j.out = nil
	if cap(j.buf) >= bgzfHeadroom+bgzfMaxBlock {
		j.out = j.buf[bgzfHeadroom:bgzfHeadroom]
	}
	j.err, j.terminal, j.lo, j.hi = nil, false, 0, -1
}

// bgzfJobBlocks is the number of blocks a job carries when reading the
// whole stream.
const bgzfJobBlocks = 16

// bgzfHeadroom is the room left in front of a job's inflated bytes, where
// the chunker puts the end of the previous job's last (partial) line so
// that the job's buffer becomes a batch's text without a copy (see
// Reader.chunkLoopDirect).
const bgzfHeadroom = 128 << 10

// bgzfReader decompresses BGZF blocks on several goroutines and delivers the
// bytes in order. Memory is bounded by a fixed number of jobs in flight.
type bgzfReader struct {
	name     string
	src      io.Reader
	seeker   io.ReadSeeker // non-nil when reading chunks
	chunks   []bgzf.Chunk
	maxISize int

	free  chan *bgzfJob
	work  chan *bgzfJob
	order chan *bgzfJob
	quit  chan struct{}
	once  sync.Once
	wg    sync.WaitGroup

	cur  *bgzfJob
	err  error
	eofs eofState
}

// eofState records what the block reader saw at the end, for warnings.
type eofState struct {
	mu         sync.Mutex
	missingEOF bool
	blocks     int64
}

func (s *eofState) get() (missing bool, blocks int64) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.missingEOF, s.blocks
}

// newBGZFReader starts reading src as a BGZF stream with the given number of
// decompression goroutines. If chunks is non-empty, src must be an
// io.ReadSeeker and only those chunks (sorted, virtual offsets) are read.
func newBGZFReader(src io.Reader, name string, threads, maxISize int, chunks []bgzf.Chunk) (*bgzfReader, error) {
	if threads < 1 {
		threads = 1
	}
	if maxISize <= 0 {
		maxISize = bgzfDefaultMaxI
	}
	inflight := 2*threads + 2 // jobs of up to 16 blocks: about 2 MiB per thread
	if len(chunks) > 0 {
		inflight = max(32, 8*threads) // single blocks
	}
	z := &bgzfReader{
		name:     name,
		src:      src,
		chunks:   chunks,
		maxISize: maxISize,
		free:     make(chan *bgzfJob, inflight),
		work:     make(chan *bgzfJob, inflight),
		order:    make(chan *bgzfJob, inflight+1),
		quit:     make(chan struct{}),
	}
	if len(chunks) > 0 {
		rs, ok := src.(io.ReadSeeker)
		if !ok {
			return nil, fmt.Errorf("%s: reading regions needs a seekable file, not a stream", name)
		}
		z.seeker = rs
	}
	for i := 0; i < inflight; i++ {
		z.free <- &bgzfJob{done: make(chan struct{}, 1)} // buffers are allocated on first use
	}
	z.wg.Add(threads + 1)
	for i := 0; i < threads; i++ {
		go z.inflateLoop()
	}
	go z.readLoop()
	return z, nil
}

func (z *bgzfReader) blockErr(coff int64, sentinel error, format string, args ...any) error {
	return &ParseError{File: z.name, Offset: coff << 16, Record: -1, Field: "BGZF block",
		Err: fmt.Errorf("%w: block at byte %d: %s", sentinel, coff, fmt.Sprintf(format, args...))}
}

// readRaw appends one raw block at file offset coff to j. It returns
// io.EOF at a clean end of input.
func (z *bgzfReader) readRaw(r io.Reader, coff int64, j *bgzfJob) error {
	at := len(j.raw)
	if cap(j.raw)-at < bgzfMaxBlock {
		nr := make([]byte, at, at+bgzfJobBlocks*bgzfMaxBlock)
		copy(nr, j.raw)
		j.raw = nr
	}
	buf := j.raw[at : at+bgzfMaxBlock]
	n, err := io.ReadFull(r, buf[:12])
	if err == io.EOF {
		return io.EOF
	}
	if err != nil {
		return z.blockErr(coff, ErrTruncated, "input ends inside a block header (%d of 12 bytes); the file was cut short, recompress or re-download it", n)
	}
	if buf[0] != 0x1f || buf[1] != 0x8b || buf[2] != 8 || buf[3] != 4 {
		// BGZF fixes FLG to FEXTRA alone (SAM spec 4.1); other flags would
		// add header fields that the BSIZE arithmetic does not allow for.
		return z.blockErr(coff, ErrMalformed, "expected a BGZF block header (1f 8b 08 04), found % x", buf[:4])
	}
	xlen := int(binary.LittleEndian.Uint16(buf[10:12]))
	if 12+xlen > len(buf) {
		return z.blockErr(coff, ErrMalformed, "extra field of %d bytes is too long", xlen)
	}
	if _, err := io.ReadFull(r, buf[12:12+xlen]); err != nil {
		return z.blockErr(coff, ErrTruncated, "input ends inside a block header extra field")
	}
	bsize, ok := findBC(buf[12 : 12+xlen])
	if !ok {
		return z.blockErr(coff, ErrMalformed, "gzip member without the BC extra subfield; the file is plain gzip glued to BGZF, recompress it with a BGZF writer")
	}
	total := bsize + 1
	if total < 12+xlen+8 {
		return z.blockErr(coff, ErrMalformed, "block size %d is smaller than its header", total)
	}
	if n, err := io.ReadFull(r, buf[12+xlen:total]); err != nil {
		return z.blockErr(coff, ErrTruncated, "block of %d bytes ends after %d bytes; the file was cut short", total, 12+xlen+n)
	}
	j.raw = j.raw[:at+total]
	j.ends = append(j.ends, at+total)
	j.coffs = append(j.coffs, coff)
	return nil
}

func (z *bgzfReader) getJob() (*bgzfJob, bool) {
	select {
	case j := <-z.free:
		j.reset()
		return j, true
	case <-z.quit:
		return nil, false
	}
}

func (z *bgzfReader) finish(err error) {
	// The terminal job is not from the free pool; order has room for it.
	z.order <- &bgzfJob{terminal: true, err: err}
	close(z.work)
}

func (z *bgzfReader) send(j *bgzfJob) {
	z.order <- j
	z.work <- j
}

func (z *bgzfReader) readLoop() {
	defer z.wg.Done()
	if z.seeker != nil {
		z.readChunks()
		return
	}
	var coff int64
	var lastEmpty bool
	var blocks int64
	for {
		j, ok := z.getJob()
		if !ok {
			z.finish(errReaderClosed)
			return
		}
		var err error
		for len(j.ends) < bgzfJobBlocks {
			if err = z.readRaw(z.src, coff, j); err != nil {
				break
			}
			last := len(j.ends) - 1
			blk := j.raw[blockStart(j, last):j.ends[last]]
			coff += int64(len(blk))
			blocks++
			lastEmpty = binary.LittleEndian.Uint32(blk[len(blk)-4:]) == 0
		}
		if len(j.ends) > 0 {
			z.send(j)
		} else {
			z.free <- j
		}
		if err != nil {
			if err == io.EOF {
				z.eofs.mu.Lock()
				z.eofs.missingEOF = !lastEmpty && blocks > 0
				z.eofs.blocks = blocks
				z.eofs.mu.Unlock()
			}
			z.finish(err)
			return
		}
	}
}

// blockStart is where block k of j starts in j.raw.
func blockStart(j *bgzfJob, k int) int {
	if k == 0 {
		return 0
	}
	return j.ends[k-1]
}

// readChunks reads the blocks covering each chunk, one block per job,
// trimming the first and last block to the chunk's virtual offsets.
func (z *bgzfReader) readChunks() {
	for _, c := range z.chunks {
		if _, err := z.seeker.Seek(c.Begin.File, io.SeekStart); err != nil {
			z.finish(fmt.Errorf("%s: seek to %d: %w", z.name, c.Begin.File, err))
			return
		}
		coff := c.Begin.File
		for first := true; ; first = false {
			if coff > c.End.File || (coff == c.End.File && c.End.Block == 0) {
				break
			}
			j, ok := z.getJob()
			if !ok {
				z.finish(errReaderClosed)
				return
			}
			err := z.readRaw(z.seeker, coff, j)
			if err == io.EOF {
				z.free <- j
				break
			}
			if err != nil {
				z.free <- j
				z.finish(err)
				return
			}
			if first {
				j.lo = int(c.Begin.Block)
			}
			if coff == c.End.File {
				j.hi = int(c.End.Block)
			}
			coff += int64(len(j.raw))
			z.send(j)
		}
	}
	z.finish(io.EOF)
}

func (z *bgzfReader) inflateLoop() {
	defer z.wg.Done()
	f := new(inflater)
	for j := range z.work {
		j.err = z.inflate(j, f)
		j.done <- struct{}{}
	}
}

// inflate decompresses the blocks of j into j.out, checking the CRC32 and
// ISIZE of each.
func (z *bgzfReader) inflate(j *bgzfJob, f *inflater) error {
	for k := range j.ends {
		if err := z.inflateBlock(j, k, f); err != nil {
			return err
		}
	}
	if j.hi < 0 || j.hi > len(j.out) {
		j.hi = len(j.out)
	}
	if j.lo > j.hi {
		j.lo = j.hi
	}
	return nil
}

// inflateBlock decodes block k of j with the whole-block inflater straight
// to its place at the end of j.out.
func (z *bgzfReader) inflateBlock(j *bgzfJob, k int, f *inflater) error {
	raw := j.raw[blockStart(j, k):j.ends[k]]
	coff := j.coffs[k]
	xlen := int(binary.LittleEndian.Uint16(raw[10:12]))
	cdata := raw[12+xlen : len(raw)-8]
	wantCRC := binary.LittleEndian.Uint32(raw[len(raw)-8:])
	isize := int(binary.LittleEndian.Uint32(raw[len(raw)-4:]))
	if isize > z.maxISize || isize < 0 {
		return z.blockErr(coff, ErrLimit, "block claims %d uncompressed bytes, more than the limit of %d; raise --guard-block-bytes if the file is genuine", isize, z.maxISize)
	}
	at := len(j.out)
	if cap(j.out) < at+isize {
		nb := make([]byte, bgzfHeadroom+max(at+isize, len(j.ends)*bgzfMaxBlock))
		copy(nb[bgzfHeadroom:], j.out)
		j.buf = nb
		j.out = nb[bgzfHeadroom : bgzfHeadroom+at]
	}
	out := j.out[at : at+isize]
	n, used, err := f.inflate(out, cdata)
	switch {
	case errors.Is(err, errInflateTooLong):
		return z.blockErr(coff, ErrChecksum, "block inflates to more than its ISIZE of %d bytes; the file is damaged", isize)
	case err != nil:
		return z.blockErr(coff, ErrMalformed, "deflate data is corrupt (%v); the file is damaged", err)
	case used != len(cdata):
		return z.blockErr(coff, ErrMalformed, "%d bytes of the block follow the end of its deflate data", len(cdata)-used)
	case n != isize:
		return z.blockErr(coff, ErrChecksum, "block inflates to %d bytes but its ISIZE says %d; the file is damaged", n, isize)
	}
	if got := crc32.ChecksumIEEE(out[:n]); got != wantCRC {
		return z.blockErr(coff, ErrChecksum, "CRC32 of the inflated block is %08x, the block says %08x; the file is damaged", got, wantCRC)
	}
	j.out = j.out[:at+n]
	return nil
}

// Read implements io.Reader over the inflated bytes, in block order.
func (z *bgzfReader) Read(p []byte) (int, error) {
	if z.err != nil {
		return 0, z.err
	}
	for {
		if z.cur != nil {
			if z.cur.lo < z.cur.hi {
				n := copy(p, z.cur.out[z.cur.lo:z.cur.hi])
				z.cur.lo += n
				return n, nil
			}
			z.free <- z.cur
			z.cur = nil
		}
		j := <-z.order
		if j.terminal {
			z.err = j.err
			return 0, z.err
		}
		<-j.done
		if j.err != nil {
			z.err = j.err
			z.free <- j
			return 0, z.err
		}
		z.cur = j
	}
}

// take hands over the inflated bytes of the next job, or what Read left of
// the current one, without copying: the bytes are buf[lo:hi], and buf has
// at least bgzfHeadroom bytes before lo that the caller may use. The job
// keeps spare (which may be nil) for its next blocks. A job of empty
// blocks gives a nil buf and keeps its own buffer. take and Read must not
// be mixed after the first take.
func (z *bgzfReader) take(spare []byte) (buf []byte, lo, hi int, err error) {
	if z.err != nil {
		return nil, 0, 0, z.err
	}
	j := z.cur
	z.cur = nil
	if j == nil {
		j = <-z.order
		if j.terminal {
			z.err = j.err
			return nil, 0, 0, z.err
		}
		<-j.done
		if j.err != nil {
			z.err = j.err
			z.free <- j
			return nil, 0, 0, z.err
		}
	}
	if j.lo >= j.hi { // only empty blocks
		z.free <- j
		return nil, 0, 0, nil
	}
	buf = j.buf[:bgzfHeadroom+j.hi]
	lo, hi = bgzfHeadroom+j.lo, bgzfHeadroom+j.hi
	j.buf, j.out = spare, nil
	z.free <- j
	return buf, lo, hi, nil
}

// Close stops the pipeline; a Read running or to come ends with an error
// once the blocks in flight are drained. Close may be called from another
// goroutine than Read. It does not close the underlying reader.
func (z *bgzfReader) Close() error {
	z.once.Do(func() { close(z.quit) })
	return nil
}

// BGZFWriter writes BGZF: the input is cut into blocks of at most 65,280
// bytes, each compressed as its own gzip member with the BC extra field on
// several goroutines and written in order; Close appends the empty EOF
// block (SAM spec 4.1). At most a fixed number of blocks are in flight.
type BGZFWriter struct {
	w       io.Writer
	level   int
	threads int
	cur     *bgzfWJob
	started bool
	jobs    chan *bgzfWJob
	order   chan *bgzfWJob
	free    chan *bgzfWJob
	done    chan struct{}
	errMu   sync.Mutex
	err     error
	closed  bool
	pending int          // blocks submitted since the last wait for the writer
	written atomic.Int64 // compressed bytes written to w

	li     *lineIndex     // the table's index, built as it is written (IndexLines)
	blkMu  sync.Mutex     // guards blkLog
	blkLog []bgzfBlockLen // blocks written since lineIndex last looked (IndexLines)
}

// bgzfWJob is one block on its way through the writer. A job with
// flush set carries no data; the writer goroutine signals it when every
// block before it is written.
type bgzfWJob struct {
	in    []byte
	out   bytes.Buffer
	ready chan struct{}
	flush bool
}

// NewBGZFWriter returns a writer compressing at the given flate level
// (-1 for the default, 0-9 as in compress/flate) on as many goroutines as
// GOMAXPROCS. It does not close w.
func NewBGZFWriter(w io.Writer, level int) *BGZFWriter {
	if level < flate.HuffmanOnly || level > flate.BestCompression {
		level = flate.DefaultCompression
	}
	return &BGZFWriter{w: w, level: level, threads: runtime.GOMAXPROCS(0)}
}

// SetThreads sets the number of compressing goroutines (at least 1). It
// must be called before the first Write.
func (bw *BGZFWriter) SetThreads(n int) {
	if !bw.started {
		bw.threads = max(n, 1)
	}
}

func (bw *BGZFWriter) start() {
	bw.started = true
	inflight := 2*bw.threads + 2
	bw.jobs = make(chan *bgzfWJob, inflight)
	bw.order = make(chan *bgzfWJob, inflight+1)
	bw.free = make(chan *bgzfWJob, inflight)
	bw.done = make(chan struct{})
	for i := 0; i < inflight; i++ {
		bw.free <- &bgzfWJob{in: make([]byte, 0, bgzfWriteChunk), ready: make(chan struct{}, 1)}
	}
	for i := 0; i < bw.threads; i++ {
		go bw.compressLoop()
	}
	go bw.writeLoop()
}

func (bw *BGZFWriter) setErr(err error) {
	bw.errMu.Lock()
	if bw.err == nil {
		bw.err = err
	}
	bw.errMu.Unlock()
}

func (bw *BGZFWriter) getErr() error {
	bw.errMu.Lock()
	defer bw.errMu.Unlock()
	return bw.err
}

func (bw *BGZFWriter) compressLoop() {
	var fw *flate.Writer
	for j := range bw.jobs {
		var err error
		if fw == nil {
			fw, err = flate.NewWriter(&j.out, bw.level)
		} else {
			fw.Reset(&j.out)
		}
		if err == nil {
			err = compressBlock(fw, j)
		}
		if err != nil {
			bw.setErr(err)
		}
		j.ready <- struct{}{}
	}
}

// compressBlock writes the whole gzip member for j.in into j.out.
func compressBlock(fw *flate.Writer, j *bgzfWJob) error {
	j.out.Reset()
	j.out.Write(bgzfEOF[:18])
	if _, err := fw.Write(j.in); err != nil {
		return err
	}
	if err := fw.Close(); err != nil {
		return err
	}
	if j.out.Len()+8 > bgzfMaxBlock {
		// Incompressible data: store it (a stored block adds 5 bytes).
		j.out.Reset()
		j.out.Write(bgzfEOF[:18])
		sw, _ := flate.NewWriter(&j.out, flate.NoCompression)
		sw.Write(j.in)
		sw.Close()
	}
	var tail [8]byte
	binary.LittleEndian.PutUint32(tail[0:4], crc32.ChecksumIEEE(j.in))
	binary.LittleEndian.PutUint32(tail[4:8], uint32(len(j.in)))
	j.out.Write(tail[:])
	b := j.out.Bytes()
	binary.LittleEndian.PutUint16(b[16:18], uint16(len(b)-1))
	return nil
}

func (bw *BGZFWriter) writeLoop() {
	defer close(bw.done)
	for j := range bw.order {
		if j.flush {
			j.ready <- struct{}{} // every block before the marker is written
			continue
		}
		<-j.ready
		if bw.getErr() == nil {
			n, err := bw.w.Write(j.out.Bytes())
			bw.written.Add(int64(n))
			if err != nil {
				bw.setErr(err)
			}
			if bw.li != nil {
				bw.blkMu.Lock()
				bw.blkLog = append(bw.blkLog, bgzfBlockLen{int64(len(j.in)), int64(n)})
				bw.blkMu.Unlock()
			}
		}
		j.in = j.in[:0]
		bw.free <- j
	}
}

// submit sends the current block to the compressors.
func (bw *BGZFWriter) submit() {
	j := bw.cur
	bw.cur = nil
	bw.pending++
	bw.order <- j
	bw.jobs <- j
}

// Write buffers p and hands every full block to the compressors. Errors of
// the underlying writer are reported by a later Write, Flush or Close.
func (bw *BGZFWriter) Write(p []byte) (int, error) {
	if bw.closed {
		return 0, errWriterClosed
	}
	if err := bw.getErr(); err != nil {
		return 0, err
	}
	if !bw.started {
		bw.start()
	}
	if li := bw.li; li != nil {
		li.feed(p)
		if len(li.pend) >= 1<<14 {
			li.resolve(bw)
		}
	}
	n := 0
	for len(p) > 0 {
		if bw.cur == nil {
			bw.cur = <-bw.free
		}
		in := bw.cur.in
		k := copy(in[len(in):cap(in)], p)
		bw.cur.in = in[:len(in)+k]
		p = p[k:]
		n += k
		if len(bw.cur.in) == cap(bw.cur.in) {
			bw.submit()
		}
	}
	return n, nil
}

// Flush compresses and writes the buffered bytes as a (short) block and
// waits until every block so far is written, so that the output can be
// indexed or read up to here.
func (bw *BGZFWriter) Flush() error {
	if bw.closed {
		return errWriterClosed
	}
	if !bw.started {
		return bw.getErr()
	}
	if bw.cur != nil && len(bw.cur.in) > 0 {
		bw.submit()
	}
	bw.waitWritten()
	return bw.getErr()
}

// waitWritten waits until every block submitted so far is written.
func (bw *BGZFWriter) waitWritten() {
	marker := &bgzfWJob{flush: true, ready: make(chan struct{}, 1)}
	bw.order <- marker
	<-marker.ready
	bw.pending = 0
}

// Offset returns the virtual offset (SAM/BAM format specification,
// section 4.1.1) at which the next byte written will be found in the
// output: the compressed offset of the block being filled and the number
// of bytes already in it. It waits until the blocks before that block are
// compressed and written, so a caller asking once per record pays one
// wait per block (the blocks are then compressed one at a time);
// IndexBGZFTable indexes a finished table without that cost.
func (bw *BGZFWriter) Offset() (Offset, error) {
	if bw.closed {
		return Offset{}, errWriterClosed
	}
	if bw.started && bw.pending > 0 {
		bw.waitWritten()
	}
	o := Offset{File: bw.written.Load()}
	if bw.cur != nil {
		o.Block = uint16(len(bw.cur.in))
	}
	return o, bw.getErr()
}

// Close flushes the last block, writes the EOF block and stops the
// goroutines. It does not close the underlying writer.
func (bw *BGZFWriter) Close() error {
	if bw.closed {
		return bw.getErr()
	}
	if bw.started {
		if bw.cur != nil && len(bw.cur.in) > 0 {
			bw.submit()
		}
		close(bw.order)
		close(bw.jobs)
		<-bw.done
	}
	bw.closed = true
	if err := bw.getErr(); err != nil {
		return err
	}
	n, err := bw.w.Write(bgzfEOF)
	bw.written.Add(int64(n))
	if err != nil {
		bw.setErr(err)
		return err
	}
	return nil
}

var errReaderClosed = errors.New("vcfscan: read after close")

var errWriterClosed = errors.New("vcfscan: write to closed BGZFWriter")
