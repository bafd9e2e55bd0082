package roh

import (
	"fmt"
	"sync"

	"fgauge/genmap"
)

// DefaultMemoryBudget is the memory the detector may use for the data of
// the chromosomes it holds (calls, per-site tables, sweep checkpoints)
// when Config.MemoryBudget is 0. Beyond it, windows of sites go to a
// temporary file. It leaves room, within 1 GiB for the whole process, for
// the reader's and the statistics' own buffers.
const DefaultMemoryBudget = 256 << 20

// memBudget accounts the bytes of windows kept in memory after their
// first sweep, over all chromosomes in flight.
type memBudget struct {
	mu      sync.Mutex
	limit   int64
	reserve int64 // windows in flight, not accounted one by one
	held    int64
	peak    int64
	spilled int64 // bytes written to temporary files
}

// MemoryStats reports how detection used its budget.
type MemoryStats struct {
	Budget       int64 // Config.MemoryBudget
	PeakHeld     int64 // most bytes of windows kept in memory at once (windows in flight not included)
	InFlight     int64 // bytes of the windows in flight, besides PeakHeld (a bound)
	SpilledBytes int64 // bytes written to temporary files in total
}

// MemoryStats returns the use of the memory budget so far.
func (c *Collector) MemoryStats() MemoryStats {
	c.mem.mu.Lock()
	defer c.mem.mu.Unlock()
	return MemoryStats{Budget: c.mem.limit, PeakHeld: c.mem.peak, InFlight: c.mem.reserve, SpilledBytes: c.mem.spilled}
}

func (m *memBudget) keep(size int64) bool {
	m.mu.Lock()
	defer m.mu.Unlock()
	if m.held+size+m.reserve > m.limit {
		return false
	}
	m.held += size
	m.peak = max(m.peak, m.held)
	return true
}

func (m *memBudget) release(size int64) {
	m.mu.Lock()
	m.held -= size
	m.mu.Unlock()
}

// task is one piece of parallel work for the worker pool.
type task struct {
	fn func(sc *workScratch, i int)
	i  int
	wg *sync.WaitGroup
}

// workScratch is one worker's reusable buffers.
type workScratch struct {
	sweep sweepScratch
	age   ageScratch
	hmm   hmmScratch // whole-chromosome passes (Fit, rules)
}

func (c *Collector) worker() {
	defer c.workers.Done()
	var sc workScratch
	for t := range c.tasks {
		c.runTask(&sc, t)
	}
}

func (c *Collector) runTask(sc *workScratch, t task) {
	defer t.wg.Done()
	defer func() {
		if r := recover(); r != nil {
			c.setErr(fmt.Errorf("roh: detection failed: %v", r))
		}
	}()
	t.fn(sc, t.i)
}

// parallel runs fn(i) for i in [0, n) on the worker pool and waits.
func (c *Collector) parallel(n int, fn func(sc *workScratch, i int)) {
	var wg sync.WaitGroup
	wg.Add(n)
	for i := 0; i < n; i++ {
		c.tasks <- task{fn, i, &wg}
	}
	wg.Wait()
}

// getWindow returns an empty window with buffers, reused when possible.
func (c *Collector) getWindow() *window {
	select {
	case w := <-c.free:
		return w
	default:
	}
	w := &window{}
	c.geo.alloc(w)
	return w
}

func (c *Collector) putWindow(w *window) {
	select {
	case c.free <- w:
	default:
	}
}

// chromRun detects one chromosome: it receives the chromosome's windows
// as they fill, runs the first sweep on each, keeps it in memory or
// spills it, and after the last window runs the other two sweeps (or,
// for the fitted HMM and the rules, the whole-chromosome passes).
type chromRun struct {
	c         *Collector
	id        int
	name      string
	length    int64
	cmMap     *genmap.Chrom
	mapSource string

	// reader side
	nSites   int
	nWin     int
	lastCM   float64
	firstPos int64
	lastPos  int64

	in    chan *window
	wins  []*window // all windows; those spilled hold only their place
	spill *spillFile
	tab   siteTable

	st        []hmmState
	acc       []runAcc
	perSample [][]Run
	fitF      []float64
	fitRate   []float64
	res       ChromResult
	age       *ageChrom // nil when the age classes are off
	ageBP     []int64   // per sample, per class (see ChromResult.AgeBP)
	done      chan struct{}
}

func (c *Collector) newChromRun(id int) *chromRun {
	r := &chromRun{c: c, id: id, name: c.contigName(id), in: make(chan *window, 1), done: make(chan struct{}), mapSource: "cm_per_mb"}
	if id < len(c.contigs) {
		r.length = c.contigs[id].Length
	}
	if m := c.cfg.Map.Chrom(r.name); m != nil && len(m.Pos) > 0 {
		r.cmMap, r.mapSource = m, "genetic_map"
	}
	if c.ageOn() {
		r.age = newAgeChrom(c.cfg.Ages)
	}
	go r.run()
	return r
}

// push sends a filled window to detection, after computing its genetic
// positions.
func (r *chromRun) push(w *window) {
	cmPerMB := r.c.cfg.CMPerMB
	w.cm = w.cm[:w.n]
	if r.cmMap != nil {
		for i, p := range w.pos[:w.n] {
			w.cm[i] = r.cmMap.At(p, cmPerMB)
		}
	} else {
		for i, p := range w.pos[:w.n] {
			w.cm[i] = float64(p) * cmPerMB / 1e6
		}
	}
	if w.n > 0 {
		r.lastCM = w.cm[w.n-1]
	}
	r.nWin++
	r.in <- w
}

func (r *chromRun) run() {
	c := r.c
	defer close(r.done)
	defer func() {
		if e := recover(); e != nil {
			c.setErr(fmt.Errorf("roh: detection on %s failed: %v", r.name, e))
			for range r.in {
			}
		}
		if !c.raw || c.failed() {
			r.releaseAll()
			r.spill.close()
		}
	}()
	ns := c.geo.ns
	if c.geo.hmm {
		r.st = make([]hmmState, ns)
	}
	for w := range r.in {
		if c.failed() {
			c.putWindow(w)
			continue
		}
		if c.geo.hmm && ns > 0 {
			w.u = w.u[:w.n]
			r.buildTable(w, false)
			c.parallel(c.chunks(ns), func(sc *workScratch, i int) {
				s0, s1 := c.chunk(i, ns)
				for s := s0; s < s1; s += 2 {
					s2 := min(s+1, s1-1)
					c.geo.forwardPair(w, &r.tab, &sc.sweep, c.cfg.AutozygousPrior, &r.st[s], &r.st[s2], s, s2)
				}
			})
		}
		if r.age != nil {
			r.age.note(w)
		}
		if err := r.store(w); err != nil {
			c.setErr(err)
		}
	}
	if r.age != nil {
		r.age.finishSpan()
	}
	if c.raw || c.failed() || ns == 0 || len(r.wins) == 0 {
		return
	}
	r.perSample = make([][]Run, ns)
	var err error
	if c.geo.hmm {
		err = r.sweeps()
	} else {
		err = r.wholePasses()
	}
	if err != nil {
		c.setErr(err)
	}
}

// chunks is the number of sample chunks a sweep is split into: a few per
// worker, of an even number of samples (pairs).
func (c *Collector) chunks(ns int) int {
	k := 4 * c.cfg.Threads
	size := (ns + k - 1) / k
	size += size & 1
	return (ns + size - 1) / size
}

func (c *Collector) chunk(i, ns int) (int, int) {
	k := 4 * c.cfg.Threads
	size := (ns + k - 1) / k
	size += size & 1
	return i * size, min((i+1)*size, ns)
}

// buildTable fills r.tab for window w, split over the workers for long
// windows.
func (r *chromRun) buildTable(w *window, haveU bool) {
	r.tab.size(w.n)
	parts := 1
	if w.n >= 1024 {
		parts = r.c.cfg.Threads
	}
	r.c.parallel(parts, func(sc *workScratch, i int) {
		lo, hi := i*w.n/parts, (i+1)*w.n/parts
		r.tab.buildSites(w, &r.c.cfg, lo, hi, haveU)
	})
}

// store keeps window w in memory if the budget allows, else appends it to
// the chromosome's temporary file.
func (r *chromRun) store(w *window) error {
	c := r.c
	if c.mem.keep(w.size) {
		r.wins = append(r.wins, w)
		return nil
	}
	if r.spill == nil {
		s, err := openSpill(c.cfg.tempDir())
		if err != nil {
			c.putWindow(w)
			return err
		}
		r.spill = s
	}
	secs := c.geo.sections(w)
	off, err := r.spill.append(secs)
	c.mem.mu.Lock()
	for _, b := range secs {
		c.mem.spilled += int64(len(b))
	}
	c.mem.mu.Unlock()
	meta := &window{k: w.k, t0: w.t0, n: w.n, nPL: w.nPL, cmPrev: w.cmPrev, off: off}
	r.wins = append(r.wins, meta)
	c.putWindow(w)
	return err
}

// load returns window k with its buffers, read back if spilled.
func (r *chromRun) load(k int) (*window, error) {
	w := r.wins[k]
	if w.off < 0 {
		return w, nil
	}
	g := r.c.geo
	b := r.c.getWindow()
	b.k, b.t0, b.n, b.nPL, b.cmPrev, b.off = w.k, w.t0, w.n, w.nPL, w.cmPrev, w.off
	b.pos, b.freq, b.cm, b.plSite = b.pos[:w.n], b.freq[:w.n], b.cm[:w.n], b.plSite[:w.n]
	if g.hmm {
		b.u = b.u[:w.n]
	}
	if w.nPL > 0 {
		g.allocPL(b)
	}
	if err := r.spill.readAt(g.sections(b), w.off); err != nil {
		r.c.putWindow(b)
		return nil, err
	}
	return b, nil
}

// unload gives back the buffers of a window read by load.
func (r *chromRun) unload(b *window) {
	if b.off >= 0 {
		r.c.putWindow(b)
	}
}

// writeBack stores what sweep 2 changed (path, backward checkpoints) of a
// spilled window.
func (r *chromRun) writeBack(b *window) error {
	if b.off < 0 {
		return nil
	}
	g := r.c.geo
	gb := int64(len(b.geno)) * 8
	cb := int64(len(b.ckF)) * 8
	if err := r.spill.writeAt([][]byte{asBytes(b.bp)}, b.off+gb); err != nil {
		return err
	}
	_ = g
	return r.spill.writeAt([][]byte{asBytes(b.ckB)}, b.off+2*gb+cb)
}

// releaseAll returns the memory of the windows still held.
func (r *chromRun) releaseAll() {
	for k, w := range r.wins {
		if w != nil && w.off < 0 {
			r.c.mem.release(w.size)
			r.c.putWindow(w)
		}
		r.wins[k] = nil
	}
}

// sweeps runs sweeps 2 and 3 (sweep 1 ran as windows arrived).
func (r *chromRun) sweeps() error {
	c := r.c
	g := c.geo
	ns := g.ns
	for s := range r.st {
		st := &r.st[s]
		st.st = stA
		if st.vn >= st.va {
			st.st = stN
		}
		st.ba, st.bn = 1, 1
	}
	for k := len(r.wins) - 1; k >= 0; k-- {
		if c.failed() {
			return nil
		}
		w, err := r.load(k)
		if err != nil {
			return err
		}
		r.buildTable(w, true)
		c.parallel(c.chunks(ns), func(sc *workScratch, i int) {
			s0, s1 := c.chunk(i, ns)
			for s := s0; s < s1; s += 2 {
				s2 := min(s+1, s1-1)
				g.reversePair(w, &r.tab, &sc.sweep, &r.st[s], &r.st[s2], s, s2)
			}
		})
		err = r.writeBack(w)
		r.unload(w)
		if err != nil {
			return err
		}
	}
	r.acc = make([]runAcc, ns)
	maxGap := int64(c.cfg.MaxGapKB * 1000)
	for k := range r.wins {
		if c.failed() {
			return nil
		}
		w, err := r.load(k)
		if err != nil {
			return err
		}
		if g.anyAutozygous(w) {
			r.buildTable(w, true)
		}
		c.parallel(c.chunks(ns), func(sc *workScratch, i int) {
			s0, s1 := c.chunk(i, ns)
			for s := s0; s < s1; s++ {
				g.posteriorSample(w, &r.tab, &sc.sweep, c.cfg.AutozygousPrior, maxGap, s, &r.acc[s], &r.perSample[s])
			}
		})
		r.unload(w)
		if w.off < 0 && r.age == nil {
			c.mem.release(w.size)
			c.putWindow(w)
			r.wins[k] = nil
		}
	}
	for s := range r.acc {
		r.acc[s].close(&r.perSample[s])
	}
	if r.age != nil {
		err := r.ageFit()
		r.releaseAll()
		return err
	}
	return nil
}

// wholePasses runs the detectors that need a whole chromosome per sample
// (the fitted HMM, the rules): the windows are joined into one chromData.
// This path holds the whole chromosome in memory, whatever the budget.
func (r *chromRun) wholePasses() error {
	c := r.c
	ch, err := r.materialize()
	if err != nil {
		return err
	}
	if r.age == nil {
		r.releaseAll()
	}
	c.prepare(ch)
	ns := c.geo.ns
	if c.cfg.Fit && c.cfg.Method == MethodHMM {
		r.fitF = make([]float64, ns)
		r.fitRate = make([]float64, ns)
	}
	c.parallel(c.chunks(ns), func(sc *workScratch, i int) {
		s0, s1 := c.chunk(i, ns)
		for s := s0; s < s1; s++ {
			r.perSample[s] = c.detectWhole(ch, s, &sc.hmm, r.fitF, r.fitRate)
		}
	})
	if r.age != nil {
		ch = nil
		err := r.ageFit()
		r.releaseAll()
		return err
	}
	return nil
}

// materialize joins the windows into the whole-chromosome layout.
func (r *chromRun) materialize() (*chromData, error) {
	g := r.c.geo
	ch := newChromData(r.id, r.name, r.length, g.ns)
	ch.pos = make([]int64, 0, r.nSites)
	ch.freq = make([]float64, 0, r.nSites)
	for k := range r.wins {
		w, err := r.load(k)
		if err != nil {
			return nil, err
		}
		ch.pos = append(ch.pos, w.pos[:w.n]...)
		ch.freq = append(ch.freq, w.freq[:w.n]...)
		nw := (w.n + 31) / 32
		for s := 0; s < g.ns; s++ {
			ch.geno[s] = append(ch.geno[s], w.geno[s*g.ww:s*g.ww+nw]...)
		}
		if w.nPL > 0 && ch.pl == nil {
			ch.pl = make([][]uint8, g.ns)
		}
		for _, k := range w.plSite[:w.n] {
			if k >= 0 {
				k += ch.nPL
			}
			ch.plSite = append(ch.plSite, k)
		}
		if w.nPL > 0 {
			for s := 0; s < g.ns; s++ {
				ch.pl[s] = append(ch.pl[s], w.pl[3*g.w*s:3*g.w*s+3*w.nPL]...)
			}
		}
		ch.nPL += int32(w.nPL)
		r.unload(w)
	}
	return ch, nil
}

// result collects the chromosome's summary and runs (sample-major).
func (r *chromRun) result() ChromResult {
	res := ChromResult{Name: r.name, Length: r.length, NSites: r.nSites, FirstPos: r.firstPos, LastPos: r.lastPos,
		MapSource: r.mapSource, FitF: r.fitF, FitRate: r.fitRate, AgeBP: r.ageBP}
	for _, rs := range r.perSample {
		res.Runs = append(res.Runs, rs...)
	}
	return res
}
