package stats

import (
	"math"
	"testing"

	"fgauge/vcfscan"
)

// TestHetRateBandAndFlags: eight samples with 2, 4, 4, 4, 5, 5, 7 and 9
// heterozygous calls out of 10 have het_rate mean 0.5 and sample SD
// sqrt(32/7)/10 (common practice: n-1 denominator; the textbook set
// {2,4,4,4,5,5,7,9} has mean 5 and sum of squares 32). A ninth sample
// without calls has no het_rate, is left out of the band and flagged
// no_calls. No sample lies 3 SD out; the flags column and SampleFlags
// agree.
func TestHetRateBandAndFlags(t *testing.T) {
	hets := []int{2, 4, 4, 4, 5, 5, 7, 9}
	names := []string{"a", "b", "c", "d", "e", "f", "g", "h", "none"}
	calls := make([][]vcfscan.Geno, 10)
	for s := range calls {
		calls[s] = make([]vcfscan.Geno, len(names))
		for i, k := range hets {
			if s < k {
				calls[s][i] = vcfscan.Heterozygous
			}
		}
		calls[s][8] = vcfscan.Missing
	}
	tot, _ := runCalls(t, &Config{Samples: names, MinCallRate: 0.9}, calls, nil)
	b := tot.HetRateBand()
	sd := math.Sqrt(32.0/7) / 10
	if b.Samples != 8 || math.Abs(float64(b.Mean)-0.5) > 1e-15 || math.Abs(float64(b.SD)-sd) > 1e-15 ||
		math.Abs(float64(b.Low)-(0.5-3*sd)) > 1e-15 || math.Abs(float64(b.High)-(0.5+3*sd)) > 1e-15 || b.SDs != 3 {
		t.Errorf("band %+v, want mean 0.5 sd %v", b, sd)
	}
	flags := tot.SampleFlags()
	header, rows := tot.SampleTable()
	col := len(header) - 1
	for i, f := range flags {
		if rows[i][col] != f.String() {
			t.Errorf("%s: flags column %q, SampleFlags %q", names[i], rows[i][col], f)
		}
		if f.Has(FlagHetRateOutlier) {
			t.Errorf("%s flagged het_rate_outlier", names[i])
		}
	}
	if flags[8] != FlagNoCalls || flags[8].String() != "no_calls" {
		t.Errorf("sample without calls: %v", flags[8])
	}
	if got := (FlagLowCallRate | FlagEstimatorsDisagree).String(); got != "low_call_rate,estimators_disagree" {
		t.Errorf("String = %q", got)
	}
	// Fewer than three samples with a het_rate: no band, no outlier.
	tot2, _ := runCalls(t, &Config{Samples: names[:2], MinCallRate: 0.9}, [][]vcfscan.Geno{{1, 0}, {0, 0}}, nil)
	if b := tot2.HetRateBand(); b.Samples != 2 || !math.IsNaN(float64(b.SD)) {
		t.Errorf("two samples: band %+v", b)
	}
}
