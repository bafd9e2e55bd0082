package mating

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"fgauge/stats"
	"fgauge/vcfscan"
)

// numpyFixture is VanRaden G/2 computed from scratch with NumPy
// (python3-numpy 1.24.2, Debian) by testdata/tools/vanraden_numpy.py from
// testdata/cohort189.vcf.gz: sires are samples 1-10, dams samples 11-70,
// frequencies from the cohort of 189 samples (column cohort) or INFO AF
// (column info_af).
const numpyFixture = "../testdata/mating/cohort189_coancestry_numpy.tsv"

func readNumpyFixture(t *testing.T) (cohort, info []float64) {
	f, err := os.Open(numpyFixture)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Scan() // header
	for sc.Scan() {
		fs := strings.Split(sc.Text(), "\t")
		a, err1 := strconv.ParseFloat(fs[2], 64)
		b, err2 := strconv.ParseFloat(fs[3], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("%s: %q", numpyFixture, sc.Text())
		}
		cohort, info = append(cohort, a), append(info, b)
	}
	return cohort, info
}

// genomicOf reads cohort189 with every sample and returns the packed
// coancestry of sires 0-9 and dams 10-69 with the given source.
func genomicOf(t *testing.T, opt vcfscan.Options, src func(r *vcfscan.Reader) FreqSource, threads int) *Matrix {
	t.Helper()
	opt.IncludeFiltered = true // the fixture's site policy takes any FILTER
	r, err := vcfscan.Open("../testdata/cohort189.vcf.gz", opt)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	p := NewPacker(seq(0, 10), seq(10, 60), src(r))
	if err := p.ReadAll(context.Background(), r); err != nil {
		t.Fatal(err)
	}
	if p.Sites() != 99 {
		t.Fatalf("%d sites kept; the NumPy script kept 99", p.Sites())
	}
	m, err := p.Genomic(context.Background(), threads)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// TestGenomicAgainstNumpy: coancestry_genomic equals an independent NumPy
// VanRaden G/2 (see numpyFixture) within 1e-9, with cohort frequencies
// (CohortFreqs, and the scan's own stats.FreqCohort through StatsFreqs)
// and with INFO AF frequencies (stats.FreqInfo through StatsFreqs).
func TestGenomicAgainstNumpy(t *testing.T) {
	wantCohort, wantInfo := readNumpyFixture(t)
	statsSrc := func(fs stats.FreqSource) func(r *vcfscan.Reader) FreqSource {
		return func(r *vcfscan.Reader) FreqSource {
			s, err := NewStatsFreqs(&stats.Config{Samples: r.Samples(), Freqs: fs},
				func(id int) string { return r.Header().Contigs[id].Name })
			if err != nil {
				t.Fatal(err)
			}
			return s
		}
	}
	for _, tc := range []struct {
		name string
		opt  vcfscan.Options
		src  func(r *vcfscan.Reader) FreqSource
		want []float64
	}{
		{"cohort", vcfscan.Options{}, func(*vcfscan.Reader) FreqSource { return CohortFreqs{} }, wantCohort},
		{"stats_cohort", vcfscan.Options{}, statsSrc(stats.FreqCohort), wantCohort},
		{"stats_info_af", vcfscan.Options{InfoKey: "AF"}, statsSrc(stats.FreqInfo), wantInfo},
	} {
		for _, threads := range []int{1, 4} {
			m := genomicOf(t, tc.opt, tc.src, threads)
			if len(m.V) != len(tc.want) {
				t.Fatalf("%s: %d pairs, fixture %d", tc.name, len(m.V), len(tc.want))
			}
			for i, w := range tc.want {
				if math.Abs(m.V[i]-w) > 1e-9 {
					t.Fatalf("%s threads %d: pair %d (sire %d, dam %d): %v, NumPy %v", tc.name, threads, i, i/60, i%60, m.V[i], w)
				}
			}
		}
	}
}

// scipyFixture holds random allocation instances and their optimum from
// scipy.optimize.linear_sum_assignment (python3-scipy 1.10.1, Debian) with
// sires repeated by their limit; written by testdata/tools/assignment_scipy.py.
const scipyFixture = "../testdata/mating/assignment_scipy.json"

// TestAllocateAgainstScipy: the allocation's total equals scipy's optimum
// within 1e-9 on every feasible instance (loose, tight and random limits,
// with and without a ceiling), and the infeasible ones are reported as such.
func TestAllocateAgainstScipy(t *testing.T) {
	data, err := os.ReadFile(scipyFixture)
	if err != nil {
		t.Fatal(err)
	}
	var cases []struct {
		Sires, Dams int
		Limits      []int
		Ceiling     *float64
		Cost        []float64
		Optimum     *float64
	}
	if err := json.Unmarshal(data, &cases); err != nil {
		t.Fatal(err)
	}
	feasible := 0
	for i, c := range cases {
		cost := &Matrix{Sires: c.Sires, Dams: c.Dams, V: c.Cost}
		ceiling := math.Inf(1)
		if c.Ceiling != nil {
			ceiling = *c.Ceiling
		}
		a, err := Allocate(context.Background(), cost, AllocOptions{Limits: c.Limits, Ceiling: ceiling})
		if c.Optimum == nil {
			var ie *InfeasibleError
			if !errors.As(err, &ie) {
				t.Errorf("case %d (%dx%d): scipy finds no assignment; got %v", i, c.Sires, c.Dams, err)
			}
			continue
		}
		feasible++
		if err != nil {
			t.Fatalf("case %d (%dx%d): %v; scipy optimum %v", i, c.Sires, c.Dams, err, *c.Optimum)
		}
		if math.Abs(a.Total-*c.Optimum) > 1e-9 {
			t.Errorf("case %d (%dx%d): total %.15g, scipy %.15g", i, c.Sires, c.Dams, a.Total, *c.Optimum)
		}
		checkPlan(t, cost, c.Limits, ceiling, a)
	}
	if feasible < 10 {
		t.Fatalf("only %d feasible cases in the fixture", feasible)
	}
}
