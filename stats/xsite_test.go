package stats

import (
	"math"
	"math/rand/v2"
	"testing"

	"fgauge/stats/sexcheck"
	"fgauge/vcfscan"
)

func TestXTallyAdd(t *testing.T) {
	M, F, U := sexcheck.Male, sexcheck.Female, sexcheck.Unknown
	var x XTally
	sexes := []sexcheck.Sex{M, M, M, M, M, M, F, F, F, F, F, U, U}
	calls := []vcfscan.Geno{vcfscan.HomRef, vcfscan.HaploidRef, vcfscan.HomAlt, vcfscan.HaploidAlt, vcfscan.Heterozygous, vcfscan.Missing,
		vcfscan.HomRef, vcfscan.Heterozygous, vcfscan.HomAlt, vcfscan.HaploidAlt, vcfscan.Missing, vcfscan.Heterozygous, vcfscan.Missing}
	maleHet := make([]int64, len(sexes))
	x.AddCalls(sexes, calls, maleHet)
	want := XTally{Female: [3]int64{1, 1, 1}, FemaleHaploid: 1, MaleRef: 2, MaleAlt: 2, MaleHet: 1, UnknownSex: 1}
	if x != want {
		t.Fatalf("%+v, want %+v", x, want)
	}
	if maleHet[4] != 1 || maleHet[0]+maleHet[7]+maleHet[11] != 0 {
		t.Fatalf("per-sample male het %v", maleHet)
	}
	r := x.Row(NewXHWECache(4))
	// 1 1 1 females, 2 2 males: alt = (1 + 2 + 2) / (6 + 4)
	if r.AltFreq != 0.5 || !r.Equilibrium.Computed || r.MaleHet != 1 {
		t.Fatalf("%+v", r)
	}
	if a, b := r.Equilibrium, HWEExactX(1, 1, 1, 2, 2); a.P != b.P || a.MidP != b.MidP || a.Deficit != b.Deficit || a.Excess != b.Excess {
		t.Fatalf("cached %+v, direct %+v", a, b)
	}
	x.Reset()
	if x != (XTally{}) {
		t.Fatal("reset")
	}
}

// TestXTestMixedSexCohort reproduces the defect of issue 17 on a
// simulated cohort whose truth we control: 150 females and 150 males
// (coded diploid homozygous) at 2,000 X sites in Hardy-Weinberg and with
// equal allele frequencies in the sexes (MAF 0.05-0.5). The autosomal test
// of all calls rejects most sites (a "heterozygote deficit"); the X test
// rejects at about its nominal level (exact tests are conservative, so at
// most 5% plus sampling slack at 0.05).
func TestXTestMixedSexCohort(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 7))
	const nF, nM, sites = 150, 150, 2000
	sexes := make([]sexcheck.Sex, nF+nM)
	for i := range sexes {
		sexes[i] = sexcheck.Female
		if i >= nF {
			sexes[i] = sexcheck.Male
		}
	}
	calls := make([]vcfscan.Geno, nF+nM)
	autoReject, xReject := 0, 0
	cache := NewXHWECache(0)
	var x XTally
	for range sites {
		p := 0.05 + 0.45*rng.Float64()
		var cnt [3]int64
		for i := range calls {
			a := rng.Float64() < p
			g := vcfscan.HomRef
			if i < nF {
				if a {
					g++
				}
				if rng.Float64() < p {
					g++
				}
			} else if a {
				g = vcfscan.HomAlt
			}
			calls[i] = g
			cnt[g]++
		}
		if HWEExact(cnt[0], cnt[1], cnt[2]).P < 0.05 {
			autoReject++
		}
		x.Reset()
		x.AddCalls(sexes, calls, nil)
		if x.MaleHet != 0 || x.MaleRef+x.MaleAlt != nM {
			t.Fatalf("male counts %+v", x)
		}
		if x.Row(cache).Equilibrium.P < 0.05 {
			xReject++
		}
	}
	t.Logf("p < 0.05 at %d/%d sites with the autosomal test, %d/%d with the X test", autoReject, sites, xReject, sites)
	if autoReject < sites/2 {
		t.Errorf("autosomal test rejected only %d sites; the simulation does not show the defect", autoReject)
	}
	if lim := 0.05*sites + 3*math.Sqrt(0.05*0.95*sites); float64(xReject) > lim {
		t.Errorf("X test rejected %d sites, above %.0f", xReject, lim)
	}
}

// BenchmarkXTallyAdd is the per-call step of the X test's tally,
// reported per genotype.
func BenchmarkXTallyAdd(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	const n = 1000
	sexes := make([]sexcheck.Sex, n)
	calls := make([]vcfscan.Geno, n)
	for i := range n {
		sexes[i] = sexcheck.Sex(rng.IntN(3))
		calls[i] = vcfscan.Geno(rng.IntN(6))
	}
	maleHet := make([]int64, n)
	var x XTally
	k := 0
	for b.Loop() {
		x.Reset()
		x.AddCalls(sexes, calls, maleHet)
		k += n
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(k), "ns/genotype")
}
