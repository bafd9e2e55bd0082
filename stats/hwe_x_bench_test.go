package stats

import (
	"fmt"
	"syscall"
	"testing"
)

// processCPU is the CPU time (user + system) of the process so far, less
// sensitive than wall time to other programs sharing the machine.
func processCPU() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}

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
			c0, k := processCPU(), 0
			for b.Loop() {
				HWEExactX(fAA, fAB, fBB, mA, nM-mA)
				k++
			}
			b.ReportMetric((processCPU()-c0)*1e9/float64(k), "cpu_ns/op")
		})
		// Males coded as diploid homozygotes and counted as females: a
		// large heterozygote deficit, and males at a different frequency.
		b.Run(fmt.Sprintf("deviant_n%d", n), func(b *testing.B) {
			c0, k := processCPU(), 0
			for b.Loop() {
				HWEExactX(fAA+fAA/2, fAB/2, fBB+fAB/2-fAA/2, mA+nM/10, nM-mA-nM/10)
				k++
			}
			b.ReportMetric((processCPU()-c0)*1e9/float64(k), "cpu_ns/op")
		})
	}
}
