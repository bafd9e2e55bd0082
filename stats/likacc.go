package stats

import (
	"errors"
	"fmt"
)

// LikAcc is the genotype-likelihood part of a run's per-sample state: for
// every sample its f_lik summary and its depth, plus site counts. One
// LikAcc per worker consumes records whose likelihoods are present;
// LikAccs of any split of the input (threads, shards) merge exactly with
// Merge. Memory: 472 bytes per sample (FLikSummary 440 + DepthAcc 32).
// Fields are exported for encoding/gob; the scratch space is not.
type LikAcc struct {
	FLik  []FLikSummary
	Depth []DepthAcc
	// Records counts records with likelihoods; NoFreq those where the
	// site EM had no informative sample; NotConverged those where it
	// reached SiteEMMaxIter.
	Records, NoFreq, NotConverged int64

	em    SiteFreqEM
	sites []FLikSite // one per frequency group
}

// NewLikAcc returns an empty LikAcc for nSamples samples.
func NewLikAcc(nSamples int) *LikAcc {
	return &LikAcc{FLik: make([]FLikSummary, nSamples), Depth: make([]DepthAcc, nSamples)}
}

// AddRecord adds one record's likelihoods, pl holding three phred values
// per sample in sample order (vcfscan.Batch.PL for the record), and returns
// the record's allele frequency by EM (SiteFreqEM), for sites.tsv.
//
// The frequency used for f_lik is the EM frequency when groupFreq is nil.
// Otherwise sample s uses groupFreq[groupOf[s]] (external panel, INFO value
// or its population's frequency, as for the other estimators); a NaN or
// out-of-range group frequency leaves the group's samples out at this site.
// To leave single calls out (for example calls masked by a depth filter),
// set their triple to 0,0,0 before the call.
func (l *LikAcc) AddRecord(pl []uint16, groupOf []int32, groupFreq []float64) SiteFreq {
	n := len(l.FLik)
	pl = pl[:3*n]
	l.Records++
	fr := l.em.Estimate(pl)
	switch {
	case fr.Samples == 0:
		l.NoFreq++
	case !fr.Converged:
		l.NotConverged++
	}
	for i := range l.Depth {
		l.Depth[i].AddPL(pl[3*i], pl[3*i+1], pl[3*i+2])
	}
	if groupFreq == nil {
		if len(l.sites) == 0 {
			l.sites = make([]FLikSite, 1)
		}
		site := &l.sites[0]
		if !site.Set(fr.AltFreq) {
			return fr
		}
		for i := range l.FLik {
			l.FLik[i].Add(site, pl[3*i], pl[3*i+1], pl[3*i+2])
		}
		return fr
	}
	if len(l.sites) < len(groupFreq) {
		l.sites = make([]FLikSite, len(groupFreq))
	}
	for g, p := range groupFreq {
		l.sites[g].Set(p)
	}
	for i := range l.FLik {
		if g := groupOf[i]; g >= 0 {
			l.FLik[i].Add(&l.sites[g], pl[3*i], pl[3*i+1], pl[3*i+2])
		}
	}
	return fr
}

// AddDP adds one record's FORMAT DP values, one per sample in sample
// order; negative values are missing.
func (l *LikAcc) AddDP(dp []int32) {
	for i := range l.Depth {
		l.Depth[i].AddDP(int(dp[i]))
	}
}

// ErrLikSamples is returned by Merge for states of different sample counts.
var ErrLikSamples = errors.New("likelihood states for different samples")

// Merge adds o into l; exact (integer sums), so any split of the input
// merges to the same state whatever the order.
func (l *LikAcc) Merge(o *LikAcc) error {
	if len(l.FLik) != len(o.FLik) || len(l.Depth) != len(o.Depth) {
		return fmt.Errorf("%w: %d and %d samples", ErrLikSamples, len(l.FLik), len(o.FLik))
	}
	for i := range l.FLik {
		l.FLik[i].Merge(&o.FLik[i])
		l.Depth[i].Merge(&o.Depth[i])
	}
	l.Records += o.Records
	l.NoFreq += o.NoFreq
	l.NotConverged += o.NotConverged
	return nil
}
