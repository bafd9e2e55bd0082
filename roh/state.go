package roh

import (
	"fmt"

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
