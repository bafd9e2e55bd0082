package roh

import (
	"math"
	"testing"

	"fgauge/roh/simulate"
	"fgauge/vcfscan"
)

// ageChrom is one chromosome of test data in the detector's own form
// (chromData with cm and emission tables prepared by the Collector's
// prepare), so that the age model and the detector read the same input.
type ageChrom struct {
	name string
	ch   *chromData
}

// ageChroms packs batches (in input order; freqs nil means cohort
// estimates, as the Collector does) into prepared chromosomes.
func ageChroms(t *testing.T, cfg *Config, contigs []vcfscan.Contig, bs []*vcfscan.Batch, freqs [][]float64) []ageChrom {
	t.Helper()
	c := *cfg
	if err := c.Validate(); err != nil {
		t.Fatal(err)
	}
	col := &Collector{cfg: c}
	var out []ageChrom
	var cur *chromData
	for bi, b := range bs {
		ns := b.NSamples
		for i := range b.Records {
			rec := &b.Records[i]
			if cur == nil || cur.id != rec.ChromID {
				cur = newChromData(rec.ChromID, contigs[rec.ChromID].Name, contigs[rec.ChromID].Length, ns)
				out = append(out, ageChrom{cur.name, cur})
			}
			calls := b.GT[i*ns : (i+1)*ns]
			p := math.NaN()
			if freqs != nil {
				p = freqs[bi][i]
			}
			if p != p {
				p = cohortFreq(calls)
			}
			var pl []uint16
			if len(b.PL) > 0 && b.HasPL[i] {
				pl = b.PL[3*i*ns : 3*(i+1)*ns]
			}
			cur.appendSite(rec.Pos, p, calls, pl)
		}
	}
	for _, a := range out {
		col.prepare(a.ch, &chromWork{})
	}
	return out
}

// oneClassConfig is the age model that should be the two-state detector:
// one autozygous class, both rates equal to cfg.Rate, mixing (f, 1-f)
// with f = cfg.AutozygousPrior, no fitting.
func oneClassConfig(cfg *Config) *AgeConfig {
	a := &AgeConfig{Rates: []float64{cfg.Rate}, NonAutozygousRate: cfg.Rate, GenotypeError: cfg.GenotypeError,
		Start: []float64{cfg.AutozygousPrior}, MaxGapBP: int64(cfg.MaxGapKB * 1000)}
	if err := a.Validate(); err != nil {
		panic(err)
	}
	return a
}

// compareOneClass runs the one-class age model (Viterbi path, posterior)
// on every sample and chromosome and compares its runs, built by the
// detector's own hmmRuns, with the detector's runs: the same segments and
// the same mean posteriors (to 1e-9). shareEmit passes the detector's
// emission table to NewAgeTables instead of recomputing it.
func compareOneClass(t *testing.T, cfg *Config, res *Result, chroms []ageChrom, shareEmit bool) int {
	t.Helper()
	acfg := oneClassConfig(cfg)
	rho := acfg.StartMixing()
	if math.Abs(rho[0]-cfg.AutozygousPrior) > 1e-15 {
		t.Fatalf("mixing %v, want (%g, %g)", rho, cfg.AutozygousPrior, 1-cfg.AutozygousPrior)
	}
	var w AgeWorker
	var sc hmmScratch
	compared := 0
	for ci, a := range chroms {
		ch := a.ch
		var emit []float32
		if shareEmit {
			emit = ch.emit
		}
		tab := NewAgeTables(acfg, ch.pos, ch.cm, ch.freq, emit)
		got := map[int][]Run{}
		for s := range ch.geno {
			sc.code = grow(sc.code, len(ch.pos))
			ch.unpack(s, sc.code)
			if ch.pl != nil {
				sc.fillEmissions(ch, s)
				w.LoadEmissions(sc.em[:2*len(ch.pos)])
			} else {
				w.LoadCodes(tab, sc.code)
			}
			w.Posteriors(tab, rho)
			path := w.Viterbi(tab, rho)
			post := make([]float64, len(path))
			for i := range post {
				post[i] = w.Posterior(i, 0)
			}
			got[s] = hmmRuns(ch, s, sc.code, path, post, int64(cfg.MaxGapKB*1000))
		}
		want := map[int][]Run{}
		for _, r := range res.Chroms[ci].Runs {
			want[r.Sample] = append(want[r.Sample], r)
		}
		for s := range ch.geno {
			g, wn := got[s], want[s]
			if len(g) != len(wn) {
				t.Errorf("%s sample %d: %d runs, detector %d", a.name, s, len(g), len(wn))
				continue
			}
			for i := range g {
				x, y := g[i], wn[i]
				if x.Start != y.Start || x.End != y.End || x.NSites != y.NSites || x.NHet != y.NHet || x.NMissing != y.NMissing ||
					math.Abs(x.Quality-y.Quality) > 1e-9 {
					t.Errorf("%s sample %d run %d: age model %+v, detector %+v", a.name, s, i, x, y)
				}
				compared++
			}
		}
	}
	return compared
}

// With one autozygous class the age model is the two-state detector:
// same runs (Viterbi segments) and same mean posteriors on the real chr22
// fixture (1000 Genomes, testdata/SOURCES.md, 1000 Genomes AF as
// frequency) and on a simulated cohort from roh/simulate at array
// density, with genotype calls and with phred likelihoods.
func TestAgesOneClassMatchesHMM(t *testing.T) {
	t.Run("chr22_1000g", func(t *testing.T) {
		samples, sites := readTinyVCF(t, "../testdata/chr22_1000g.vcf.gz")
		contigs := []vcfscan.Contig{{Name: "22"}}
		cfg := DefaultConfig()
		cfg.MaxGapKB = 20
		res := collect(t, cfg, samples, contigs, sites)
		bs, fs := batches(sites, len(samples), 333)
		chroms := ageChroms(t, cfg, contigs, bs, fs)
		n := compareOneClass(t, cfg, res, chroms, false)
		if n < 5 {
			t.Errorf("only %d runs compared", n)
		}
		t.Logf("chr22: %d runs identical", n)
	})
	for _, depth := range []float64{0, 4} {
		name := "simulated_gt"
		if depth > 0 {
			name = "simulated_pl"
		}
		t.Run(name, func(t *testing.T) {
			var ds []simulate.Design
			for _, s := range []string{"full_sib", "first_cousin", "half_sib"} {
				d, err := simulate.ParseDesign(s)
				if err != nil {
					t.Fatal(err)
				}
				ds = append(ds, d)
			}
			sim, err := simulate.Run(simulate.Config{
				Seed:          5,
				Chromosomes:   []simulate.Chromosome{{Name: "1", LengthBP: 60_000_000, LengthCM: 70}, {Name: "2", LengthBP: 40_000_000, LengthCM: 40}},
				SiteSpacing:   20_000,
				Designs:       ds,
				Replicates:    3,
				GenotypeError: 0.001,
				MissingRate:   0.005,
				Depth:         depth,
			})
			if err != nil {
				t.Fatal(err)
			}
			names, contigs, bs := simBatches(t, sim)
			cfg := DefaultConfig()
			res := detectSim(t, cfg, names, contigs, bs)
			chroms := ageChroms(t, cfg, contigs, bs, nil)
			n := compareOneClass(t, cfg, res, chroms, true)
			if n < 10 {
				t.Errorf("only %d runs compared", n)
			}
			t.Logf("%s: %d runs identical", name, n)
		})
	}
}
