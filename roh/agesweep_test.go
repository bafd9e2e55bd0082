package roh

import (
	"math"
	"sort"
	"testing"
)

// The age fit inside the windowed engine (agesweep.go) is AgeWorker's fit
// of ages.go on the same sites: FitWindows over AgeWindows of the
// detector's runs (default), or Fit over the whole chromosome
// (AgeWholeChromosome), for every sample: per-class posterior lengths to
// a relative 1e-9 (only the order of the sums over the span outside the
// windows differs) and the same class with the same mean posterior for
// every run. Spilled windows (budget of one byte), thread counts and
// likelihoods do not change anything.
func TestAgeSweepsMatchWorker(t *testing.T) {
	for _, tc := range []struct {
		name    string
		ns      int
		pl      bool
		whole   bool
		threads int
		budget  int64
	}{
		{"windows", 6, false, false, 2, 0},
		{"windows spilled", 5, false, false, 3, 1},
		{"likelihoods", 4, true, false, 1, 0},
		{"whole", 4, false, true, 2, 1},
	} {
		contigs, sites := denseCohort(uint64(100+tc.ns), tc.ns, 2500)
		bs, fs := batches(sites, tc.ns, 500)
		if tc.pl {
			withPL(bs)
		}
		cfg := DefaultConfig()
		cfg.Threads = tc.threads
		cfg.MemoryBudget = tc.budget
		cfg.TempDir = t.TempDir()
		cfg.AgeWholeChromosome = tc.whole
		cfg.AgeWholeShare = 0 // compare windows with FitWindows
		res, _ := runCollector(t, cfg, tc.ns, contigs, bs, fs, false)
		vc := *cfg
		if err := vc.Validate(); err != nil {
			t.Fatal(err)
		}
		acfg := vc.Ages
		chroms := testAgeChroms(t, cfg, contigs, bs, fs)
		var w AgeWorker
		var sc hmmScratch
		checked := 0
		for ci, a := range chroms {
			ch := a.ch
			n := len(ch.pos)
			tab := NewAgeTables(acfg, ch.pos, ch.cm, ch.freq, nil)
			cr := res.Chroms[ci]
			m := len(acfg.Rates) + 1
			if len(cr.AgeBP) != m*tc.ns {
				t.Fatalf("%s: AgeBP has %d entries, want %d", tc.name, len(cr.AgeBP), m*tc.ns)
			}
			bySample := map[int][]Run{}
			for _, r := range cr.Runs {
				bySample[r.Sample] = append(bySample[r.Sample], r)
			}
			for s := 0; s < tc.ns; s++ {
				sc.code = grow(sc.code, n)
				ch.unpack(s, sc.code)
				if ch.pl != nil {
					sc.fillEmissions(ch, s)
					w.LoadEmissions(sc.em[:2*n])
				} else {
					w.LoadCodes(tab, sc.code)
				}
				runs := bySample[s]
				var ranges [][2]int
				for _, r := range runs {
					i := sort.Search(n, func(i int) bool { return ch.pos[i] >= r.Start })
					j := sort.Search(n, func(i int) bool { return ch.pos[i] > r.End }) - 1
					ranges = append(ranges, [2]int{i, j})
				}
				var fit AgeFit
				if tc.whole {
					fit = w.Fit(tab, acfg)
				} else {
					fit = w.FitWindows(tab, acfg, AgeWindows(ch.cm, ranges, vc.AgeMarginCM))
				}
				for l := 0; l < m; l++ {
					got, want := float64(cr.AgeBP[s*m+l]), float64(fit.ClassBP[l])
					if math.Abs(got-want) > 1e-9*math.Max(math.Abs(want), AgeUnit) {
						t.Errorf("%s %s sample %d class %d: %v bp, worker %v", tc.name, a.name, s, l, got/AgeUnit, want/AgeUnit)
					}
				}
				for j, r := range runs {
					cls, p := w.RunClass(ranges[j][0], ranges[j][1])
					if r.AgeClass != cls+1 || math.Abs(r.AgePosterior-p) > 1e-9 {
						t.Errorf("%s %s sample %d run %d: class %d posterior %v, worker %d %v", tc.name, a.name, s, j, r.AgeClass-1, r.AgePosterior, cls, p)
					}
					checked++
				}
			}
		}
		if checked < tc.ns {
			t.Errorf("%s: only %d runs checked", tc.name, checked)
		}
	}
}
