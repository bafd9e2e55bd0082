package sexcheck

import (
	"math/rand/v2"
	"testing"

	"fgauge/vcfscan"
)

// A simulated cohort whose truth we control (no outside data): X sites
// with a realistic frequency spectrum (60% rare, MAF 0.002-0.05; the rest
// common, 0.05-0.5), females with X inbreeding up to 0.3, males coded
// half haploid ("0"/"1") and half diploid ("0/0"/"1/1"), per-sample
// genotype error 0.1-1%, 2% missing calls, Y sites called in Y carriers,
// a few XXY-like samples (two X plus Y), and planted label swaps.
type simCohort struct {
	truth   []Sex
	xxy     []bool
	given   []Sex
	swapped []bool
	x       [][]vcfscan.Geno // per site, per sample
	y       [][]vcfscan.Geno
}

type simConfig struct {
	males, females, xxy, swaps int
	xSites, ySites             int
	femaleYRate                float64 // Y call rate of samples without Y
	seed                       uint64
}

func simulate(cfg simConfig) *simCohort {
	rng := rand.New(rand.NewPCG(cfg.seed, 17))
	n := cfg.males + cfg.females + cfg.xxy
	c := &simCohort{truth: make([]Sex, n), xxy: make([]bool, n), given: make([]Sex, n), swapped: make([]bool, n)}
	haploidCoded := make([]bool, n)
	inbr := make([]float64, n)
	errRate := make([]float64, n)
	for i := range n {
		switch {
		case i < cfg.males:
			c.truth[i] = Male
			haploidCoded[i] = i%2 == 0
		case i < cfg.males+cfg.females:
			c.truth[i] = Female
			inbr[i] = 0.3 * rng.Float64()
		default:
			c.xxy[i] = true // unknown truth: fits neither
			c.truth[i] = Unknown
		}
		errRate[i] = 0.001 + 0.009*rng.Float64()
		c.given[i] = c.truth[i]
		if c.xxy[i] {
			c.given[i] = Male
		}
	}
	// Planted swaps among normal samples, spread over both sexes.
	for k := 0; k < cfg.swaps; k++ {
		i := (k * 97) % (cfg.males + cfg.females)
		c.swapped[i] = true
		if c.given[i] == Male {
			c.given[i] = Female
		} else {
			c.given[i] = Male
		}
	}
	dip := func(a, b bool) vcfscan.Geno {
		g := vcfscan.HomRef
		if a != b {
			g = vcfscan.Heterozygous
		} else if a {
			g = vcfscan.HomAlt
		}
		return g
	}
	for range cfg.xSites {
		p := 0.05 + 0.45*rng.Float64()
		if rng.Float64() < 0.6 {
			p = 0.002 + 0.048*rng.Float64()
		}
		if rng.Float64() < 0.5 {
			p = 1 - p
		}
		row := make([]vcfscan.Geno, n)
		for i := range n {
			a := rng.Float64() < p
			var g vcfscan.Geno
			switch {
			case c.truth[i] == Male:
				g = dip(a, a)
				if haploidCoded[i] {
					g = vcfscan.HaploidRef
					if a {
						g = vcfscan.HaploidAlt
					}
				}
			case rng.Float64() < inbr[i]:
				g = dip(a, a)
			default:
				g = dip(a, rng.Float64() < p)
			}
			if rng.Float64() < errRate[i] {
				if g >= vcfscan.HaploidRef {
					if rng.Float64() < 0.5 {
						g = vcfscan.Heterozygous
					} else {
						g = vcfscan.HaploidRef + vcfscan.HaploidAlt - g
					}
				} else {
					g = (g + 1 + vcfscan.Geno(rng.IntN(2))) % 3
				}
			}
			if rng.Float64() < 0.02 {
				g = vcfscan.Missing
			}
			row[i] = g
		}
		c.x = append(c.x, row)
	}
	for range cfg.ySites {
		row := make([]vcfscan.Geno, n)
		for i := range n {
			rate := cfg.femaleYRate
			if c.truth[i] == Male || c.xxy[i] {
				rate = 0.97
			}
			row[i] = vcfscan.Missing
			if rng.Float64() < rate {
				row[i] = vcfscan.HaploidRef
			}
		}
		c.y = append(c.y, row)
	}
	return c
}

// accumulate runs the worker's per-site steps over sites [lo, hi) of X
// and Y.
func (c *simCohort) accumulate(lo, hi int) ([]Acc, Sites) {
	accs := make([]Acc, len(c.truth))
	var s Sites
	for k := lo; k < hi && k < len(c.x); k++ {
		var cnt [6]int64
		for _, g := range c.x[k] {
			cnt[g]++
		}
		site := NewXSite(&cnt, 0)
		s.X++
		if site.Informative {
			s.XInformative++
		}
		for i, g := range c.x[k] {
			accs[i].AddX(&site, g)
		}
	}
	for k := lo; k < hi && k < len(c.y); k++ {
		s.Y++
		for i, g := range c.y[k] {
			accs[i].AddY(g)
		}
	}
	return accs, s
}

func TestSimulatedCohort(t *testing.T) {
	for _, tc := range []struct {
		name        string
		femaleYRate float64
		wantY       bool
	}{
		{"y_missing_in_females", 0.02, true},
		{"y_called_in_everyone", 0.95, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := simulate(simConfig{males: 400, females: 392, xxy: 8, swaps: 6, xSites: 3000, ySites: 40, femaleYRate: tc.femaleYRate, seed: 11})
			accs, sites := c.accumulate(0, 1<<30)
			calls, use := DecideAll(accs, sites, DefaultThresholds())
			if use.Used != tc.wantY {
				t.Fatalf("Y used = %v (%s), want %v", use.Used, use.Reason, tc.wantY)
			}
			normal, right, swapsFlagged, falseFlags, neither := 0, 0, 0, 0, 0
			for i, cl := range calls {
				mism := Mismatch(c.given[i], cl.Sex)
				if c.xxy[i] {
					if cl.Neither {
						neither++
					}
					continue
				}
				normal++
				if cl.Sex == c.truth[i] {
					right++
				}
				if c.swapped[i] && mism {
					swapsFlagged++
				}
				if !c.swapped[i] && mism || cl.Neither {
					falseFlags++
					t.Errorf("sample %d (%v): false flag %+v", i, c.truth[i], cl)
				}
			}
			if swapsFlagged != 6 {
				t.Errorf("%d of 6 planted swaps flagged", swapsFlagged)
			}
			if float64(right) < 0.99*float64(normal) {
				t.Errorf("%d of %d inferred correctly, want >= 99%%", right, normal)
			}
			if tc.wantY && neither != 8 {
				t.Errorf("%d of 8 XXY-like samples flagged as fitting neither sex", neither)
			}
			if !tc.wantY && neither != 0 {
				t.Errorf("%d samples flagged neither without usable Y", neither)
			}
			t.Logf("%d/%d inferred correctly, %d/6 swaps flagged, %d false flags, %d/8 XXY flagged; %s", right, normal, swapsFlagged, falseFlags, neither, use.Reason)
		})
	}
}

// TestMergeExact: accumulators of two shards of the sites merge to the
// whole's, field for field.
func TestMergeExact(t *testing.T) {
	c := simulate(simConfig{males: 30, females: 30, xSites: 500, ySites: 20, femaleYRate: 0.02, seed: 3})
	whole, ws := c.accumulate(0, 1<<30)
	a, as := c.accumulate(0, 173)
	b, bs := c.accumulate(173, 1<<30)
	for i := range a {
		b[i].Merge(&a[i]) // other order than the split
		if b[i] != whole[i] {
			t.Fatalf("sample %d: merged %+v, whole %+v", i, b[i], whole[i])
		}
	}
	bs.Merge(&as)
	if bs != ws {
		t.Fatalf("sites: merged %+v, whole %+v", bs, ws)
	}
}

// TestDecideTable: hand-made accumulators at the edges of the rules.
func TestDecideTable(t *testing.T) {
	th := DefaultThresholds()
	fx := func(e, het float64, calls int64) Acc {
		// calls informative calls at 2pq = e/calls each
		h := e / float64(calls)
		return Acc{XCalled: calls, InfCalls: calls, InfHet: int64(het), ExpHet: int64(e * fixScale), VarHet: int64(float64(calls) * h * (1 - h) * fixScale)}
	}
	sites := Sites{X: 1000, XInformative: 1000, Y: 20}
	for _, tc := range []struct {
		name    string
		a       Acc
		useY    bool
		y       int64
		want    Sex
		neither bool
		reason  string
	}{
		{"male", fx(300, 3, 1000), false, 0, Male, false, ReasonXHemizygous},
		{"female", fx(300, 290, 1000), false, 0, Female, false, ReasonXDiploid},
		{"inbred female F=0.45", fx(300, 165, 1000), false, 0, Female, false, ReasonXDiploid},
		{"ambiguous F=0.7", fx(300, 90, 1000), false, 0, Unknown, false, ReasonAmbiguous},
		{"intermediate with Y", fx(300, 90, 1000), true, 20, Unknown, true, ReasonIntermediate},
		{"too few", fx(40, 0, 150), false, 0, Unknown, false, ReasonTooFewX},
		{"too few, Y present", fx(40, 0, 150), true, 20, Male, false, ReasonYOnly},
		{"too few, Y absent", fx(40, 40, 150), true, 0, Female, false, ReasonYOnly},
		{"het excess", fx(300, 450, 1000), false, 0, Unknown, true, ReasonHetExcess},
		{"female with Y", fx(300, 290, 1000), true, 19, Unknown, true, ReasonDiploidWithY},
		{"male without Y", fx(300, 3, 1000), true, 1, Unknown, true, ReasonHemizygousNoY},
		{"male, Y not used", fx(300, 3, 1000), false, 0, Male, false, ReasonXHemizygous},
	} {
		tc.a.YCalled = tc.y
		got := Decide(&tc.a, &sites, th, tc.useY)
		if got.Sex != tc.want || got.Neither != tc.neither || got.Reason != tc.reason {
			t.Errorf("%s: %+v, want %v neither=%v %s", tc.name, got, tc.want, tc.neither, tc.reason)
		}
	}
}
