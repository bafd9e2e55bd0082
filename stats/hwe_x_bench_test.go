package stats

import (
	"fmt"
	"testing"
)

// BenchmarkHWEExactX times the X test on sites at equilibrium (p = 0.3)
// and on a strongly deviating site, for cohorts of 10^3 to 10^5 samples
// (half female, half male).
func BenchmarkHWEExactX(b *testing.B) {
	for _, n := range []int64{1000, 10000, 100000} {
		nF, nM := n/2, n/2
		p := 0.3
		fAA := int64(float64(nF) * p * p)
		fAB := int64(float64(nF) * 2 * p * (1 - p))
		fBB := nF - fAA - fAB
		mA := int64(float64(nM) * p)
		b.Run(fmt.Sprintf("equilibrium_n%d", n), func(b *testing.B) {
			for b.Loop() {
				HWEExactX(fAA, fAB, fBB, mA, nM-mA)
			}
		})
		// Males coded as diploid homozygotes and counted as females: a
		// large heterozygote deficit, and males at a different frequency.
		b.Run(fmt.Sprintf("deviant_n%d", n), func(b *testing.B) {
			for b.Loop() {
				HWEExactX(fAA+fAA/2, fAB/2, fBB+fAB/2-fAA/2, mA+nM/10, nM-mA-nM/10)
			}
		})
	}
}
