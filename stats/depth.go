package stats

import "math"

// DepthSource says where a sample's mean depth comes from.
type DepthSource int

// Sources of DepthAcc.Mean, in order of preference.
const (
	DepthNone DepthSource = iota // neither DP nor likelihoods were seen
	DepthDP                      // FORMAT DP
	DepthPL                      // read count implied by the likelihoods (see DepthAcc.AddPL)
)

func (s DepthSource) String() string {
	return [...]string{"none", "dp", "pl"}[s]
}

// phredPerRead is 10 log10 2: the phred gap between the heterozygote and
// the homozygote that one read of that homozygote's allele adds under the
// binomial read model with negligible error.
const phredPerRead = 3.010299956639812

// DepthAcc accumulates one sample's read depth over sites, exactly
// mergeable (integer sums). The zero value is empty. Fields are exported
// for encoding/gob.
type DepthAcc struct {
	DPSum, DPCalls int64 // FORMAT DP: sum, and calls that carried it
	// PLHetSum is the sum of PL(0/1) - min(PL(0/0), PL(1/1)) over calls
	// whose most likely genotype is a homozygote, and PLCalls counts them
	// together with calls whose three PL are equal (no reads, depth 0).
	PLHetSum, PLCalls int64
}

// AddDP adds one call's FORMAT DP; negative values (missing) are ignored.
func (d *DepthAcc) AddDP(dp int) {
	if dp >= 0 {
		d.DPSum += int64(dp)
		d.DPCalls++
	}
}

// AddPL adds one call's phred triple (0/0, 0/1, 1/1) to the depth implied
// by the likelihoods, used when the file has no DP. Under the binomial read
// model with per-read error e (Li 2011, Bioinformatics 27:2987), a call
// whose d reads all show one allele has PL(0/1) - PL(hom) =
// 10 d log10(2(1-e)), so d is that gap / (10 log10 2) up to a factor
// 1/(1 + log2(1-e)) (1.5% at e = 0.01, an underestimate). Calls whose most
// likely genotype is the heterozygote are skipped (their gap depends on
// the unknown e), and so are haploid pairs; a triple of equal values
// counts as depth 0. The proxy therefore reads low: skipped heterozygous
// calls need reads of both alleles and so have more reads than average
// (about 5% low in all at mean depth 4 in TestDepth), and a homozygous call
// with a read of the other allele adds less than its reads. It is meant
// for the low-depth warning when DP is absent, not as a depth measurement.
func (d *DepthAcc) AddPL(pl0, pl1, pl2 uint16) {
	if pl1 == haploidPL {
		return
	}
	if pl0 == pl1 && pl1 == pl2 {
		d.PLCalls++
		return
	}
	hom := min(pl0, pl2)
	if pl1 <= hom {
		return
	}
	d.PLHetSum += int64(pl1 - hom)
	d.PLCalls++
}

// Merge adds o into d.
func (d *DepthAcc) Merge(o *DepthAcc) {
	d.DPSum += o.DPSum
	d.DPCalls += o.DPCalls
	d.PLHetSum += o.PLHetSum
	d.PLCalls += o.PLCalls
}

// Mean returns the sample's mean depth per call: from DP when any call
// carried it, else from the likelihoods, else NaN with DepthNone.
func (d *DepthAcc) Mean() (float64, DepthSource) {
	switch {
	case d.DPCalls > 0:
		return float64(d.DPSum) / float64(d.DPCalls), DepthDP
	case d.PLCalls > 0:
		return float64(d.PLHetSum) / phredPerRead / float64(d.PLCalls), DepthPL
	}
	return math.NaN(), DepthNone
}

// LowDepthThreshold is the mean depth below which LowDepth reports that
// hard-call estimators are biased. At mean depth 10 (Poisson), 1.3% of
// heterozygotes with at least one read show one allele only
// (HetOneAlleleRate), so a hard-call excess-homozygosity F reads about
// 0.013 (1-F) too high: under half the 0.03 the project accepts for an F
// estimator; at 8x it is 0.036, at 5x 0.15, at 3x 0.36. Real depth is
// overdispersed relative to Poisson, which makes things worse, so the
// threshold is not lowered further.
const LowDepthThreshold = 10.0

// LowDepth reports whether a mean depth per call is low enough that
// hard-call estimators (f_hom and the other moment estimators, and the
// per-site HWE statistics) are biased towards homozygosity; NaN (unknown
// depth) is not low.
func LowDepth(meanDepth float64) bool { return meanDepth < LowDepthThreshold }

// HetOneAlleleRate is the expected share of heterozygous calls with at
// least one read whose reads all show the same allele, so that a hard
// call reads them as homozygous, when depth is Poisson with the given
// mean and reads are error-free: sum_{d>=1} Pois(d) 2^(1-d) / (1 - e^-m)
// = 2 (e^(-m/2) - e^-m) / (1 - e^-m) (common practice; derived here).
// A hard-call excess-homozygosity F then reads about this times (1-F) too
// high.
func HetOneAlleleRate(meanDepth float64) float64 {
	if !(meanDepth > 0) {
		return math.NaN()
	}
	return 2 * (math.Exp(-meanDepth/2) - math.Exp(-meanDepth)) / -math.Expm1(-meanDepth)
}
