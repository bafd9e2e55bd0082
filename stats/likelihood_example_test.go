package stats_test

import (
	"fmt"

	"fgauge/stats"
)

// A site of four invented goats with phred likelihoods (0/0, 0/1, 1/1):
// a sure reference homozygote, two sure heterozygotes and a sure alternate
// homozygote, so the frequency is (0+1+1+2)/8.
func ExampleSiteFreqEM() {
	pl := []uint16{
		0, 60, 600, // 0/0
		60, 0, 60, // 0/1
		60, 0, 60, // 0/1
		600, 60, 0, // 1/1
	}
	var em stats.SiteFreqEM
	f := em.Estimate(pl)
	fmt.Printf("alt freq %.4f from %d samples, converged %v\n", f.AltFreq, f.Samples, f.Converged)
	// Output: alt freq 0.5000 from 4 samples, converged true
}

// One goat over four sites at alternate-allele frequency 1/2: one sure
// heterozygote and three sure reference homozygotes. Its likelihood is
// (1-F) (1+F)^3 up to a constant, maximal at F = 1/2. In a scan, each
// worker keeps one summary per sample and the shard states are merged
// with Merge before Estimate.
func ExampleFLikSummary() {
	var site stats.FLikSite
	var goat stats.FLikSummary
	calls := [][3]uint16{{5000, 0, 5000}, {0, 5000, 5000}, {0, 5000, 5000}, {0, 5000, 5000}}
	for _, pl := range calls {
		site.Set(0.5) // per site: the frequency used (EM, panel, INFO or population)
		goat.Add(&site, pl[0], pl[1], pl[2])
	}
	est := goat.Estimate()
	fmt.Printf("f_lik %.4f (SE %.3f) from %d sites\n", est.F, est.SE, est.Sites)
	// Output: f_lik 0.5000 (SE 0.433) from 4 sites
}

// Mean depth from FORMAT DP, and the low-depth decision.
func ExampleDepthAcc() {
	var d stats.DepthAcc
	for _, dp := range []int{2, 0, 3, 5, -1} { // -1: DP missing
		d.AddDP(dp)
	}
	mean, src := d.Mean()
	fmt.Printf("mean depth %.2f from %v, low: %v, heterozygotes read as homozygous: %.2f\n",
		mean, src, stats.LowDepth(mean), stats.HetOneAlleleRate(mean))
	// Output: mean depth 2.50 from dp, low: true, heterozygotes read as homozygous: 0.45
}

// How a scan uses LikAcc: one per worker, AddRecord per record that
// carries likelihoods, Merge of the workers' (or shards') states, then
// per sample Estimate and Mean after the pass.
func ExampleLikAcc() {
	// Two invented goats, four records; PL per goat: 0/0, 0/1, 1/1.
	records := [][]uint16{
		{5000, 0, 5000, 0, 5000, 5000},
		{0, 5000, 5000, 5000, 0, 5000},
		{0, 5000, 5000, 0, 5000, 5000},
		{0, 5000, 5000, 5000, 0, 5000},
	}
	workers := []*stats.LikAcc{stats.NewLikAcc(2), stats.NewLikAcc(2)}
	for i, pl := range records {
		fr := workers[i%2].AddRecord(pl, nil, nil) // frequencies by EM
		fmt.Printf("record %d: alt freq %.2f\n", i, fr.AltFreq)
	}
	total := stats.NewLikAcc(2)
	for _, w := range workers {
		if err := total.Merge(w); err != nil {
			panic(err)
		}
	}
	for i := range total.FLik {
		e := total.FLik[i].Estimate()
		fmt.Printf("goat %d: f_lik %.3f from %d sites\n", i, e.F, e.Sites)
	}
	// Output:
	// record 0: alt freq 0.25
	// record 1: alt freq 0.25
	// record 2: alt freq 0.00
	// record 3: alt freq 0.25
	// goat 0: f_lik 0.000 from 3 sites
	// goat 1: f_lik 0.000 from 3 sites
}
