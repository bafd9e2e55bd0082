package stats

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"fgauge/vcfscan"
)

// TestSiteCacheHaploidKey: two sites with the same diploid counts but
// different haploid calls share every cached value except call_rate, which
// counts haploid calls as calls; the cache must not hand the second site
// the first one's row. Expected values by hand: call_rate = (diploid +
// haploid calls) / samples.
func TestSiteCacheHaploidKey(t *testing.T) {
	calls := [][]vcfscan.Geno{
		{vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.HaploidAlt, vcfscan.HaploidRef},
		{vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.Missing, vcfscan.HaploidRef},
		{vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.Missing, vcfscan.Missing},
		{vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.HaploidAlt, vcfscan.HaploidRef},
	}
	want := []string{"2 1", "1 0.75", "0 0.5", "2 1"} // n_haploid call_rate
	cfg := &Config{Samples: []string{"buck", "doe_1", "doe_2", "doe_3"}, MinCallRate: 0.9}
	w := NewWorker(cfg, func(int) string { return "X" })
	b := &vcfscan.Batch{NSamples: 4}
	for i, c := range calls {
		b.Records = append(b.Records, vcfscan.Record{Pos: int64(i + 1), Ref: []byte("A"), Alt: []byte("C"), InfoValue: math.NaN()})
		b.GT = append(b.GT, c...)
	}
	var sites bytes.Buffer
	w.ProcessBatch(b, &sites, nil, make([]float64, len(calls)))
	lines := strings.Split(strings.TrimSuffix(sites.String(), "\n"), "\n")
	if len(lines) != len(calls) {
		t.Fatalf("%d rows, want %d", len(lines), len(calls))
	}
	for i, l := range lines {
		row := strings.Split(l, "\t")
		if got := row[8] + " " + row[11]; got != want[i] {
			t.Errorf("site %d: n_haploid call_rate %q, want %q (row %v)", i+1, got, want[i], row)
		}
	}
}
