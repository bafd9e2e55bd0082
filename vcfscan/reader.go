package vcfscan

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"sync"
	"sync/atomic"

	"github.com/klauspost/compress/gzip"
)

// Default limits (see Limits).
const (
	DefaultMaxLineBytes = 64 << 20
	DefaultMaxSamples   = 1_000_000 // each sample costs scan about 1.6 kB before any genotype is read
	DefaultMaxAlleles   = 1000
	DefaultMaxBlock     = bgzfDefaultMaxI
)

// chunkTarget is the size of the text chunks parsed in parallel.
const chunkTarget = 2 << 20

// sortAdvice ends the messages about records out of order.
const sortAdvice = "sort the file by chromosome and position, compress it again with BGZF and rebuild its index"

// Warning is a condition met while reading that does not stop it, counted
// once per kind. Example locates the first occurrence.
type Warning struct {
	Kind    string
	Count   int64
	Example string
}

// Reader reads variant batches from a VCF or BCF file. Text is split into
// chunks of whole lines that worker goroutines parse in parallel; Next
// returns the batches in input order.
//
// Next, Header and Close belong to one goroutine (Next appends contigs met
// in records to Header().Contigs). Release, Progress and Warnings may be
// called from any goroutine. Close stops the pipeline; a reader that is
// not closed keeps its goroutines until the input ends.
type Reader struct {
	name    string
	format  Format
	hdr     *Header
	opt     Options
	samples []string

	file       *os.File
	regionFile *os.File
	cnt        *countingReader
	total      int64
	bz         *bgzfReader
	text       io.Reader
	// direct: the chunker takes inflated blocks from bz without copying
	// (chunkLoopDirect), starting with directCarry.
	direct      bool
	directCarry []byte

	// ordered stage state (used by Next only)
	contigIdx  map[string]int
	lineBase   int64
	noLines    bool // region queries: line numbers unknown, reported as 0
	regionMode bool // reading index chunks only
	atEOF      atomic.Bool
	seq        int64
	curChrom   int
	lastPos    int64
	lastLine   int64
	doneChroms map[int]bool
	err        error

	warnMu    sync.Mutex
	warnings  map[string]*Warning
	warnOrder []string

	// pipeline
	order  chan *Batch
	work   chan *Batch
	slots  chan struct{}
	free   chan *Batch
	quit   chan struct{}
	closed sync.Once
	wg     sync.WaitGroup

	bcf *bcfSource
}

// countingReader counts the bytes read from the raw input for Progress.
type countingReader struct {
	r io.Reader
	n atomic.Int64
}

func (c *countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n.Add(int64(n))
	return n, err
}

// Open opens path ("-" for standard input) and reads its header. The
// format is detected from the content, not the file name.
func Open(path string, opt Options) (*Reader, error) {
	var f *os.File
	name := path
	if path == "-" {
		f, name = os.Stdin, "<stdin>"
	} else {
		var err error
		if f, err = os.Open(path); err != nil {
			return nil, err
		}
	}
	total := int64(-1)
	if st, err := f.Stat(); err == nil && st.Mode().IsRegular() {
		total = st.Size()
	}
	if len(opt.Regions) > 0 && path == "-" {
		return nil, fmt.Errorf("%s: %w: regions need an indexed file, not standard input", name, ErrNoIndex)
	}
	r, err := newReader(f, name, path, opt, total)
	if err != nil {
		if path != "-" {
			f.Close()
		}
		return nil, err
	}
	if path != "-" {
		r.file = f
	}
	return r, nil
}

// NewReader reads from r, which holds a whole VCF or BCF file (any
// supported compression). Options.Regions must be empty.
func NewReader(r io.Reader, name string, opt Options) (*Reader, error) {
	if len(opt.Regions) > 0 {
		return nil, fmt.Errorf("%s: regions need Open on an indexed file", name)
	}
	return newReader(r, name, "", opt, -1)
}

func withDefaults(opt Options) Options {
	if opt.Threads <= 0 {
		opt.Threads = runtime.GOMAXPROCS(0)
	}
	l := &opt.Limits
	if l.MaxLineBytes <= 0 {
		l.MaxLineBytes = DefaultMaxLineBytes
	}
	if l.MaxSamples <= 0 {
		l.MaxSamples = DefaultMaxSamples
	}
	if l.MaxAlleles <= 0 {
		l.MaxAlleles = DefaultMaxAlleles
	}
	if l.MaxBlockExpand <= 0 {
		l.MaxBlockExpand = DefaultMaxBlock
	}
	return opt
}

var bcfMagic2 = []byte("BCF\x02")

func newReader(src io.Reader, name, path string, opt Options, total int64) (*Reader, error) {
	opt = withDefaults(opt)
	r := &Reader{name: name, opt: opt, total: total, warnings: map[string]*Warning{}, curChrom: -1 << 31,
		contigIdx: map[string]int{}, doneChroms: map[int]bool{}}
	r.cnt = &countingReader{r: src}
	raw := bufio.NewReaderSize(r.cnt, 1<<16)
	head, _ := raw.Peek(18)
	var text io.Reader
	switch {
	case len(head) == 0:
		return nil, &ParseError{File: name, Offset: -1, Record: -1,
			Err: fmt.Errorf("%w: input is empty; expected a VCF or BCF file", ErrMalformed)}
	case isBGZFHeader(head):
		bz, err := newBGZFReader(raw, name, opt.Threads, opt.Limits.MaxBlockExpand, nil)
		if err != nil {
			return nil, err
		}
		r.bz = bz
		r.format = FormatVCFBGZF
		text = bz
	case len(head) >= 2 && head[0] == 0x1f && head[1] == 0x8b:
		gz, err := gzip.NewReader(raw)
		if err != nil {
			return nil, &ParseError{File: name, Offset: -1, Record: -1, Field: "gzip header",
				Err: fmt.Errorf("%w: %v", ErrMalformed, err)}
		}
		r.format = FormatVCFGzip
		text = &gzipErrs{r: gz, name: name}
	case bytes.HasPrefix(head, bcfMagic2):
		r.format = FormatBCFPlain
		text = raw
	default:
		r.format = FormatVCF
		text = raw
	}
	tb := bufio.NewReaderSize(text, 1<<20)
	src2 := text
	if r.format == FormatVCFBGZF || r.format == FormatVCFGzip {
		if m, _ := tb.Peek(4); bytes.Equal(m, bcfMagic2) {
			if r.format == FormatVCFGzip {
				r.stop()
				return nil, &ParseError{File: name, Offset: -1, Record: -1, Field: "container",
					Err: fmt.Errorf("%w: BCF inside plain gzip is not a valid BCF; BCF must be BGZF-compressed (blocked gzip)", ErrMalformed)}
			}
			r.format = FormatBCF
		}
	}
	if r.format == FormatBCF || r.format == FormatBCFPlain {
		if err := r.openBCF(tb, path); err != nil {
			r.stop()
			return nil, err
		}
		return r, nil
	}
	hdr, hasFormat, hdrLines, err := parseTextHeader(tb, name, opt.Limits, r.warn)
	if err != nil {
		r.stop()
		return nil, err
	}
	r.hdr = hdr
	r.lineBase = hdrLines
	p, err := r.newParserTemplate(hasFormat)
	if err != nil {
		r.stop()
		return nil, err
	}
	if len(opt.Regions) > 0 {
		if r.format != FormatVCFBGZF || path == "" {
			r.stop()
			return nil, fmt.Errorf("%s: %w: regions need a BGZF-compressed file with a .tbi or .csi index", name, ErrNoIndex)
		}
		s, err := r.regionStream(path)
		if err != nil {
			r.stop()
			return nil, err
		}
		tb = bufio.NewReaderSize(s, 1<<20)
		src2 = s
		r.noLines = true // line numbers are unknown after jumping into the file
	}
	// Hand the chunker what the header reader buffered, then the stream
	// itself, so that large reads skip the extra copy through bufio.
	if r.bz != nil && len(opt.Regions) == 0 && opt.BatchSize == 0 && opt.chunkBytes == 0 {
		// Inflated blocks become batch text in place (chunkLoopDirect);
		// what the header reader buffered starts the first chunk.
		head, _ := tb.Peek(tb.Buffered())
		r.directCarry = append([]byte(nil), head...)
		r.direct = true
	} else {
		r.text = drainBuffered(tb, src2)
	}
	r.start(p)
	return r, nil
}

// gzipErrs turns gzip errors into ParseErrors with sentinels.
type gzipErrs struct {
	r    *gzip.Reader
	name string
}

func (g *gzipErrs) Read(p []byte) (int, error) {
	n, err := g.r.Read(p)
	if err != nil && err != io.EOF {
		s := ErrMalformed
		switch {
		case errors.Is(err, io.ErrUnexpectedEOF):
			s = ErrTruncated
		case errors.Is(err, gzip.ErrChecksum):
			s = ErrChecksum
		}
		err = &ParseError{File: g.name, Offset: -1, Record: -1, Field: "gzip", Err: fmt.Errorf("%w: %v", s, err)}
	}
	return n, err
}

// newParserTemplate resolves sample selection and builds the read-only
// parts shared by the parse workers.
func (r *Reader) newParserTemplate(hasFormat bool) (*vcfParser, error) {
	hdr := r.hdr
	dest, out, err := selectSamples(r.name, hdr.Samples, r.opt.Samples, r.opt.ExcludeSamples)
	if err != nil {
		return nil, err
	}
	r.samples = out
	p := &vcfParser{
		name: r.name, opt: &r.opt, nFile: len(hdr.Samples), dest: dest, nOut: len(out),
		samples: hdr.Samples, hasFormat: hasFormat, contigs: map[string]int{},
	}
	r.contigIdx = map[string]int{}
	for i, c := range hdr.Contigs {
		p.contigs[c.Name] = i
		r.contigIdx[c.Name] = i
	}
	if len(r.opt.Regions) > 0 {
		p.regions = newRegionFilter(r.opt.Regions)
	}
	r.doneChroms = map[int]bool{}
	return p, nil
}

// selectSamples returns the file-column to output-position map (nil for
// all samples in file order) and the output names. Samples given in keep
// come out in that order; exclude removes names.
func selectSamples(name string, file, keep, exclude []string) ([]int32, []string, error) {
	if keep == nil && len(exclude) == 0 {
		return nil, file, nil
	}
	idx := make(map[string]int, len(file))
	for i, s := range file {
		idx[s] = i
	}
	drop := map[string]bool{}
	for _, s := range exclude {
		if _, ok := idx[s]; !ok {
			return nil, nil, fmt.Errorf("%s: %w: sample %q to exclude is not in the file (it has %d samples); check the spelling", name, ErrUnknownSample, s, len(file))
		}
		drop[s] = true
	}
	dest := make([]int32, len(file))
	for i := range dest {
		dest[i] = -1
	}
	var out []string
	add := func(s string) {
		if drop[s] || dest[idx[s]] >= 0 {
			return
		}
		dest[idx[s]] = int32(len(out))
		out = append(out, s)
	}
	if keep != nil {
		for _, s := range keep {
			if _, ok := idx[s]; !ok {
				return nil, nil, fmt.Errorf("%s: %w: requested sample %q is not in the file (it has %d samples); check the spelling", name, ErrUnknownSample, s, len(file))
			}
			add(s)
		}
	} else {
		for _, s := range file {
			add(s)
		}
	}
	if out == nil {
		out = []string{}
	}
	return dest, out, nil
}

// start launches the chunker and the parse workers.
func (r *Reader) start(tmpl *vcfParser) {
	t := r.opt.Threads
	inflight := 2*t + 2
	r.order = make(chan *Batch, inflight+1)
	r.work = make(chan *Batch, inflight)
	r.slots = make(chan struct{}, inflight)
	r.free = make(chan *Batch, inflight*2)
	r.quit = make(chan struct{})
	r.wg.Add(t)
	for i := 0; i < t; i++ {
		p := *tmpl
		p.fmtBuf = nil
		go r.parseLoop(&p)
	}
	if r.direct {
		go r.chunkLoopDirect(r.bz, r.directCarry)
		r.directCarry = nil
	} else {
		go r.chunkLoop()
	}
}

func (r *Reader) newBatch() *Batch {
	select {
	case b := <-r.free:
		return b
	default:
		return &Batch{st: &batchState{done: make(chan struct{}, 1)}}
	}
}

// chunkLoop cuts the text into chunks of whole lines and hands each to
// the workers and, in the same order, to Next.
func (r *Reader) chunkLoop() {
	defer close(r.work)
	var carry []byte
	eof := false
	maxLine := r.opt.Limits.MaxLineBytes
	chunk := r.opt.chunkBytes
	if chunk <= 0 {
		chunk = chunkTarget
	}
	for {
		select {
		case r.slots <- struct{}{}:
		case <-r.quit:
			return
		}
		b := r.newBatch()
		b.st.reset()
		if eof && len(carry) == 0 {
			b.st.terminal, b.st.err = true, io.EOF
			r.order <- b
			return
		}
		buf := b.arena[:0]
		if cap(buf) < chunk+len(carry) {
			buf = make([]byte, 0, chunk+len(carry))
		}
		buf = append(buf, carry...)
		carry = carry[:0]
		var cutAt int
		for {
			for len(buf) < cap(buf) && !eof {
				n, err := r.text.Read(buf[len(buf):cap(buf)])
				buf = buf[:len(buf)+n]
				if err == io.EOF {
					eof = true
				} else if err != nil {
					b.st.terminal, b.st.err = true, err
					b.arena = buf
					r.order <- b
					return
				}
			}
			if eof {
				cutAt = len(buf)
				break
			}
			if i := bytes.LastIndexByte(buf, '\n'); i >= 0 {
				cutAt = i + 1
				break
			}
			if len(buf) > maxLine {
				b.st.terminal = true
				b.st.err = &ParseError{File: r.name, Line: 1, Offset: -1, Record: -1, Field: "line",
					Err: fmt.Errorf("%w: line longer than %d bytes; raise --guard-line-bytes if the file is genuine", ErrLimit, maxLine)}
				b.arena = buf
				r.order <- b
				return
			}
			// Double, but step straight to the limit when the next
			// doubling would pass it, so that a hostile line costs
			// about 1.5 times the limit at most.
			nc := 2 * cap(buf)
			if 2*nc > maxLine+1 {
				nc = maxLine + 1
			}
			nb := make([]byte, len(buf), max(nc, len(buf)+1))
			copy(nb, buf)
			buf = nb
		}
		if r.opt.BatchSize > 0 {
			cutAt = cutLines(buf[:cutAt], r.opt.BatchSize)
		}
		carry = append(carry, buf[cutAt:]...)
		buf = buf[:cutAt]
		b.arena = buf
		b.st.data = buf
		r.order <- b
		r.work <- b
	}
}

// eofReader is an exhausted reader.
type eofReader struct{}

func (eofReader) Read([]byte) (int, error) { return 0, io.EOF }

// cutLines returns the offset just after the n-th newline of buf, or
// len(buf) when it has fewer lines.
func cutLines(buf []byte, n int) int {
	off := 0
	for i := 0; i < n; i++ {
		k := bytes.IndexByte(buf[off:], '\n')
		if k < 0 {
			return len(buf)
		}
		off += k + 1
	}
	return off
}

func (r *Reader) parseLoop(p *vcfParser) {
	defer r.wg.Done()
	for b := range r.work {
		b.Records = b.Records[:0]
		b.GT = b.GT[:0]
		b.PL = b.PL[:0]
		b.HasPL = b.HasPL[:0]
		b.DP = b.DP[:0]
		b.HasDP = b.HasDP[:0]
		b.Skipped = [NumSkipReasons]int64{}
		b.Read, b.Masked = 0, 0
		b.NSamples = p.nOut
		p.st = b.st
		b.st.err = p.parseChunk(b, b.st.data)
		b.st.done <- struct{}{}
	}
}

// Header returns the header. Contigs first met in records are appended
// to Header.Contigs as Next reaches them.
func (r *Reader) Header() *Header { return r.hdr }

// Format returns the detected input format.
func (r *Reader) Format() Format { return r.format }

// Samples returns the selected samples in output order.
func (r *Reader) Samples() []string { return r.samples }

// Progress returns the raw (compressed) bytes consumed so far and the input
// size, -1 when unknown.
//
// For region queries, total is the span of the index chunks to read and
// done is capped at total until the end.
func (r *Reader) Progress() (done, total int64) {
	done = r.cnt.n.Load()
	if r.regionMode {
		if r.atEOF.Load() || done > r.total {
			done = r.total
		}
	}
	return done, r.total
}

// Next returns the next batch in input order, or io.EOF after the last.
// The batch stays valid until it is passed to Release.
func (r *Reader) Next() (*Batch, error) {
	if r.err != nil {
		return nil, r.err
	}
	if r.bcf != nil {
		b, err := r.nextBCF()
		if err != nil {
			r.err = err
		}
		return b, err
	}
	b := <-r.order
	st := b.st
	if !st.terminal {
		<-st.done
	}
	<-r.slots
	if st.err != nil {
		r.err = r.fixErr(st.err)
		if st.terminal && st.err == io.EOF {
			r.finishWarnings()
			r.atEOF.Store(true)
		}
		r.stop()
		return nil, r.err
	}
	if err := r.finishBatch(b); err != nil {
		r.err = err
		r.stop()
		return nil, err
	}
	return b, nil
}

// fixErr turns a chunk-relative line number into an absolute one.
func (r *Reader) fixErr(err error) error {
	var pe *ParseError
	if errors.As(err, &pe) && pe.Line > 0 {
		pe.Line += r.lineBase
		if r.noLines {
			pe.Line = 0
			pe.Field = "in a region query: " + pe.Field
		}
	}
	return err
}

// finishBatch does the ordered part: absolute line numbers, contig ids,
// sortedness checks, warnings, sequence number.
func (r *Reader) finishBatch(b *Batch) error {
	st := b.st
	base := r.lineBase
	r.lineBase += st.lines
	var local []int
	if len(st.newChroms) > 0 {
		local = make([]int, len(st.newChroms))
		for k, n := range st.newChroms {
			id, ok := r.contigIdx[string(n)]
			if !ok {
				id = len(r.hdr.Contigs)
				r.hdr.Contigs = append(r.hdr.Contigs, Contig{Name: string(n)})
				r.contigIdx[string(n)] = id
				line := int64(0)
				for _, blk := range st.blocks {
					if blk.id == -(k + 1) {
						line = blk.firstLine + base
						break
					}
				}
				r.warn(warnNames[warnContigNotInHeader], fmt.Sprintf("%s:%d: contig %s has no ##contig line (no length known)", r.name, line, n))
			}
			local[k] = id
		}
	}
	resolve := func(id int) int {
		if id < 0 {
			return local[-id-1]
		}
		return id
	}
	for i := range b.Records {
		rec := &b.Records[i]
		rec.Line += base
		if r.noLines {
			rec.Line = 0
		}
		if rec.ChromID < 0 {
			rec.ChromID = resolve(rec.ChromID)
		}
	}
	if st.unsorted != nil && r.opt.RequireSorted {
		u := st.unsorted
		return &ParseError{File: r.name, Line: u.line + base, Offset: -1, Record: -1, Field: "POS",
			Err: fmt.Errorf("%w: position %d on %s comes after position %d (line %d); "+sortAdvice, ErrUnsorted,
				u.pos, r.hdr.Contigs[resolve(u.chrom)].Name, u.prev, u.prevLineRel+base)}
	}
	for _, blk := range st.blocks {
		id := resolve(blk.id)
		if id == r.curChrom {
			if blk.firstPos < r.lastPos && r.opt.RequireSorted {
				return &ParseError{File: r.name, Line: blk.firstLine + base, Offset: -1, Record: -1, Field: "POS",
					Err: fmt.Errorf("%w: position %d on %s comes after position %d (line %d); "+sortAdvice, ErrUnsorted,
						blk.firstPos, r.hdr.Contigs[id].Name, r.lastPos, r.lastLine)}
			}
		} else {
			if r.doneChroms[id] && r.opt.RequireSorted {
				return &ParseError{File: r.name, Line: blk.firstLine + base, Offset: -1, Record: -1, Field: "CHROM",
					Err: fmt.Errorf("%w: chromosome %s appears again after other chromosomes (last seen up to line %d is not adjacent); keep each chromosome's records together: "+sortAdvice, ErrUnsorted,
						r.hdr.Contigs[id].Name, r.lastLine)}
			}
			if r.curChrom >= 0 {
				r.doneChroms[r.curChrom] = true
			}
			r.curChrom = id
		}
		r.lastPos, r.lastLine = blk.lastPos, blk.lastLine+base
	}
	for k := warnKind(0); k < numWarnKinds; k++ {
		if k == warnContigNotInHeader {
			continue
		}
		if n := st.warn[k]; n > 0 {
			r.warnN(warnNames[k], n, fmt.Sprintf("%s:%d", r.name, st.warnLine[k]+base))
		}
	}
	b.Seq = r.seq
	r.seq++
	return nil
}

// Release gives a batch back for reuse. The batch must not be used after.
func (r *Reader) Release(b *Batch) {
	if b == nil || r.free == nil {
		return
	}
	select {
	case r.free <- b:
	default:
	}
}

func (r *Reader) warn(kind, example string) { r.warnN(kind, 1, example) }

func (r *Reader) warnN(kind string, n int64, example string) {
	r.warnMu.Lock()
	defer r.warnMu.Unlock()
	w, ok := r.warnings[kind]
	if !ok {
		w = &Warning{Kind: kind, Example: example}
		r.warnings[kind] = w
		r.warnOrder = append(r.warnOrder, kind)
	}
	w.Count += n
}

// finishWarnings adds the warnings known only at the end of input.
func (r *Reader) finishWarnings() {
	if r.bz != nil && r.bz.seeker == nil {
		if missing, _ := r.bz.eofs.get(); missing {
			r.warn("bgzf_missing_eof", r.name+": the last BGZF block is not the empty end-of-file block; the file may be truncated")
		}
	}
}

// Warnings returns the warnings so far, in the order first met.
func (r *Reader) Warnings() []Warning {
	r.warnMu.Lock()
	defer r.warnMu.Unlock()
	out := make([]Warning, 0, len(r.warnOrder))
	for _, k := range r.warnOrder {
		out = append(out, *r.warnings[k])
	}
	return out
}

// stop ends the pipeline goroutines.
func (r *Reader) stop() {
	r.closed.Do(func() {
		if r.quit != nil {
			close(r.quit)
		}
		if r.bz != nil {
			r.bz.Close()
		}
	})
}

// Close stops reading and closes the file opened by Open.
func (r *Reader) Close() error {
	r.stop()
	if r.err == nil {
		r.err = errors.New("vcfscan: Next after Close")
	}
	if r.regionFile != nil {
		r.regionFile.Close()
		r.regionFile = nil
	}
	if r.file != nil {
		err := r.file.Close()
		r.file = nil
		return err
	}
	return nil
}

// drainBuffered returns a reader of the bytes buffered in br followed by
// the rest of br's source read directly.
func drainBuffered(br *bufio.Reader, under io.Reader) io.Reader {
	n := br.Buffered()
	if n == 0 {
		return under
	}
	head, _ := br.Peek(n)
	head = append([]byte(nil), head...)
	br.Discard(n)
	return io.MultiReader(bytes.NewReader(head), under)
}
