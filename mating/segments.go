package mating

import (
	"context"
	"errors"
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"

	"fgauge/vcfscan"
)

// Shared-segment coancestry: the coancestry of a sire and a dam counted
// over long stretches of genome the two share identical by descent, on the
// probability scale (0 to 1) of the coefficient of coancestry itself: the
// chance that an allele drawn at random from each parent at a random point
// of the genome lies in such a shared stretch and is the same copy.
//
// How it is estimated from unphased genotypes (our own construction from
// two textbook facts, common practice: two animals that share a copy
// identical by descent at a site cannot be opposite homozygotes there
// (0/0 against 1/1), and the coancestry of two animals at a point is the
// mean over the four pairings of their copies of being the same copy):
//
//  1. Per chromosome, the sites where the pair are opposite homozygotes
//     cut the chromosome into stretches. A stretch counts when it spans at
//     least SegmentOptions.MinBP and holds at least MinSites sites;
//     shorter ones are what unrelated animals share by chance or through
//     old ancestry.
//  2. A counted stretch is read in windows of Window sites. In a window
//     where neither animal is heterozygous (both autozygous, same copy) the
//     pairing share is 1; where one of them is never heterozygous, 1/2;
//     where both are heterozygous somewhere but their genotypes never
//     differ (both copies shared), 1/2; otherwise (one copy shared) 1/4.
//  3. The estimate is the sum of share x length (bp, a stretch's span from
//     its first to its last site split over its windows by their sites)
//     over the total span of the chromosomes (first to last kept site).
//
// Base population: the ancestors recent enough to leave shared stretches
// of at least MinBP; a common ancestor m meioses away (both paths) leaves
// stretches of about 100/m cM on average, so at 3 Mb (about 3 cM at the
// common-practice 1 cM per Mb) roughly the ancestors of the last 15 or so
// generations. Relatedness older than that counts as 0, so the value is
// never negative. Missing calls neither cut a stretch nor show a
// heterozygote or a difference. Genotyping errors can cut a stretch in two
// (both halves still count if long enough).
//
// Checked against simulated truth in cmd/fgauge/internal/mate (the
// realized coancestry of the gene-drop simulator). Cost: one pass over the
// sites per pair (about pairs x sites byte comparisons; BenchmarkSharedSegments:
// 42.9 ns of wall time per pair-site at load 20 on 2 shared cores, where
// the genomic kernel needs about 0.03) and one byte per
// candidate and site of memory, so it is meant for candidate sets up to a
// few hundred thousand pairs, not the genomic measure's millions.

// SegmentOptions tune SharedSegments; zero values take the defaults.
type SegmentOptions struct {
	MinBP    int64 // shortest stretch counted (default 3,000,000)
	MinSites int   // fewest sites in a counted stretch (default 50)
	Window   int   // sites per window inside a stretch (default 32)
}

func (o *SegmentOptions) defaults() {
	if o.MinBP == 0 {
		o.MinBP = 3_000_000
	}
	if o.MinSites == 0 {
		o.MinSites = 50
	}
	if o.Window == 0 {
		o.Window = 32
	}
}

// MaxSegmentBytes bounds the memory of a SegmentPacker (one byte per
// candidate and site).
const MaxSegmentBytes = 1 << 30

// SegmentPacker collects the genotypes and positions of the chosen sires
// and dams from the batches of a vcfscan.Reader, in input order, for
// SharedSegments. It is not safe for concurrent use.
type SegmentPacker struct {
	cols   []int32
	nSires int
	geno   [][]byte // per animal, per site: 0, 1, 2 alternate alleles; 3 missing
	chrom  []int32
	pos    []int64
	order  *OrderError    // first record out of order, if any
	done   map[int32]bool // chromosomes finished
}

// NewSegmentPacker returns a SegmentPacker for the sires and dams given
// as columns of the reader's sample list.
func NewSegmentPacker(sireCols, damCols []int) *SegmentPacker {
	p := &SegmentPacker{nSires: len(sireCols), done: map[int32]bool{}}
	for _, c := range append(append([]int{}, sireCols...), damCols...) {
		p.cols = append(p.cols, int32(c))
	}
	p.geno = make([][]byte, len(p.cols))
	return p
}

// Sites is the number of sites kept.
func (p *SegmentPacker) Sites() int { return len(p.pos) }

// Add keeps every record of the batch (haploid calls count as missing).
// Records must come sorted by position within each chromosome and each
// chromosome in one block; the first that does not is reported by
// SharedSegments.
func (p *SegmentPacker) Add(b *vcfscan.Batch) {
	for i, r := range b.Records {
		if n := len(p.pos); n > 0 && p.order == nil {
			last, c := p.chrom[n-1], int32(r.ChromID)
			switch {
			case c == last && r.Pos < p.pos[n-1]:
				p.order = &OrderError{Line: r.Line, Msg: fmt.Sprintf("position %d after position %d on the same chromosome: shared segments need input sorted by position", r.Pos, p.pos[n-1])}
			case c != last:
				p.done[last] = true
				if p.done[c] {
					p.order = &OrderError{Line: r.Line, Msg: fmt.Sprintf("a chromosome met again (at position %d) after another one: shared segments need each chromosome in one block", r.Pos)}
				}
			}
		}
		p.chrom = append(p.chrom, int32(r.ChromID))
		p.pos = append(p.pos, r.Pos)
		calls := b.Calls(i)
		for j, c := range p.cols {
			g := byte(calls[c] & 7)
			if g > byte(vcfscan.HomAlt) {
				g = 3
			}
			p.geno[j] = append(p.geno[j], g)
		}
	}
}

// OrderError is the first record out of position order that
// SharedSegments refuses; Line is vcfscan.Record.Line (the VCF line, or
// the BCF record index; 0 when unknown).
type OrderError struct {
	Line int64
	Msg  string
}

func (e *OrderError) Error() string { return e.Msg }

// Bytes is the memory the packer holds for genotypes.
func (p *SegmentPacker) Bytes() int64 { return int64(len(p.pos)) * int64(len(p.cols)) }

// SharedSegments returns the shared-segment coancestry of every sire x
// dam pair (see the comment above SegmentOptions), using up to threads
// goroutines; the result does not depend on threads.
func (p *SegmentPacker) SharedSegments(ctx context.Context, threads int, opt SegmentOptions) (*Matrix, error) {
	if p.order != nil {
		return nil, p.order
	}
	opt.defaults()
	if len(p.pos) == 0 {
		return nil, ErrNoSites
	}
	// Chromosome blocks and the genome span.
	var blocks [][2]int
	var span float64
	for a := 0; a < len(p.pos); {
		b := a
		for b < len(p.pos) && p.chrom[b] == p.chrom[a] {
			b++
		}
		blocks = append(blocks, [2]int{a, b})
		span += float64(p.pos[b-1] - p.pos[a])
		a = b
	}
	if !(span > 0) {
		return nil, errors.New("the kept sites span no genome (every chromosome has a single position)")
	}
	nS, nD := p.nSires, len(p.cols)-p.nSires
	m := &Matrix{Sires: nS, Dams: nD, V: make([]float64, nS*nD)}
	if threads < 1 {
		threads = runtime.NumCPU()
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := 0; w < threads; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				s := int(next.Add(1) - 1)
				if s >= nS || ctx.Err() != nil {
					return
				}
				for d := 0; d < nD; d++ {
					m.V[s*nD+d] = p.pair(p.geno[s], p.geno[nS+d], blocks, &opt) / span
				}
			}
		}()
	}
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	return m, nil
}

// pair returns the shared length (bp x pairing share) of two animals.
func (p *SegmentPacker) pair(x, y []byte, blocks [][2]int, opt *SegmentOptions) float64 {
	var total float64
	for _, bl := range blocks {
		start := bl[0]
		for k := bl[0]; k <= bl[1]; k++ {
			if k < bl[1] {
				gx, gy := x[k], y[k]
				if !(gx == 0 && gy == 2 || gx == 2 && gy == 0) {
					continue
				}
			}
			// Stretch [start, k): no opposite homozygote inside.
			if n := k - start; n >= opt.MinSites && n > 0 {
				if bp := p.pos[k-1] - p.pos[start]; bp >= opt.MinBP {
					total += float64(bp) * windowShare(x[start:k], y[start:k], opt.Window)
				}
			}
			start = k + 1
		}
	}
	return total
}

// windowShare returns the mean pairing share over the windows of a
// stretch, each weighted by its number of sites; a last window shorter
// than half a window joins the one before it.
func windowShare(x, y []byte, w int) float64 {
	n := len(x)
	var sum float64
	for w0 := 0; w0 < n; {
		w1 := min(w0+w, n)
		if n-w1 < w/2 {
			w1 = n
		}
		hetX, hetY, diff := false, false, false
		for k := w0; k < w1; k++ {
			a, b := x[k], y[k]
			hetX = hetX || a == 1
			hetY = hetY || b == 1
			diff = diff || (a != b && a != 3 && b != 3)
		}
		share := 0.25
		switch {
		case !hetX && !hetY:
			share = 1
		case !hetX || !hetY, !diff:
			share = 0.5
		}
		sum += share * float64(w1-w0)
		w0 = w1
	}
	return sum / float64(n)
}
