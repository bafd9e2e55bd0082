package roh

import (
	"fmt"
	"math"

	"fgauge/vcfscan"
)

// Piece is the raw material of detection for one stretch of one
// chromosome: what a shard that holds only part of a chromosome keeps so
// that the whole chromosome can be detected later, after the pieces of all
// shards are joined (see JoinAndDetect). Fields are exported and plain for
// encoding/gob.
type Piece struct {
	Name   string
	Length int64     // header length, 0 when unknown
	Pos    []int64   // positions, not decreasing
	Freq   []float64 // alternate-allele frequency per site (as given to the detector)
	// Geno holds per sample the calls packed 2 bits each (32 per word,
	// site t in bits 2*(t%32) of word t/32): 0, 1, 2 copies of ALT, 3 missing.
	Geno [][]uint64
	// PLSite gives per site the index of its likelihood triple in PL, or
	// -1; PL holds per sample 3 capped phred values per site with likelihoods.
	PLSite []int32
	PL     [][]uint8
}

// PieceCollector keeps the raw per-site data of chromosomes that a shard
// holds only in part. Contig names are resolved only in Pieces, so that
// contigs first met in records (appended to the header while reading) need
// no shared list during reading. It is used from one goroutine.
type PieceCollector struct {
	auto     autosomeSet
	nSamples int
	byID     map[int]*chromData
	order    []int
}

// NewPieceCollector returns a collector for nSamples samples with the
// autosome rules of cfg (validated on a copy).
func NewPieceCollector(cfg *Config, nSamples int) (*PieceCollector, error) {
	c := *cfg
	if err := c.Validate(); err != nil {
		return nil, err
	}
	return &PieceCollector{auto: c.autosomes(), nSamples: nSamples, byID: map[int]*chromData{}}, nil
}

// AddBatch keeps every record of b, which must come in input order like
// the batches of Collector.AddBatch; freqs has the same meaning.
func (p *PieceCollector) AddBatch(b *vcfscan.Batch, freqs []float64) error {
	if b.NSamples != p.nSamples {
		return fmt.Errorf("roh: batch has %d samples, collector %d: %w", b.NSamples, p.nSamples, vcfscan.ErrSampleCount)
	}
	ns := b.NSamples
	for i := range b.Records {
		rec := &b.Records[i]
		ch := p.byID[rec.ChromID]
		if ch == nil {
			ch = newChromData(rec.ChromID, "", 0, ns)
			p.byID[rec.ChromID] = ch
			p.order = append(p.order, rec.ChromID)
		}
		if n := len(ch.pos); n > 0 && rec.Pos < ch.pos[n-1] {
			return fmt.Errorf("roh: position %d after %d on contig %d: %w", rec.Pos, ch.pos[n-1], rec.ChromID, vcfscan.ErrUnsorted)
		}
		calls := b.GT[i*ns : (i+1)*ns]
		f := math.NaN()
		if freqs != nil {
			f = freqs[i]
		}
		if f != f {
			f = cohortFreq(calls)
		}
		var pl []uint16
		if b.PL != nil && i < len(b.HasPL) && b.HasPL[i] {
			pl = b.PL[3*i*ns : 3*(i+1)*ns]
		}
		ch.appendSite(rec.Pos, f, calls, pl)
	}
	return nil
}

// appendSite adds one site, packing the calls as Collector.AddBatch does.
func (ch *chromData) appendSite(pos int64, f float64, calls []vcfscan.Geno, pl []uint16) {
	t := len(ch.pos)
	ch.pos = append(ch.pos, pos)
	ch.freq = append(ch.freq, f)
	sh := uint(t&31) * 2
	if sh == 0 {
		for s := range ch.geno {
			ch.geno[s] = append(ch.geno[s], 0)
		}
	}
	w := t >> 5
	for s, g := range calls {
		if g > 3 {
			g = 3
		}
		ch.geno[s][w] |= uint64(g) << sh
	}
	if pl == nil {
		ch.plSite = append(ch.plSite, -1)
		return
	}
	if ch.pl == nil {
		ch.pl = make([][]uint8, len(ch.geno))
	}
	for s := range ch.geno {
		ch.pl[s] = append(ch.pl[s], cap255(pl[3*s]), cap255(pl[3*s+1]), cap255(pl[3*s+2]))
	}
	ch.plSite = append(ch.plSite, ch.nPL)
	ch.nPL++
}

// Pieces names the kept chromosomes from contigs (the reader's final
// list) and returns the autosomal ones in the order they were first met,
// and the records of the others counted by contig name, as the Collector
// counts them.
func (p *PieceCollector) Pieces(contigs []vcfscan.Contig) ([]Piece, map[string]int64) {
	out := make([]Piece, 0, len(p.order))
	excluded := map[string]int64{}
	for _, id := range p.order {
		ch := p.byID[id]
		name := fmt.Sprintf("contig_%d", id)
		var length int64
		if id >= 0 && id < len(contigs) {
			name, length = contigs[id].Name, contigs[id].Length
		}
		if !p.auto.is(name) {
			excluded[name] += int64(len(ch.pos))
			continue
		}
		out = append(out, Piece{Name: name, Length: length, Pos: ch.pos, Freq: ch.freq,
			Geno: ch.geno, PLSite: ch.plSite, PL: ch.pl})
	}
	return out, excluded
}

// JoinAndDetect joins the pieces of each chromosome (given per chromosome
// in position order; chromosomes in the order wanted in the result) and
// runs detection on them with cfg. The pieces are fed to a Collector site
// by site, in the order one pass over the whole chromosome would have met
// them, so the runs are those of that pass; detection holds no more than
// cfg.MemoryBudget beyond the pieces themselves. The result's Excluded is
// empty.
func JoinAndDetect(cfg *Config, samples []string, pieces [][]Piece) (*Result, error) {
	contigs := make([]vcfscan.Contig, len(pieces))
	for i, ps := range pieces {
		if len(ps) == 0 {
			return nil, fmt.Errorf("roh: join: chromosome %d has no pieces", i)
		}
		contigs[i] = vcfscan.Contig{Name: ps[0].Name, Length: ps[0].Length}
		if err := checkPieces(ps, len(samples)); err != nil {
			return nil, err
		}
	}
	col, err := NewCollector(cfg, samples, contigs)
	if err != nil {
		return nil, err
	}
	// the autosome rules were applied when the pieces were made
	for i := range contigs {
		col.autoOf[i] = 1
	}
	var f joinFeeder
	for i, ps := range pieces {
		for k := range ps {
			if err := f.feed(col, i, &ps[k]); err != nil {
				col.Close()
				return nil, err
			}
		}
	}
	return col.Finish()
}

// checkPieces checks the pieces of one chromosome for consistency and
// order.
func checkPieces(ps []Piece, ns int) error {
	name := ps[0].Name
	last := int64(-1 << 62)
	for k := range ps {
		p := &ps[k]
		if p.Name != name {
			return fmt.Errorf("roh: join: piece of %s among pieces of %s", p.Name, name)
		}
		n := len(p.Pos)
		if len(p.Freq) != n || len(p.PLSite) != n || len(p.Geno) != ns || (p.PL != nil && len(p.PL) != ns) {
			return fmt.Errorf("roh: join: piece %d of %s is inconsistent", k, p.Name)
		}
		for s := 0; s < ns; s++ {
			if len(p.Geno[s]) != (n+31)/32 {
				return fmt.Errorf("roh: join: piece %d of %s has %d genotype words for %d sites", k, p.Name, len(p.Geno[s]), n)
			}
		}
		if n > 0 && p.Pos[0] < last {
			return fmt.Errorf("roh: join: pieces of %s overlap or are out of order (%d after %d): %w",
				p.Name, p.Pos[0], last, vcfscan.ErrUnsorted)
		}
		for t := 0; t < n; t++ {
			if t > 0 && p.Pos[t] < p.Pos[t-1] {
				return fmt.Errorf("roh: join: piece %d of %s is not sorted: %w", k, p.Name, vcfscan.ErrUnsorted)
			}
			if i := p.PLSite[t]; i >= 0 {
				if p.PL == nil {
					return fmt.Errorf("roh: join: piece %d of %s has a likelihood index without likelihoods", k, p.Name)
				}
				for s := 0; s < ns; s++ {
					if int(3*i+2) >= len(p.PL[s]) {
						return fmt.Errorf("roh: join: piece %d of %s has a likelihood index out of range", k, p.Name)
					}
				}
			}
		}
		if n > 0 {
			last = p.Pos[n-1]
		}
	}
	return nil
}

// joinFeeder turns pieces back into batches for a Collector.
type joinFeeder struct {
	b   vcfscan.Batch
	f   []float64
	seq int64
}

// joinBatchCalls bounds the calls of one rebuilt batch.
const joinBatchCalls = 1 << 20

func (j *joinFeeder) feed(col *Collector, id int, p *Piece) error {
	ns := len(p.Geno)
	n := len(p.Pos)
	size := max(32, joinBatchCalls/max(ns, 1))
	for t0 := 0; t0 < n; t0 += size {
		t1 := min(t0+size, n)
		b := &j.b
		b.Seq, b.NSamples = j.seq, ns
		j.seq++
		b.Records = b.Records[:0]
		b.GT = grow(b.GT, (t1-t0)*ns)
		b.PL, b.HasPL = b.PL[:0], b.HasPL[:0]
		j.f = j.f[:0]
		hasPL := false
		for t := t0; t < t1; t++ {
			hasPL = hasPL || p.PLSite[t] >= 0
		}
		if hasPL {
			b.PL = grow(b.PL, 3*(t1-t0)*ns)
		}
		for t := t0; t < t1; t++ {
			i := t - t0
			b.Records = append(b.Records, vcfscan.Record{ChromID: id, Pos: p.Pos[t], Line: -1})
			j.f = append(j.f, p.Freq[t])
			w, sh := t>>5, uint(t&31)*2
			gt := b.GT[i*ns : (i+1)*ns]
			for s := range gt {
				gt[s] = vcfscan.Geno(p.Geno[s][w]>>sh) & 3
			}
			if hasPL {
				k := p.PLSite[t]
				b.HasPL = append(b.HasPL, k >= 0)
				if k >= 0 {
					d := b.PL[3*i*ns : 3*(i+1)*ns]
					for s := 0; s < ns; s++ {
						q := p.PL[s][3*k : 3*k+3]
						d[3*s], d[3*s+1], d[3*s+2] = uint16(q[0]), uint16(q[1]), uint16(q[2])
					}
				}
			}
		}
		if err := col.AddBatch(b, j.f); err != nil {
			return err
		}
	}
	return nil
}
