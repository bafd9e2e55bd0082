package sexcheck

import (
	"math"

	"fgauge/vcfscan"
)

// fixScale is the 32.32 fixed-point scale of the expected-heterozygosity
// sums: a per-site term t in [0, 0.5] is stored as round(t * 2^32). An
// int64 holds 2^31 units, more than 4*10^9 sites' terms.
const fixScale = 1 << 32

func toFixed(v float64) int64 { return int64(math.RoundToEven(v * fixScale)) }

// DefaultMinMAF is the smallest cohort minor-allele frequency of an X
// site used for the sex check. Rare sites carry little heterozygosity and
// proportionally more genotype error; common practice restricts the
// heterozygosity check to common variants (Anderson et al. 2010). At 0.05
// every used site has 2pq >= 0.095.
const DefaultMinMAF = 0.05

// XSite is the per-site part of the sex check for one non-PAR X site,
// computed once from the cohort's calls and shared by all samples.
type XSite struct {
	Informative bool  // cohort MAF >= the minimum: the site enters F_X
	ExpHet      int64 // 2pq in 32.32 fixed point
	VarHet      int64 // 2pq(1-2pq) in 32.32 fixed point
}

// NewXSite computes the site terms from the cohort's counts of each
// genotype code at the site (index by vcfscan.Geno). The frequency counts
// every call's alleles as coded (a haploid call one allele, a diploid
// call two), so it needs no sexes; diploid-coded males count their allele
// twice, which does not bias it. minMAF <= 0 means DefaultMinMAF.
func NewXSite(counts *[6]int64, minMAF float64) XSite {
	if minMAF <= 0 {
		minMAF = DefaultMinMAF
	}
	alleles := 2*(counts[vcfscan.HomRef]+counts[vcfscan.Heterozygous]+counts[vcfscan.HomAlt]) +
		counts[vcfscan.HaploidRef] + counts[vcfscan.HaploidAlt]
	alt := counts[vcfscan.Heterozygous] + 2*counts[vcfscan.HomAlt] + counts[vcfscan.HaploidAlt]
	if alleles == 0 {
		return XSite{}
	}
	p := float64(alt) / float64(alleles)
	if math.Min(p, 1-p) < minMAF {
		return XSite{}
	}
	h := 2 * p * (1 - p)
	return XSite{Informative: true, ExpHet: toFixed(h), VarHet: toFixed(h * (1 - h))}
}

// Acc is one sample's sex-check evidence. All fields are integer counts
// or fixed-point sums, so accumulators of any split of the sites add
// exactly (Merge). Fields are exported for encoding/gob.
type Acc struct {
	XCalled  int64 // calls (diploid or haploid) at non-PAR X sites
	XHet     int64 // heterozygous calls at non-PAR X sites (a male's are errors)
	XHaploid int64 // haploid calls at non-PAR X sites
	InfCalls int64 // calls at informative X sites
	InfHet   int64 // heterozygous calls at informative X sites
	ExpHet   int64 // sum of 2pq over InfCalls, 32.32 fixed point
	VarHet   int64 // sum of 2pq(1-2pq) over InfCalls, 32.32 fixed point
	YCalled  int64 // calls at non-PAR Y sites
}

// AddX adds the sample's call g at a non-PAR X site with terms s.
func (a *Acc) AddX(s *XSite, g vcfscan.Geno) {
	if g == vcfscan.Missing {
		return
	}
	a.XCalled++
	het := g == vcfscan.Heterozygous
	if het {
		a.XHet++
	}
	if g >= vcfscan.HaploidRef {
		a.XHaploid++
	}
	if s.Informative {
		a.InfCalls++
		a.ExpHet += s.ExpHet
		a.VarHet += s.VarHet
		if het {
			a.InfHet++
		}
	}
}

// AddY adds the sample's call g at a non-PAR Y site.
func (a *Acc) AddY(g vcfscan.Geno) {
	if g != vcfscan.Missing {
		a.YCalled++
	}
}

// Merge adds o into a (exact).
func (a *Acc) Merge(o *Acc) {
	a.XCalled += o.XCalled
	a.XHet += o.XHet
	a.XHaploid += o.XHaploid
	a.InfCalls += o.InfCalls
	a.InfHet += o.InfHet
	a.ExpHet += o.ExpHet
	a.VarHet += o.VarHet
	a.YCalled += o.YCalled
}

// Sites counts the cohort's non-PAR X and Y sites (the denominators of
// the call rates). It is per cohort, not per sample, and merges by
// addition.
type Sites struct {
	X, XInformative, Y int64
}

// Merge adds o into s.
func (s *Sites) Merge(o *Sites) {
	s.X += o.X
	s.XInformative += o.XInformative
	s.Y += o.Y
}

// FX is the sample's X inbreeding coefficient, 1 - observed/expected
// heterozygous calls over informative X sites (method of moments; the
// same estimator as the autosomal excess-homozygosity F written with
// heterozygotes), and its approximate standard error under Hardy-Weinberg
// proportions, sqrt(sum 2pq(1-2pq)) / sum 2pq. Both are NaN without
// informative calls.
func (a *Acc) FX() (f, se float64) {
	if a.ExpHet <= 0 {
		return math.NaN(), math.NaN()
	}
	e := float64(a.ExpHet) / fixScale
	v := float64(a.VarHet) / fixScale
	return 1 - float64(a.InfHet)/e, math.Sqrt(v) / e
}

// ExpectedHet is the number of heterozygous calls a non-inbred female
// would be expected to show at the sample's informative X calls.
func (a *Acc) ExpectedHet() float64 { return float64(a.ExpHet) / fixScale }
