package roh

import (
	"math/rand/v2"
	"testing"

	"fgauge/vcfscan"
)

// ageBenchData is nSamples x nSites of genotype codes on one chromosome
// (one site per 5 kb at 1 cM/Mb, uniform frequencies in [0.05, 0.95],
// Hardy-Weinberg calls with one planted homozygous stretch of 300 sites
// per 2,000 per sample), the same shape as benchBatches.
func ageBenchData(nSamples, nSites int) (pos []int64, cm, freq []float64, codes [][]uint8) {
	rng := rand.New(rand.NewPCG(1, 1))
	pos = make([]int64, nSites)
	cm = make([]float64, nSites)
	freq = make([]float64, nSites)
	for i := range pos {
		pos[i] = int64(i+1) * 5000
		cm[i] = float64(pos[i]) / 1e6
		freq[i] = 0.05 + 0.9*rng.Float64()
	}
	codes = make([][]uint8, nSamples)
	for s := range codes {
		c := make([]uint8, nSites)
		for i := range c {
			g := uint8(hwe(rng, freq[i]))
			if (i+s*37)%2000 < 300 {
				g = uint8(2 * rng.IntN(2))
			}
			c[i] = g
		}
		codes[s] = c
	}
	return
}

// BenchmarkAgesFit measures the age model with the default 8+1 classes at
// 1,000 samples on a 5,000-site chromosome: building the shared tables
// once, then per sample the emission lookup and the EM fit (default at
// most 20 rounds). It reports CPU ns per genotype in total and per
// forward-backward round, and the mean rounds per sample.
func BenchmarkAgesFit(b *testing.B) {
	const ns, nsites = 1000, 5000
	pos, cm, freq, codes := ageBenchData(ns, nsites)
	cfg := DefaultAgeConfig()
	if err := cfg.Validate(); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	var cpu float64
	rounds := 0
	for it := 0; it < b.N; it++ {
		c0 := cpuSeconds()
		tab := NewAgeTables(cfg, pos, cm, freq, nil)
		var w AgeWorker
		for s := 0; s < ns; s++ {
			w.LoadCodes(tab, codes[s])
			f := w.Fit(tab, cfg)
			rounds += f.Rounds
		}
		cpu += cpuSeconds() - c0
	}
	g := float64(b.N) * ns * nsites
	b.ReportMetric(cpu*1e9/g, "cpu-ns/genotype")
	b.ReportMetric(cpu*1e9/(float64(nsites)*float64(rounds)), "cpu-ns/genotype-round")
	b.ReportMetric(float64(rounds)/float64(b.N*ns), "rounds/sample")
}

// benchTwoStateChrom packs the benchmark data as the detector holds it
// (chromData, tables prepared with the default configuration).
func benchTwoStateChrom(pos []int64, freq []float64, codes [][]uint8) *chromData {
	ns := len(codes)
	ch := newChromData(0, "1", 0, ns)
	calls := make([]vcfscan.Geno, ns)
	for i := range pos {
		for s := range codes {
			calls[s] = vcfscan.Geno(codes[s][i])
		}
		ch.appendSite(pos[i], freq[i], calls, nil)
	}
	cfg := DefaultConfig()
	cfg.Validate()
	(&Collector{cfg: *cfg}).prepare(ch)
	return ch
}

// BenchmarkAgesPass measures one forward-backward pass (fixed mixing, no
// EM) of the 8+1-class model at 1,000 samples on a 5,000-site
// chromosome, against the two-state detector's one-lane passes
// (forwardViterbi and backward) on the same data in the same run: the
// floor of any design that decodes every site once, and its ratio.
func BenchmarkAgesPass(b *testing.B) {
	const ns, nsites = 1000, 5000
	pos, cm, freq, codes := ageBenchData(ns, nsites)
	cfg := DefaultAgeConfig()
	if err := cfg.Validate(); err != nil {
		b.Fatal(err)
	}
	rho := cfg.StartMixing()
	tab := NewAgeTables(cfg, pos, cm, freq, nil)
	ch := benchTwoStateChrom(pos, freq, codes)
	dcfg := DefaultConfig()
	b.ResetTimer()
	var cpu, ref float64
	for it := 0; it < b.N; it++ {
		c0 := cpuSeconds()
		var sc hmmScratch
		for s := 0; s < ns; s++ {
			sc.code = grow(sc.code, nsites)
			copy(sc.code, codes[s])
			sc.forwardViterbi(ch, ch.trans, dcfg.AutozygousPrior, true)
			sc.backward(ch.trans, dcfg.AutozygousPrior, nil, nil, sc.path)
		}
		c1 := cpuSeconds()
		var w AgeWorker
		for s := 0; s < ns; s++ {
			w.LoadCodes(tab, codes[s])
			w.Posteriors(tab, rho)
		}
		c2 := cpuSeconds()
		ref += c1 - c0
		cpu += c2 - c1
	}
	g := float64(b.N) * ns * nsites
	b.ReportMetric(cpu*1e9/g, "cpu-ns/genotype")
	b.ReportMetric(ref*1e9/g, "two-state-cpu-ns/genotype")
	b.ReportMetric(cpu/ref, "ratio")
}

// BenchmarkAgesFitWindows measures the default fit restricted to windows
// around each sample's planted stretch (300 of every 2,000 sites, as a
// two-state run would find it) widened by 1 cM (200 sites) on each side,
// at 1,000 samples on a 5,000-site chromosome, with the two-state
// detector's one-lane passes on the same data in the same run. Costs are
// per genotype of the whole chromosome.
func BenchmarkAgesFitWindows(b *testing.B) {
	const ns, nsites = 1000, 5000
	pos, cm, freq, codes := ageBenchData(ns, nsites)
	cfg := DefaultAgeConfig()
	if err := cfg.Validate(); err != nil {
		b.Fatal(err)
	}
	wins := make([][][2]int, ns)
	inWin := 0
	for s := range wins {
		var ranges [][2]int
		for i := 0; i < nsites; i++ {
			if (i+s*37)%2000 == 0 || (i == 0 && (s*37)%2000 < 300) {
				j := i
				for j+1 < nsites && (j+1+s*37)%2000 < 300 {
					j++
				}
				ranges = append(ranges, [2]int{i, j})
				i = j
			}
		}
		wins[s] = AgeWindows(cm, ranges, 1)
		for _, x := range wins[s] {
			inWin += x[1] - x[0]
		}
	}
	tab := NewAgeTables(cfg, pos, cm, freq, nil)
	ch := benchTwoStateChrom(pos, freq, codes)
	dcfg := DefaultConfig()
	b.ResetTimer()
	var cpu, ref float64
	rounds := 0
	for it := 0; it < b.N; it++ {
		c0 := cpuSeconds()
		var sc hmmScratch
		for s := 0; s < ns; s++ {
			sc.code = grow(sc.code, nsites)
			copy(sc.code, codes[s])
			sc.forwardViterbi(ch, ch.trans, dcfg.AutozygousPrior, true)
			sc.backward(ch.trans, dcfg.AutozygousPrior, nil, nil, sc.path)
		}
		c1 := cpuSeconds()
		var w AgeWorker
		for s := 0; s < ns; s++ {
			w.LoadCodes(tab, codes[s])
			rounds += w.FitWindows(tab, cfg, wins[s]).Rounds
		}
		c2 := cpuSeconds()
		ref += c1 - c0
		cpu += c2 - c1
	}
	g := float64(b.N) * ns * nsites
	b.ReportMetric(cpu*1e9/g, "cpu-ns/genotype")
	b.ReportMetric(ref*1e9/g, "two-state-cpu-ns/genotype")
	b.ReportMetric(cpu/ref, "ratio")
	b.ReportMetric(float64(inWin)/(ns*nsites), "window-share")
	b.ReportMetric(float64(rounds)/float64(b.N*ns), "rounds/sample")
}
