package roh

import (
	"bytes"
	"context"
	"encoding/binary"
	"encoding/gob"
	"errors"
	"fmt"
	"io"
	"unsafe"

	"fgauge/vcfscan"
)

// PieceCollector keeps the raw per-site data of chromosomes that a shard
// holds only in part, as windows of sites within Config.MemoryBudget
// (beyond it, in a temporary file like the Collector's). Contig names are
// resolved only when the pieces are taken (Pieces, WritePieces), so that
// contigs first met in records need no shared list during reading. Each
// contig's records must come in one stretch, positions not decreasing. It
// is used from one goroutine; Close frees its temporary files.
type PieceCollector struct {
	col  *Collector
	auto autosomeSet
	done bool
}

// NewPieceCollector returns a collector for nSamples samples with the
// autosome rules and memory budget of cfg (validated on a copy).
func NewPieceCollector(cfg *Config, nSamples int) (*PieceCollector, error) {
	c := *cfg
	if err := c.Validate(); err != nil {
		return nil, err
	}
	c.Threads = 1
	col := &Collector{
		cfg:      c,
		source:   "input",
		samples:  make([]string, nSamples),
		curSkip:  -1,
		done:     map[int]bool{},
		lastSeq:  -1,
		excluded: map[string]int64{},
		tasks:    make(chan task, 4),
		free:     make(chan *window, 4),
		raw:      true,
	}
	col.setGeometry()
	col.workers.Add(1)
	go col.worker()
	return &PieceCollector{col: col, auto: c.autosomes()}, nil
}

// AddBatch keeps every record of b, which must come in input order like
// the batches of Collector.AddBatch; freqs has the same meaning.
func (p *PieceCollector) AddBatch(b *vcfscan.Batch, freqs []float64) error {
	if p.done {
		return fmt.Errorf("roh: PieceCollector.AddBatch after its pieces were taken")
	}
	return p.col.AddBatch(b, freqs)
}

// finish ends reading and waits for the windows to be stored.
func (p *PieceCollector) finish() error {
	if !p.done {
		p.done = true
		p.col.closeChrom()
		p.col.settle(len(p.col.chroms))
	}
	return p.col.workerErr()
}

// kept returns the chromosome runs of autosomes, named from contigs, and
// the site counts of the others.
func (p *PieceCollector) kept(contigs []vcfscan.Contig) ([]*chromRun, map[string]int64) {
	var out []*chromRun
	excluded := map[string]int64{}
	for _, r := range p.col.chroms {
		r.name, r.length = fmt.Sprintf("contig_%d", r.id), 0
		if r.id >= 0 && r.id < len(contigs) {
			r.name, r.length = contigs[r.id].Name, contigs[r.id].Length
		}
		if !p.auto.is(r.name) {
			excluded[r.name] += int64(r.nSites)
			continue
		}
		out = append(out, r)
	}
	return out, excluded
}

// Pieces returns the kept autosomes, named from contigs (the reader's
// final list), in the order they were first met, and the records of the
// others counted by contig name, as the Collector counts them. It joins
// each piece in memory: WritePieces is the bounded way. The collector
// can give its pieces once.
func (p *PieceCollector) Pieces(contigs []vcfscan.Contig) ([]Piece, map[string]int64) {
	defer p.Close()
	if p.finish() != nil {
		return nil, map[string]int64{}
	}
	runs, excluded := p.kept(contigs)
	out := make([]Piece, 0, len(runs))
	for _, r := range runs {
		ch, err := r.materialize()
		if err != nil {
			p.col.setErr(err)
			return nil, excluded
		}
		out = append(out, Piece{Name: r.name, Length: r.length, Pos: ch.pos, Freq: ch.freq,
			Geno: ch.geno, PLSite: ch.plSite, PL: ch.pl})
	}
	return out, excluded
}

// MemoryStats returns the use of the memory budget so far.
func (p *PieceCollector) MemoryStats() MemoryStats { return p.col.MemoryStats() }

// Err returns the first error met while storing pieces (a temporary-disk
// failure, wrapping ErrTempDisk).
func (p *PieceCollector) Err() error { return p.col.workerErr() }

// Close frees the collector's memory and temporary files. Safe to call
// more than once.
func (p *PieceCollector) Close() {
	p.finish()
	for _, r := range p.col.chroms {
		r.releaseAll()
		r.spill.close()
	}
	if !p.col.finished {
		p.col.finished = true
		close(p.col.tasks)
		p.col.workers.Wait()
	}
}

// Pieces file layout (WritePieces): the magic line, then per piece its
// windows one after the other, each a little header (sites, sites with
// likelihoods) and the window's sections (calls, positions, frequencies,
// likelihood indexes, likelihoods) in the byte order of the machine that
// wrote them; then the index (encoding/gob of piecesIndex), its length
// (8 bytes) and the magic again.
var piecesMagic = []byte("fgauge roh pieces 1\n")

type piecesIndex struct {
	LittleEndian bool
	NSamples     int
	Pieces       []PieceInfo
}

// PieceInfo describes one piece of a pieces file.
type PieceInfo struct {
	Name    string
	Length  int64 // header length, 0 when unknown
	NSites  int
	Offset  int64 // of the first window
	Windows []int64
}

var littleEndian = func() bool {
	x := uint16(1)
	return *(*byte)(unsafe.Pointer(&x)) == 1
}()

// WritePieces writes the kept autosomes (named from contigs) to w in the
// compact pieces layout, window by window, so that memory stays within
// the budget whatever the pieces' size; OpenPieces reads them back for
// JoinAndDetectPieces. It returns the records of the other contigs
// counted by name. The collector can give its pieces once; WritePieces
// closes it.
func (p *PieceCollector) WritePieces(w io.Writer, contigs []vcfscan.Contig) (map[string]int64, error) {
	defer p.Close()
	if err := p.finish(); err != nil {
		return nil, err
	}
	runs, excluded := p.kept(contigs)
	g := p.col.geo
	cw := &countWriter{w: w}
	cw.Write(piecesMagic)
	idx := piecesIndex{LittleEndian: littleEndian, NSamples: g.ns}
	var hdr [8]byte
	for _, r := range runs {
		info := PieceInfo{Name: r.name, Length: r.length, NSites: r.nSites, Offset: cw.n}
		for k := range r.wins {
			win, err := r.load(k)
			if err != nil {
				return nil, err
			}
			info.Windows = append(info.Windows, cw.n)
			binary.LittleEndian.PutUint32(hdr[:4], uint32(win.n))
			binary.LittleEndian.PutUint32(hdr[4:], uint32(win.nPL))
			cw.Write(hdr[:])
			words := (win.n + 31) / 32
			for s := 0; s < g.ns; s++ {
				cw.Write(asBytes(win.geno[s*g.ww : s*g.ww+words]))
			}
			cw.Write(asBytes(win.pos[:win.n]))
			cw.Write(asBytes(win.freq[:win.n]))
			cw.Write(asBytes(win.plSite[:win.n]))
			if win.nPL > 0 {
				for s := 0; s < g.ns; s++ {
					cw.Write(win.pl[3*g.w*s : 3*g.w*s+3*win.nPL])
				}
			}
			r.unload(win)
			if cw.err != nil {
				return nil, fmt.Errorf("roh: writing pieces: %w", cw.err)
			}
		}
		idx.Pieces = append(idx.Pieces, info)
	}
	var ib bytes.Buffer
	if err := gob.NewEncoder(&ib).Encode(&idx); err != nil {
		return nil, err
	}
	cw.Write(ib.Bytes())
	binary.LittleEndian.PutUint64(hdr[:], uint64(ib.Len()))
	cw.Write(hdr[:])
	cw.Write(piecesMagic)
	if cw.err != nil {
		return nil, fmt.Errorf("roh: writing pieces: %w", cw.err)
	}
	return excluded, nil
}

type countWriter struct {
	w   io.Writer
	n   int64
	err error
}

func (c *countWriter) Write(b []byte) (int, error) {
	if c.err != nil {
		return 0, c.err
	}
	n, err := c.w.Write(b)
	c.n += int64(n)
	c.err = err
	return n, err
}

// ErrPieces is wrapped by errors reading a pieces file.
var ErrPieces = errors.New("malformed pieces file")

// PieceSet is a pieces file opened for JoinAndDetectPieces.
type PieceSet struct {
	r    io.ReaderAt
	name string
	idx  piecesIndex
}

// OpenPieces reads the index of a pieces file of size bytes written by
// WritePieces; name labels errors.
func OpenPieces(r io.ReaderAt, size int64, name string) (*PieceSet, error) {
	bad := func(what string) error { return fmt.Errorf("%s: %w: %s", name, ErrPieces, what) }
	m := int64(len(piecesMagic))
	if size < 2*m+8 {
		return nil, bad("too short")
	}
	tail := make([]byte, 8+m)
	if _, err := r.ReadAt(tail, size-8-m); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if !bytes.Equal(tail[8:], piecesMagic) {
		return nil, bad("no end marker (truncated?)")
	}
	il := int64(binary.LittleEndian.Uint64(tail[:8]))
	if il <= 0 || il > size-2*m-8 {
		return nil, bad("index length out of range")
	}
	ib := make([]byte, il)
	if _, err := r.ReadAt(ib, size-8-m-il); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	ps := &PieceSet{r: r, name: name}
	if err := gob.NewDecoder(bytes.NewReader(ib)).Decode(&ps.idx); err != nil {
		return nil, bad("index: " + err.Error())
	}
	if ps.idx.LittleEndian != littleEndian {
		return nil, bad("written on a machine of the other byte order")
	}
	return ps, nil
}

// Pieces describes the pieces of the set, in the order written.
func (ps *PieceSet) Pieces() []PieceInfo { return ps.idx.Pieces }

// PieceRef names one piece of a set.
type PieceRef struct {
	Set   *PieceSet
	Index int
}

// JoinAndDetectPieces is JoinAndDetect for pieces in files: each
// chromosome's pieces (in position order; chromosomes in the order
// wanted) are read window by window and fed to a Collector, so memory
// stays within cfg.MemoryBudget whatever their size.
func JoinAndDetectPieces(cfg *Config, samples []string, chroms [][]PieceRef) (*Result, error) {
	r, _, err := JoinAndDetectPiecesStats(context.Background(), cfg, samples, chroms)
	return r, err
}

// JoinAndDetectPiecesStats is JoinAndDetectPieces that also reports how
// detection used its memory budget (Collector.MemoryStats). Cancelling
// ctx stops reading the pieces and the detection still running; it then
// returns ctx's error.
func JoinAndDetectPiecesStats(ctx context.Context, cfg *Config, samples []string, chroms [][]PieceRef) (*Result, MemoryStats, error) {
	contigs := make([]vcfscan.Contig, len(chroms))
	for i, refs := range chroms {
		if len(refs) == 0 {
			return nil, MemoryStats{}, fmt.Errorf("roh: join: chromosome %d has no pieces", i)
		}
		for _, ref := range refs {
			if ref.Index < 0 || ref.Index >= len(ref.Set.idx.Pieces) {
				return nil, MemoryStats{}, fmt.Errorf("roh: join: piece %d of %s does not exist", ref.Index, ref.Set.name)
			}
			if ref.Set.idx.NSamples != len(samples) {
				return nil, MemoryStats{}, fmt.Errorf("%s: pieces of %d samples, want %d: %w", ref.Set.name, ref.Set.idx.NSamples, len(samples), vcfscan.ErrSampleCount)
			}
		}
		first := refs[0].Set.idx.Pieces[refs[0].Index]
		contigs[i] = vcfscan.Contig{Name: first.Name, Length: first.Length}
		for _, ref := range refs {
			if n := ref.Set.idx.Pieces[ref.Index].Name; n != first.Name {
				return nil, MemoryStats{}, fmt.Errorf("roh: join: piece of %s among pieces of %s", n, first.Name)
			}
		}
	}
	col, err := NewCollector(cfg, samples, contigs)
	if err != nil {
		return nil, MemoryStats{}, err
	}
	for i := range contigs {
		col.autoOf[i] = 1
	}
	stop := context.AfterFunc(ctx, col.Cancel)
	defer stop()
	var f pieceFeeder
	for i, refs := range chroms {
		for _, ref := range refs {
			err := ctx.Err()
			if err == nil {
				err = f.feed(col, i, ref)
			}
			if err != nil {
				ms := col.MemoryStats()
				col.Close()
				return nil, ms, err
			}
		}
	}
	r, err := col.Finish()
	if ctx.Err() != nil {
		return nil, col.MemoryStats(), ctx.Err()
	}
	return r, col.MemoryStats(), err
}

// pieceFeeder reads windows of a pieces file back into batches.
type pieceFeeder struct {
	buf  []byte
	b    vcfscan.Batch
	f    []float64
	geno []uint64
	pos  []int64
	plS  []int32
	seq  int64
}

func (pf *pieceFeeder) feed(col *Collector, id int, ref PieceRef) error {
	ps := ref.Set
	info := ps.idx.Pieces[ref.Index]
	ns := ps.idx.NSamples
	bad := func(what string) error {
		return fmt.Errorf("%s: %w: piece %s: %s", ps.name, ErrPieces, info.Name, what)
	}
	var hdr [8]byte
	for _, off := range info.Windows {
		if _, err := ps.r.ReadAt(hdr[:], off); err != nil {
			return bad(err.Error())
		}
		n, nPL := int(binary.LittleEndian.Uint32(hdr[:4])), int(binary.LittleEndian.Uint32(hdr[4:]))
		if n <= 0 || n > 1<<24 || nPL > n {
			return bad("window size out of range")
		}
		words := (n + 31) / 32
		size := 8*ns*words + 8*n + 8*n + 4*n + 3*ns*nPL
		pf.buf = grow(pf.buf, size)
		if _, err := ps.r.ReadAt(pf.buf, off+8); err != nil {
			return bad(err.Error())
		}
		pf.geno = grow(pf.geno, ns*words)
		pf.pos = grow(pf.pos, n)
		pf.f = grow(pf.f, n)
		pf.plS = grow(pf.plS, n)
		o := 0
		for _, dst := range [][]byte{asBytes(pf.geno), asBytes(pf.pos), asBytes(pf.f), asBytes(pf.plS)} {
			o += copy(dst, pf.buf[o:])
		}
		pl := pf.buf[o:]
		b := &pf.b
		b.Seq, b.NSamples = pf.seq, ns
		pf.seq++
		b.Records = b.Records[:0]
		b.GT = grow(b.GT, n*ns)
		b.PL, b.HasPL = b.PL[:0], b.HasPL[:0]
		if nPL > 0 {
			b.PL = grow(b.PL, 3*n*ns)
		}
		for t := 0; t < n; t++ {
			b.Records = append(b.Records, vcfscan.Record{ChromID: id, Pos: pf.pos[t], Line: -1})
			w, sh := t>>5, uint(t&31)*2
			gt := b.GT[t*ns : (t+1)*ns]
			for s := range gt {
				gt[s] = vcfscan.Geno(pf.geno[s*words+w]>>sh) & 3
			}
			if nPL == 0 {
				continue
			}
			k := int(pf.plS[t])
			b.HasPL = append(b.HasPL, k >= 0)
			if k >= nPL {
				return bad("likelihood index out of range")
			}
			if k >= 0 {
				d := b.PL[3*t*ns : 3*(t+1)*ns]
				for s := 0; s < ns; s++ {
					q := pl[3*nPL*s+3*k : 3*nPL*s+3*k+3]
					d[3*s], d[3*s+1], d[3*s+2] = uint16(q[0]), uint16(q[1]), uint16(q[2])
				}
			}
		}
		if err := col.AddBatch(b, pf.f[:n]); err != nil {
			return err
		}
	}
	return nil
}
