package stats

import (
	"math"
	"sync"
	"sync/atomic"

	"fgauge/vcfscan"
)

// This file feeds the genotype-likelihood state (LikAcc) from the
// worker, one record at a time, apart from the hard-call accumulation of
// record: the site EM frequency (alt_freq_lik), each sample's f_lik
// summary and its depth.

// LikFreqSource says which site frequencies f_lik uses.
type LikFreqSource int

// Frequency sources of f_lik.
const (
	// LikFreqAuto: the external frequencies of the other estimators when
	// they use a panel (--freqs) or an INFO value (--freqs-from-info);
	// otherwise the likelihood EM frequency, of each population with
	// populations (samples outside every population: the cohort's), else
	// of the cohort. Hard-call frequencies are never used, as they are
	// biased at low depth.
	LikFreqAuto LikFreqSource = iota
	// LikFreqEM: always the likelihood EM frequency (per population with
	// populations, as for LikFreqAuto).
	LikFreqEM
	// LikFreqEstimators: exactly the frequency the hard-call estimators
	// use at the site (Config.Freqs), hard-call cohort or population
	// frequencies included.
	LikFreqEstimators
)

// LikFreqNames are the option values of the sources, in order.
var LikFreqNames = [...]string{"auto", "likelihood", "estimators"}

func (f LikFreqSource) String() string { return LikFreqNames[f] }

// LikShared is the one likelihood state of a run that every Worker feeds
// (Worker.ShareLikelihoods). A per-worker state would cost 472 bytes per
// sample per thread (0.9 GB for a million samples on two threads), so
// the workers share one: samples are split into stripes, each with its
// own mutex, and a worker adds a record's calls stripe by stripe, each
// worker starting at a different stripe so that they rarely wait. All
// sums are integers, so the order of the adds changes nothing: the state,
// and f_lik, are the same bit for bit whatever the thread count. The
// state is allocated when the first record with likelihoods or DP comes.
type LikShared struct {
	n       int
	stripe  int // samples per stripe
	mu      []sync.Mutex
	once    sync.Once
	acc     *LikAcc
	records atomic.Int64
	noFreq  atomic.Int64
	noConv  atomic.Int64
	used    atomic.Bool
	nextW   atomic.Int32
}

// likStripeSamples is the smallest stripe: locking a stripe (~20 ns)
// stays small beside the adds of its calls.
const likStripeSamples = 64

// NewLikShared returns an empty shared state for nSamples samples.
func NewLikShared(nSamples int) *LikShared {
	st := max(likStripeSamples, (nSamples+63)/64)
	return &LikShared{n: nSamples, stripe: st, mu: make([]sync.Mutex, (nSamples+st-1)/st)}
}

func (s *LikShared) state() *LikAcc {
	s.once.Do(func() { s.acc = NewLikAcc(s.n) })
	return s.acc
}

// Acc returns the state, or nil when no record carried likelihoods or
// DP. Call it once every worker has finished.
func (s *LikShared) Acc() *LikAcc {
	if !s.used.Load() {
		return nil
	}
	a := s.state()
	a.Records, a.NoFreq, a.NotConverged = s.records.Load(), s.noFreq.Load(), s.noConv.Load()
	return a
}

// likWorker is a Worker's scratch for the likelihood part.
type likWorker struct {
	shared  *LikShared
	private bool // shared was made by the worker itself (no ShareLikelihoods)
	first   int  // stripe this worker starts at
	em      SiteFreqEM
	sites   []FLikSite // per frequency group
	groupOf []int32    // per sample: frequency group, -1 none
	popIdx  [][]int32  // per population: its samples
	popPL   []uint16
	groupP  []float64
	cur     SiteFreq // cohort EM of the current record
	has     bool     // the current record carries likelihoods
}

// ShareLikelihoods makes w feed sh instead of a state of its own; every
// worker of a run must share the same sh, which the caller then puts in
// the merged Totals (Totals.Lik = sh.Acc()).
func (w *Worker) ShareLikelihoods(sh *LikShared) {
	w.lik.shared, w.lik.private = sh, false
	w.lik.first = int(sh.nextW.Add(1)-1) * 7
}

func (w *Worker) initLik() {
	cfg := w.cfg
	l := &w.lik
	l.shared, l.private = NewLikShared(len(cfg.Samples)), true
	l.groupOf = make([]int32, len(cfg.Samples))
	perPop := w.nPop > 0 && (cfg.LikFreqs == LikFreqEM ||
		(cfg.LikFreqs == LikFreqAuto && cfg.Freqs != FreqPanel && cfg.Freqs != FreqInfo) ||
		(cfg.LikFreqs == LikFreqEstimators && cfg.Freqs == FreqPopulation))
	ng := 1
	if perPop {
		ng = w.nPop + 1
		l.popIdx = make([][]int32, w.nPop)
		for s, p := range cfg.PopOf {
			if p >= 0 {
				l.groupOf[s] = int32(p)
				l.popIdx[p] = append(l.popIdx[p], int32(s))
			} else {
				l.groupOf[s] = int32(w.nPop)
			}
		}
	}
	l.sites = make([]FLikSite, ng)
	l.groupP = make([]float64, ng)
}

// likSite estimates the record's alternate-allele frequency from its
// likelihoods (NaN and 0 samples without likelihoods); called before the
// hard-call part so that sites.tsv gets alt_freq_lik.
func (w *Worker) likSite(b *vcfscan.Batch, i int) SiteFreq {
	l := &w.lik
	l.has = !w.cfg.NoLikelihoods && len(b.PL) > 0 && b.HasPL[i]
	if !l.has {
		l.cur = SiteFreq{AltFreq: nan}
		return l.cur
	}
	n := b.NSamples
	l.cur = l.em.Estimate(b.PL[3*i*n : 3*(i+1)*n])
	return l.cur
}

// likAdd adds record i's calls to the likelihood state: f_lik summaries
// at the frequency the configuration chooses (used is the hard-call
// estimators' frequency of the site, as returned by record) and depth.
func (w *Worker) likAdd(b *vcfscan.Batch, i int, used float64) {
	l := &w.lik
	n := b.NSamples
	var dp []int32
	if len(b.DP) > 0 && b.HasDP[i] && !w.cfg.NoLikelihoods {
		dp = b.DP[i*n : (i+1)*n]
	}
	if !l.has && dp == nil {
		return
	}
	sh := l.shared
	sh.used.Store(true)
	acc := sh.state()
	var pl []uint16
	if l.has {
		pl = b.PL[3*i*n : 3*(i+1)*n]
		sh.records.Add(1)
		switch {
		case l.cur.Samples == 0:
			sh.noFreq.Add(1)
		case !l.cur.Converged:
			sh.noConv.Add(1)
		}
		w.likFreqs(pl, used)
		for g := range l.sites {
			l.sites[g].Set(l.groupP[g])
		}
	}
	ns := len(sh.mu)
	for k := 0; k < ns; k++ {
		st := (k + l.first) % ns
		lo, hi := st*sh.stripe, min((st+1)*sh.stripe, n)
		sh.mu[st].Lock()
		if pl != nil {
			if len(l.sites) == 1 {
				site := &l.sites[0]
				for s := lo; s < hi; s++ {
					acc.FLik[s].Add(site, pl[3*s], pl[3*s+1], pl[3*s+2])
					acc.Depth[s].AddPL(pl[3*s], pl[3*s+1], pl[3*s+2])
				}
			} else {
				for s := lo; s < hi; s++ {
					acc.FLik[s].Add(&l.sites[l.groupOf[s]], pl[3*s], pl[3*s+1], pl[3*s+2])
					acc.Depth[s].AddPL(pl[3*s], pl[3*s+1], pl[3*s+2])
				}
			}
		}
		if dp != nil {
			for s := lo; s < hi; s++ {
				acc.Depth[s].AddDP(int(dp[s]))
			}
		}
		sh.mu[st].Unlock()
	}
}

// likFreqs sets the frequency of each group for f_lik at this record.
func (w *Worker) likFreqs(pl []uint16, used float64) {
	l := &w.lik
	cfg := w.cfg
	external := cfg.LikFreqs == LikFreqEstimators ||
		(cfg.LikFreqs == LikFreqAuto && (cfg.Freqs == FreqPanel || cfg.Freqs == FreqInfo))
	if len(l.sites) == 1 {
		l.groupP[0] = l.cur.AltFreq
		if external {
			l.groupP[0] = used
		}
		return
	}
	// One group per population, the last for samples outside them.
	np := len(l.popIdx)
	l.groupP[np] = l.cur.AltFreq
	if external { // hard-call population frequencies (Config.Freqs is FreqPopulation)
		l.groupP[np] = used
		for k := 0; k < np; k++ {
			c := &w.popCnt[k]
			l.groupP[k] = nan
			if nk := c[0] + c[1] + c[2]; nk > 0 {
				l.groupP[k] = float64(c[1]+2*c[2]) / float64(2*nk)
			}
		}
		return
	}
	for k, idx := range l.popIdx {
		q := l.popPL[:0]
		for _, s := range idx {
			q = append(q, pl[3*s], pl[3*s+1], pl[3*s+2])
		}
		l.popPL = q
		l.groupP[k] = l.em.Estimate(q).AltFreq
	}
}

// likSiteHet returns the expected heterozygosity 2n/(2n-1) 2pq at the
// likelihood frequency p (n samples with informative likelihoods) and
// f_site = 1 - ho/he.
func likSiteHet(ho float64, f SiteFreq) (he, fsite float64) {
	p := f.AltFreq
	he = nCorr(int64(f.Samples)) * 2 * p * (1 - p)
	fsite = nan
	if he > 0 && !math.IsNaN(ho) {
		fsite = 1 - ho/he
	}
	return he, fsite
}
