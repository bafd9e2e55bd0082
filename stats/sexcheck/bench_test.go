package sexcheck

import (
	"testing"

	"fgauge/vcfscan"
)

// BenchmarkAddX is the per-call step of the sex check: one sample's call
// at a non-PAR X site whose terms were computed once for the site.
// Reported per genotype.
func BenchmarkAddX(b *testing.B) {
	c := simulate(simConfig{males: 500, females: 500, xSites: 200, seed: 1})
	sites := make([]XSite, len(c.x))
	for k, row := range c.x {
		var cnt [6]int64
		for _, g := range row {
			cnt[g]++
		}
		sites[k] = NewXSite(&cnt, 0)
	}
	accs := make([]Acc, len(c.truth))
	b.ResetTimer()
	n := 0
	for b.Loop() {
		for k, row := range c.x {
			s := &sites[k]
			for i, g := range row {
				accs[i].AddX(s, g)
			}
		}
		n += len(c.x) * len(c.truth)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(n), "ns/genotype")
}

// BenchmarkNewXSite is the per-site step (cohort counts to site terms).
func BenchmarkNewXSite(b *testing.B) {
	cnt := [6]int64{vcfscan.HomRef: 300, vcfscan.Heterozygous: 150, vcfscan.HomAlt: 40, vcfscan.HaploidRef: 400, vcfscan.HaploidAlt: 100}
	var s XSite
	for b.Loop() {
		s = NewXSite(&cnt, 0)
	}
	_ = s
}
