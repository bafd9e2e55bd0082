package roh

import (
	"math"
	"sort"
)

// The age-class model (ages.go) inside the detector: after a
// chromosome's runs are known, every sample's mixing proportions are
// fitted by EM over the same windows of sites the two-state sweeps used,
// so that memory stays within Config.MemoryBudget whatever the
// chromosome length. Each EM round is two sweeps over the windows, all
// samples of a window at a time while its per-site table is in cache:
//
//  1. forward, in input order: each sample's forward values of the age
//     chain over its own age windows (its runs widened by AgeMarginCM on
//     both sides, or the whole chromosome with AgeWholeChromosome), with
//     the sample's forward state at the window's first site kept with the
//     window (window.ageCk, m+3 numbers a sample, written back to disk for
//     spilled windows);
//  2. backward, in reverse order: the forward values of the window are
//     recomputed from that checkpoint into the worker's scratch (m+1
//     numbers a site of one window), and the backward recursion gives the
//     posteriors, the per-class posterior lengths and the expected class
//     draws, and the per-class sums over each run's sites.
//
// Then each sample's EM step (with SQUAREM) runs as in AgeWorker.fit;
// samples whose class shares settled stop, and the last round's figures
// are theirs. The recursions are those of AgeWorker.forward and backward,
// operation for operation, with the age windows as AgeWindows builds them
// (TestAgeSweepsMatchWorker compares with FitWindows and Fit), so results
// do not depend on the engine's window size, the budget or the thread
// count. Windows no sample's age window touches are not read.
//
// Memory: per window m+3 numbers per sample (about ns*96 bytes per window
// of up to 1,024 sites, within the budget); per worker (m+1)*W numbers of
// scratch for one window of W sites and the per-site table of one window
// (8 + 2m + 1 numbers a site); per sample O(m) state plus m numbers per
// run. Nothing grows with the chromosome length.

// ageSample is one sample's age-model state on the current chromosome.
type ageSample struct {
	iv     [][2]float64 // age windows in cM, sorted, merged
	runs   []ageRunRef
	active bool
	rounds int
	inSpan float64 // span inside the age windows (first round)

	// m numbers each, carved from one array per chromosome (setup), so
	// that a sample costs what its classes need, not maxAgeStates.
	rho, prev, x0 []float64
	sums, counts  []float64
	phase         int

	// forward carry
	fp    []float64
	fIn   bool
	fLo   int
	fIv   int
	fRun  int
	bIn   bool
	bHi   int
	bIv   int
	bRun  int
	bt    []float64
	first bool // first round: accumulate inSpan
	whole bool // fitted on the whole chromosome (its windows covered AgeWholeShare or more)
}

// ageRunRef is one run of the sample: its positions and the sums over its
// sites of each autozygous class's posterior in the current round.
type ageRunRef struct {
	start, end int64
	n          int
	sum        []float64 // m-1 numbers (the autozygous classes), carved from one array per sample
}

// ageTable is the per-site table of one window for the age chain.
type ageTable struct {
	rows []float32 // 8 per site: emissionRow with the age configuration's error
	vu   []float64 // 2m per site: stay, then leave, for each class
	span []float64 // bp per site, as AgeTables.Span
}

// ageScratch is one worker's buffers for the age sweeps.
type ageScratch struct {
	alpha []float64 // m per window site
	sd    []float64 // draw term per window site
	flag  []uint8   // per window site: 1 in an age window, 3 its first site
	em    []float64 // emission pairs per window site (kept by the recomputed forward for backward)
}

// ageChrom is the age fit of one chromosome.
type ageChrom struct {
	cfg    *AgeConfig
	m      int
	rates  []float64
	all    float64 // span of the whole chromosome, in site order
	pendH  float64
	prevP  int64
	nSites int
	info   []ageWinInfo
	smp    []ageSample
	tab    ageTable
	prior  float64
	whole  bool // one age window over the whole chromosome
	// wholeShare: a sample whose windows cover at least this share of
	// the chromosome is fitted on the whole chromosome (0: never).
	wholeShare float64
}

type ageWinInfo struct {
	firstCM, lastCM float64
	posPrev         int64 // position of the site before the window, -1 for the first
	posNext         int64 // position of the site after the window, -1 for the last
}

func newAgeChrom(cfg *AgeConfig) *ageChrom {
	m := len(cfg.Rates) + 1
	rates := append(append([]float64(nil), cfg.Rates...), cfg.NonAutozygousRate)
	return &ageChrom{cfg: cfg, m: m, rates: rates, prevP: -1}
}

// note records window w as it arrives (in order): its genetic extent and
// neighbouring positions, and the chromosome's span in site order, as
// AgeTables sums it.
func (a *ageChrom) note(w *window) {
	if w.n == 0 {
		a.info = append(a.info, ageWinInfo{math.Inf(1), math.Inf(-1), a.prevP, -1})
		return
	}
	if k := len(a.info); k > 0 {
		for j := k - 1; j >= 0 && a.info[j].posNext < 0; j-- {
			a.info[j].posNext = w.pos[0]
			if a.info[j].firstCM <= a.info[j].lastCM {
				break
			}
		}
	}
	a.info = append(a.info, ageWinInfo{w.cm[0], w.cm[w.n-1], a.prevP, -1})
	for _, p := range w.pos[:w.n] {
		if a.nSites > 0 {
			h := a.halfGap(p - a.prevP)
			a.all += a.pendH + h
			a.pendH = h
		}
		a.prevP = p
		a.nSites++
	}
}

// finishSpan adds the last site's span.
func (a *ageChrom) finishSpan() {
	if a.nSites > 0 {
		a.all += a.pendH
		a.pendH = 0
	}
}

func (a *ageChrom) halfGap(gap int64) float64 {
	if a.cfg.MaxGapBP == 0 || gap <= a.cfg.MaxGapBP {
		return float64(gap) / 2
	}
	return 0
}

// setup prepares every sample's age windows and runs.
func (a *ageChrom) setup(perSample [][]Run, marginCM float64, whole bool) {
	a.smp = make([]ageSample, len(perSample))
	start := a.cfg.StartMixing()
	a.prior = a.cfg.PriorCount
	m := a.m
	vals := make([]float64, 7*m*len(perSample))
	for s, runs := range perSample {
		sm := &a.smp[s]
		v := vals[7*m*s : 7*m*(s+1) : 7*m*(s+1)]
		sm.rho, sm.prev, sm.x0 = v[0:m:m], v[m:2*m:2*m], v[2*m:3*m:3*m]
		sm.sums, sm.counts = v[3*m:4*m:4*m], v[4*m:5*m:5*m]
		sm.fp, sm.bt = v[5*m:6*m:6*m], v[6*m:7*m:7*m]
		copy(sm.rho, start)
		sm.first = true
		if whole {
			sm.iv = [][2]float64{{math.Inf(-1), math.Inf(1)}}
		}
		rs := make([]float64, (m-1)*len(runs))
		sm.runs = make([]ageRunRef, 0, len(runs))
		for j, r := range runs {
			sm.runs = append(sm.runs, ageRunRef{start: r.Start, end: r.End, sum: rs[(m-1)*j : (m-1)*(j+1) : (m-1)*(j+1)]})
			if !whole {
				lo, hi := r.StartCM-marginCM, r.EndCM+marginCM
				if k := len(sm.iv); k > 0 && lo <= sm.iv[k-1][1] {
					sm.iv[k-1][1] = max(sm.iv[k-1][1], hi)
					continue
				}
				sm.iv = append(sm.iv, [2]float64{lo, hi})
			}
		}
		if !whole && len(sm.iv) > 0 && a.wholeShare > 0 && a.coveredShare(sm.iv) >= a.wholeShare {
			sm.iv = [][2]float64{{math.Inf(-1), math.Inf(1)}}
			sm.whole = true
		}
		sm.active = len(sm.iv) > 0
	}
}

// coveredShare is the share of the chromosome's genetic length (first to
// last site) inside the age windows iv.
func (a *ageChrom) coveredShare(iv [][2]float64) float64 {
	if len(a.info) == 0 {
		return 0
	}
	lo, hi := a.info[0].firstCM, a.info[len(a.info)-1].lastCM
	if !(hi > lo) {
		return 1
	}
	in := 0.0
	for _, x := range iv {
		in += max(min(x[1], hi)-max(x[0], lo), 0)
	}
	return in / (hi - lo)
}

// touches tells whether sample s's age windows reach window k.
func (sm *ageSample) touches(inf ageWinInfo) bool {
	j := sort.Search(len(sm.iv), func(i int) bool { return sm.iv[i][1] >= inf.firstCM })
	return j < len(sm.iv) && sm.iv[j][0] <= inf.lastCM
}

// build fills the table of window w.
func (a *ageChrom) build(w *window, inf ageWinInfo, err float64) {
	n, m := w.n, a.m
	t := &a.tab
	t.rows = grow(t.rows, 8*n)
	t.vu = grow(t.vu, 2*m*n)
	t.span = grow(t.span, n)
	for lt := 0; lt < n; lt++ {
		emissionRow(t.rows[8*lt:8*lt+8:8*lt+8], w.freq[lt], err)
		row := t.vu[2*m*lt : 2*m*(lt+1)]
		d := 0.0
		if w.t0+lt > 0 {
			prev := w.cmPrev
			if lt > 0 {
				prev = w.cm[lt-1]
			}
			d = max(w.cm[lt]-prev, 0) / 100
		}
		for c, r := range a.rates {
			u := -math.Expm1(-r * d)
			row[c], row[m+c] = 1-u, u
		}
		sp := 0.0
		pp := inf.posPrev
		if lt > 0 {
			pp = w.pos[lt-1]
		}
		if w.t0+lt > 0 {
			sp += a.halfGap(w.pos[lt] - pp)
		}
		np := inf.posNext
		if lt+1 < n {
			np = w.pos[lt+1]
		}
		if np >= 0 {
			sp += a.halfGap(np - w.pos[lt])
		}
		t.span[lt] = sp
	}
}

// emPair returns sample s's autozygous and non-autozygous emissions at
// window site lt.
func (a *ageChrom) emPair(g geometry, w *window, s, lt int) (float64, float64) {
	row := a.tab.rows[8*lt : 8*lt+8 : 8*lt+8]
	if w.nPL > 0 && w.plSite[lt] >= 0 {
		return g.plEmission(w, row, s, lt)
	}
	c := g.code(w, s, lt)
	return float64(row[c]), float64(row[4+c])
}

// ckLen is the checkpoint size per sample: m forward values, in-window
// flag, window start, interval index.
func ageCkLen(m int) int { return m + 3 }

// checkpoint restores sample s's forward state at window w's first site
// from w.ageCk and sizes the scratch for the window (keep), or saves the
// state there (the forward sweep).
func (a *ageChrom) checkpoint(w *window, s int, sm *ageSample, sc *ageScratch, keep bool) {
	m := a.m
	ck := w.ageCk[s*ageCkLen(m) : (s+1)*ageCkLen(m)]
	if keep {
		copy(sm.fp[:m], ck[:m])
		sm.fIn = ck[m] != 0
		sm.fLo = int(ck[m+1])
		sm.fIv = int(ck[m+2])
		n := w.n
		sc.alpha = grow(sc.alpha, m*n)
		sc.sd = grow(sc.sd, n)
		sc.flag = grow(sc.flag, n)
		sc.em = grow(sc.em, 2*n)
		return
	}
	copy(ck[:m], sm.fp[:m])
	ck[m] = 0
	if sm.fIn {
		ck[m] = 1
	}
	ck[m+1] = float64(sm.fLo)
	ck[m+2] = float64(sm.fIv)
}

// forwardWindow runs sample s's forward recursion over window w, from its
// carried state, saving that state first into w.ageCk. With keep, the
// values of every site go to sc (alpha, sd, flag), as AgeWorker.forward
// stores them.
func (a *ageChrom) forwardWindow(g geometry, w *window, s int, sm *ageSample, sc *ageScratch, keep bool) {
	m := a.m
	if m == m9 {
		a.forwardWindow9(g, w, s, sm, sc, keep)
		return
	}
	last := m - 1
	a.checkpoint(w, s, sm, sc, keep)
	rho := sm.rho[:m:m]
	p := sm.fp[:m:m]
	vu := a.tab.vu
	rows := a.tab.rows
	gw := w.geno[s*g.ww : (s+1)*g.ww]
	for lt := 0; lt < w.n; lt++ {
		c := w.cm[lt]
		for sm.fIv < len(sm.iv) && sm.iv[sm.fIv][1] < c {
			sm.fIv++
		}
		in := sm.fIv < len(sm.iv) && sm.iv[sm.fIv][0] <= c
		if !in {
			sm.fIn = false
			if keep {
				sc.flag[lt] = 0
			}
			continue
		}
		i := w.t0 + lt
		var eA, eN float64
		if w.nPL == 0 {
			eA, eN = codeEmission(gw, rows, lt)
		} else {
			eA, eN = a.emPair(g, w, s, lt)
		}
		if keep {
			sc.em[2*lt], sc.em[2*lt+1] = eA, eN
		}
		if !sm.fIn {
			sm.fIn, sm.fLo = true, i
			for l := range p {
				e := eA
				if l == last {
					e = eN
				}
				p[l] = rho[l] * e
			}
			if keep {
				copy(sc.alpha[m*lt:m*lt+m], p)
				sc.sd[lt] = 0
				sc.flag[lt] = 3
			}
			continue
		}
		row := vu[2*m*lt : 2*m*(lt+1) : 2*m*(lt+1)]
		stay, leave := row[:m:m], row[m:2*m:2*m]
		var draw float64
		for k, v := range p {
			draw += leave[k] * v
		}
		for l := range p {
			e := eA
			if l == last {
				e = eN
			}
			p[l] = e * (stay[l]*p[l] + rho[l]*draw)
		}
		if keep {
			copy(sc.alpha[m*lt:m*lt+m], p)
			sc.sd[lt] = draw
			sc.flag[lt] = 1
		}
		if (i-sm.fLo)%rescaleEvery == 0 {
			z := 0.0
			for _, v := range p {
				z += v
			}
			inv := 1 / z
			for l := range p {
				p[l] *= inv
			}
		}
	}
}

// backwardWindow runs sample s's backward recursion over window w (after
// forwardWindow with keep), as AgeWorker.backward: posteriors, per-class
// lengths, expected draws, and run sums.
func (a *ageChrom) backwardWindow(g geometry, w *window, s int, sm *ageSample, sc *ageScratch) {
	m := a.m
	if m == m9 {
		a.backwardWindow9(w, sm, sc)
		return
	}
	last := m - 1
	rho := sm.rho[:m:m]
	bt := sm.bt[:m:m]
	vu, span := a.tab.vu, a.tab.span
	var rr [maxAgeStates]float64
	for lt := w.n - 1; lt >= 0; lt-- {
		fl := sc.flag[lt]
		if fl == 0 {
			sm.bIn = false
			continue
		}
		i := w.t0 + lt
		if !sm.bIn {
			sm.bIn, sm.bHi = true, i+1
			for l := range bt {
				bt[l] = 1
			}
		}
		cur := sc.alpha[m*lt : m*lt+m : m*lt+m]
		// the run holding this site, if any
		pos := w.pos[lt]
		var run *ageRunRef
		for sm.bRun >= 0 && sm.runs[sm.bRun].start > pos {
			sm.bRun--
		}
		if sm.bRun >= 0 && sm.runs[sm.bRun].end >= pos {
			run = &sm.runs[sm.bRun]
		}
		if sm.first {
			sm.inSpan += span[lt]
		}
		if fl == 3 {
			// first site of an age window: its class is a draw from rho
			z := 0.0
			for l := range cur {
				cur[l] *= bt[l]
				z += cur[l]
			}
			for l := range cur {
				gg := cur[l] / z
				sm.counts[l] += gg
				sm.sums[l] += gg * span[lt]
				if run != nil && l < last {
					run.sum[l] += gg
				}
			}
			sm.bIn = false
			continue
		}
		sd := sc.sd[lt]
		eA, eN := sc.em[2*lt], sc.em[2*lt+1]
		row := vu[2*m*lt : 2*m*(lt+1) : 2*m*(lt+1)]
		stay, leave := row[:m:m], row[m:2*m:2*m]
		var wsum, z float64
		for l := range bt {
			e := eA
			if l == last {
				e = eN
			}
			gg := cur[l] * bt[l]
			bl := e * bt[l]
			pb := rho[l] * bl
			wsum += pb
			rr[l] = pb * sd
			z += gg
			cur[l] = gg
			bt[l] = stay[l] * bl
		}
		inv := 1 / z
		sp := span[lt] * inv
		for l := range bt {
			gg := cur[l]
			sm.counts[l] += rr[l] * inv
			sm.sums[l] += gg * sp
			if run != nil && l < last {
				run.sum[l] += gg * inv
			}
			bt[l] += leave[l] * wsum
		}
		if (sm.bHi-i)%rescaleEvery == 0 {
			zz := 0.0
			for _, v := range bt {
				zz += v
			}
			inv := 1 / zz
			for l := range bt {
				bt[l] *= inv
			}
		}
	}
}

// startRound resets sample sm's per-round sums and carried state.
func (a *ageChrom) startRound(sm *ageSample) {
	clear(sm.sums)
	clear(sm.counts)
	sm.fIn, sm.fIv, sm.fLo = false, 0, 0
	sm.bIn, sm.bIv, sm.bRun = false, len(sm.iv)-1, len(sm.runs)-1
	for j := range sm.runs {
		clear(sm.runs[j].sum)
		sm.runs[j].n = 0
	}
}

// endRound is AgeWorker.fit's step after a pass: it reports whether the
// sample is done, else moves its mixing proportions.
func (a *ageChrom) endRound(sm *ageSample, it int) bool {
	m := a.m
	cfg := a.cfg
	if sm.first {
		sm.first = false
		if a.all > 0 {
			// the prior keeps its weight relative to the data
			sm.inSpan = min(sm.inSpan, a.all)
		}
	}
	sm.rounds = it + 1
	rounds := max(cfg.Iterations, 1)
	tot := 0.0
	for _, v := range sm.sums[:m] {
		tot += v
	}
	moved := 0.0
	for l := range sm.sums[:m] {
		sh := sm.sums[l] / tot
		moved = max(moved, math.Abs(sh-sm.prev[l]))
		sm.prev[l] = sh
	}
	if it == rounds-1 || (it > 0 && moved <= cfg.Tolerance) {
		return true
	}
	prior := a.prior
	if a.all > 0 && !a.whole && !sm.whole {
		prior *= sm.inSpan / a.all
	}
	var next [maxAgeStates]float64
	var counts [maxAgeStates]float64
	copy(counts[:], sm.counts)
	tot = 0.0
	for l := range counts[:m] {
		counts[l] += prior
		tot += counts[l]
	}
	if !(tot > 0) {
		return true
	}
	for l := 0; l < m; l++ {
		next[l] = max(counts[l]/tot, 1e-9)
	}
	normalise(next[:m])
	rho := sm.rho[:m]
	switch sm.phase {
	case 0:
		for l := 0; l < m; l++ {
			sm.x0[l] = math.Log(rho[l])
		}
		copy(rho, next[:m])
		sm.phase = 1
	case 1:
		var x1 [maxAgeStates]float64
		var rr, vv float64
		for l := 0; l < m; l++ {
			x1[l] = math.Log(rho[l])
			x2 := math.Log(next[l])
			r, v := x1[l]-sm.x0[l], x2-2*x1[l]+sm.x0[l]
			rr += r * r
			vv += v * v
		}
		al := -1.0
		if vv > 0 {
			al = min(-math.Sqrt(rr/vv), -1)
		}
		for l := 0; l < m; l++ {
			x2 := math.Log(next[l])
			r, v := x1[l]-sm.x0[l], x2-2*x1[l]+sm.x0[l]
			rho[l] = math.Exp(max(sm.x0[l]-2*al*r+al*al*v, -40))
		}
		normalise(rho)
		sm.phase = 0
	}
	return false
}

// classBP returns the sample's per-class posterior lengths (fixed point),
// everything outside its age windows counting as non-autozygous.
func (a *ageChrom) classBP(sm *ageSample, dst []int64) {
	m := a.m
	var sums [maxAgeStates]float64
	if len(sm.iv) > 0 {
		copy(sums[:], sm.sums)
	}
	if !a.whole && !sm.whole {
		sums[m-1] += max(a.all-sm.inSpan, 0)
	}
	for l := 0; l < m; l++ {
		dst[l] = int64(math.Round(sums[l] * AgeUnit))
	}
}

// runClass returns the most probable autozygous class of run j of the
// sample and its mean posterior, as AgeWorker.RunClass.
func (a *ageChrom) runClass(sm *ageSample, j, nSites int) (int, float64) {
	if j >= len(sm.runs) || nSites <= 0 {
		return -1, math.NaN()
	}
	s := sm.runs[j].sum
	best := 0
	for l := 1; l < a.m-1; l++ {
		if s[l] > s[best] {
			best = l
		}
	}
	return best, s[best] / float64(nSites)
}

// ageOn tells whether detection fits the age classes: the HMM detectors,
// not the rules, and not a PieceCollector (which detects nothing).
func (c *Collector) ageOn() bool {
	return c.cfg.Ages != nil && c.cfg.Method == MethodHMM && !c.raw
}

// ageFit fits the age classes of every sample on the chromosome, after
// its runs are known and while its windows are still held (in memory or
// on disk), and annotates the runs.
func (r *chromRun) ageFit() error {
	c := r.c
	g := c.geo
	a := r.age
	ns := g.ns
	cfg := c.cfg.Ages
	a.whole = c.cfg.AgeWholeChromosome
	a.wholeShare = c.cfg.AgeWholeShare
	a.setup(r.perSample, c.cfg.AgeMarginCM, c.cfg.AgeWholeChromosome)
	nw := len(r.wins)
	touched := make([]bool, nw)
	for it := 0; it < max(cfg.Iterations, 1); it++ {
		any := false
		clear(touched)
		for s := range a.smp {
			sm := &a.smp[s]
			if !sm.active {
				continue
			}
			any = true
			a.startRound(sm)
			for k := 0; k < nw; k++ {
				if !touched[k] && sm.touches(a.info[k]) {
					touched[k] = true
				}
			}
		}
		if !any {
			break
		}
		for k := 0; k < nw; k++ {
			if !touched[k] {
				continue
			}
			if err := r.ageWindow(k, false); err != nil {
				return err
			}
		}
		for k := nw - 1; k >= 0; k-- {
			if !touched[k] {
				continue
			}
			if err := r.ageWindow(k, true); err != nil {
				return err
			}
		}
		for s := range a.smp {
			sm := &a.smp[s]
			if sm.active && a.endRound(sm, it) {
				sm.active = false
			}
		}
		if c.failed() {
			return nil
		}
	}
	m := a.m
	r.ageBP = make([]int64, ns*m)
	for s := range a.smp {
		sm := &a.smp[s]
		a.classBP(sm, r.ageBP[s*m:(s+1)*m])
		for j := range r.perSample[s] {
			run := &r.perSample[s][j]
			cls, p := a.runClass(sm, j, run.NSites)
			run.AgeClass, run.AgePosterior = cls+1, p
		}
	}
	return nil
}

// ageWindow runs the forward (back false) or backward sweep of the age
// fit over window k for every active sample.
func (r *chromRun) ageWindow(k int, back bool) error {
	c := r.c
	g := c.geo
	a := r.age
	w, err := r.load(k)
	if err != nil {
		return err
	}
	inf := a.info[k]
	a.build(w, inf, c.cfg.Ages.GenotypeError)
	c.parallel(c.chunks(g.ns), func(sc *workScratch, i int) {
		s0, s1 := c.chunk(i, g.ns)
		for s := s0; s < s1; s++ {
			sm := &a.smp[s]
			if !sm.active {
				continue
			}
			if !sm.touches(inf) {
				sm.fIn, sm.bIn = false, false
				continue
			}
			if back {
				a.forwardWindow(g, w, s, sm, &sc.age, true)
				a.backwardWindow(g, w, s, sm, &sc.age)
			} else {
				a.forwardWindow(g, w, s, sm, &sc.age, false)
			}
		}
	})
	if !back && w.off >= 0 {
		err = r.spill.writeAt([][]byte{asBytes(w.ageCk)}, w.off+g.ageCkOffset(w))
	}
	r.unload(w)
	return err
}

// ageRates are Result.AgeRates: the configured rates, also for the rules
// detector (whose age columns are NA), nil when the age classes are off.
func (c *Collector) ageRates() []float64 {
	if c.cfg.Ages == nil {
		return nil
	}
	return append([]float64(nil), c.cfg.Ages.Rates...)
}
