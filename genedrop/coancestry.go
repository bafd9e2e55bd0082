package genedrop

import (
	"errors"
	"fmt"
	"sort"
	"strconv"
	"strings"

	"fgauge/stats/pedigree"
)

// ErrUnknownSample is wrapped by errors about an id the simulation lacks.
var ErrUnknownSample = errors.New("no such simulated animal")

// PairTruth is the coancestry of two simulated animals A and B (indices
// into Result.Samples).
//
// Realized is the realized coefficient of coancestry: the share of the
// genome where an allele drawn at random from A and one drawn at random
// from B descend from the same founder copy, i.e. the mean over the four
// pairings of A's and B's copies of the share where they carry the same
// founder label. The share is of physical length (bp, summed over the
// chromosomes, segment bounds converted from cM without rounding), the
// measure of SampleTruth.FRealized, so it is the expected realized F of
// their offspring. Its base population is the simulated founders.
//
// Total adds, when ancestral epochs are set, the stretches where the two
// copies descend from different founder copies holding the same old
// haplotype of an epoch (base: the oldest epoch); without epochs it equals
// Realized. Pedigree is the expected value from the pedigree alone
// (Meuwissen & Luo 1992, via stats/pedigree).
type PairTruth struct {
	A, B                      int
	Pedigree, Realized, Total float64
}

// Coancestry returns the realized coancestry (PairTruth.Realized) of the
// animals with ids a and b; a == b gives (1 + F)/2 realized.
func (r *Result) Coancestry(a, b string) (float64, error) {
	i, ok := r.Pedigree.Index(a)
	j, ok2 := r.Pedigree.Index(b)
	if !ok || !ok2 {
		missing := a
		if ok {
			missing = b
		}
		return 0, fmt.Errorf("%w: %q", ErrUnknownSample, missing)
	}
	realized, _ := r.coancestry(i, j)
	return realized, nil
}

// Pairs returns the truth of each pair of indices into Result.Samples.
func (r *Result) Pairs(pairs [][2]int) ([]PairTruth, error) {
	ped, err := r.Pedigree.Coancestry(pairs, nil)
	if err != nil {
		return nil, err
	}
	out := make([]PairTruth, len(pairs))
	for k, p := range pairs {
		re, tot := r.coancestry(p[0], p[1])
		out[k] = PairTruth{A: p[0], B: p[1], Pedigree: ped[k], Realized: re, Total: tot}
	}
	return out, nil
}

// coancestry returns the realized and total coancestry of animals i and j.
func (r *Result) coancestry(i, j int) (realized, total float64) {
	var same, old, genome float64
	for c, ch := range r.Chromosomes {
		genome += float64(ch.LengthBP)
		for h1 := 0; h1 < 2; h1++ {
			for h2 := 0; h2 < 2; h2++ {
				s, o := r.sharedBP(c, r.haps[i][c][h1], r.haps[j][c][h2])
				same += s
				old += o
			}
		}
	}
	return same / (4 * genome), (same + old) / (4 * genome)
}

// sharedBP returns the bp of chromosome c where copies a and b carry the
// same founder label, and where they carry different labels holding the
// same old haplotype of an ancestral epoch.
func (r *Result) sharedBP(c int, a, b []seg) (same, old float64) {
	x := 0.0
	for ja, jb := 0, 0; ja < len(a) && jb < len(b); {
		end := min(a[ja].End, b[jb].End)
		if end > x {
			la, lb := a[ja].Label, b[jb].Label
			if la == lb {
				same += r.cmToBP(c, end) - r.cmToBP(c, x)
			} else if r.epochs != nil {
				old += r.oldSharedBP(c, la, lb, x, end)
			}
			x = end
		}
		if a[ja].End == end {
			ja++
		}
		if b[jb].End == end {
			jb++
		}
	}
	return same, old
}

// oldSharedBP: bp of [s, e) where founder copies la and lb hold the same
// old haplotype of an epoch.
func (r *Result) oldSharedBP(c int, la, lb int32, s, e float64) float64 {
	ea, eb := r.epochs[la][c], r.epochs[lb][c]
	ja := sort.Search(len(ea), func(j int) bool { return ea[j].End > s })
	jb := sort.Search(len(eb), func(j int) bool { return eb[j].End > s })
	var sum float64
	x := s
	for x < e && ja < len(ea) && jb < len(eb) {
		end := min(ea[ja].End, eb[jb].End, e)
		if p, q := ea[ja], eb[jb]; p.Epoch >= 0 && p.Epoch == q.Epoch && p.Hap == q.Hap {
			sum += r.cmToBP(c, end) - r.cmToBP(c, x)
		}
		if ea[ja].End == end {
			ja++
		}
		if eb[jb].End == end {
			jb++
		}
		x = end
	}
	return sum
}

// HerdCandidates returns the males (candidate sires) and females
// (candidate dams) of the last generation of the closed_herd design in
// replicate rep, as indices into Result.Samples; both are empty when the
// replicate has no closed herd.
func (r *Result) HerdCandidates(rep int) (sires, dams []int) {
	last := 0
	for _, s := range r.Samples {
		if g, ok := herdGeneration(s); ok && s.Replicate == rep {
			last = max(last, g)
		}
	}
	if last == 0 {
		return nil, nil
	}
	for i, s := range r.Samples {
		if g, ok := herdGeneration(s); !ok || s.Replicate != rep || g != last {
			continue
		}
		switch r.Pedigree.SexOf(i) {
		case pedigree.SexMale:
			sires = append(sires, i)
		case pedigree.SexFemale:
			dams = append(dams, i)
		}
	}
	return sires, dams
}

func herdGeneration(s SampleTruth) (int, bool) {
	if !strings.HasPrefix(s.Design, "closed_herd") {
		return 0, false
	}
	g, err := strconv.Atoi(strings.TrimPrefix(s.Class, "herd_generation_"))
	return g, err == nil
}

// HerdPairs returns every candidate sire x dam pair of the last generation
// of the closed herd of every replicate (pairs never cross replicates).
func (r *Result) HerdPairs() [][2]int {
	var out [][2]int
	for rep := 1; rep <= r.Config.Replicates; rep++ {
		sires, dams := r.HerdCandidates(rep)
		for _, s := range sires {
			for _, d := range dams {
				out = append(out, [2]int{s, d})
			}
		}
	}
	return out
}
