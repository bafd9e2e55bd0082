package roh

import (
	"bytes"
	"fmt"
	"math"
	"sync"

	"fgauge/vcfscan"
)

// Collector receives batches in input order, gathers the sites of the
// current chromosome into windows (see window.go) and hands each full
// window to detection while reading continues. Memory is bounded by
// Config.MemoryBudget: windows beyond it wait in a temporary file. At most
// two chromosomes are in flight: the one being read and the one finishing
// its detection.
//
// A Collector is used from one goroutine (AddBatch, Finish, Close); its
// workers are internal.
type Collector struct {
	cfg     Config
	source  string
	samples []string
	contigs []vcfscan.Contig
	auto    autosomeSet
	autoOf  []int8 // per contig id: 0 unknown, 1 autosome, 2 other
	geo     geometry

	cur      *chromRun // chromosome being read
	win      *window   // its window being filled
	stage    []uint64  // per sample, the calls of the current 32 sites
	curSkip  int       // contig id of the excluded contig being read, or -1
	done     map[int]bool
	lastSeq  int64
	excluded map[string]int64
	chroms   []*chromRun // in input order
	settled  int         // chroms[:settled] are finished

	tasks   chan task
	workers sync.WaitGroup
	mem     memBudget
	free    chan *window

	errMu sync.Mutex
	err   error

	finished bool
	whole    bool // tests: the whole-chromosome passes for the fixed HMM too
	raw      bool // PieceCollector: keep every contig's windows, detect nothing
}

// NewCollector starts cfg.Threads detection workers for the given samples
// (in the order of the batches' calls) and header contigs. cfg is
// validated (and completed) with Config.Validate; it is copied.
func NewCollector(cfg *Config, samples []string, contigs []vcfscan.Contig) (*Collector, error) {
	if cfg == nil {
		cfg = DefaultConfig()
	}
	c := *cfg
	if err := c.Validate(); err != nil {
		return nil, err
	}
	col := &Collector{
		cfg:      c,
		source:   "input",
		samples:  append([]string(nil), samples...),
		auto:     c.autosomes(),
		curSkip:  -1,
		done:     map[int]bool{},
		lastSeq:  -1,
		excluded: map[string]int64{},
		tasks:    make(chan task, 4*c.Threads),
		free:     make(chan *window, 4),
	}
	col.setGeometry()
	col.UpdateContigs(contigs)
	for i := 0; i < c.Threads; i++ {
		col.workers.Add(1)
		go col.worker()
	}
	return col, nil
}

// setGeometry fixes the window layout from the sample count and budget.
func (c *Collector) setGeometry() {
	hmm := c.cfg.Method == MethodHMM && !c.cfg.Fit && !c.whole && !c.raw
	c.geo = newGeometry(len(c.samples), c.cfg.MemoryBudget, hmm)
	if c.ageOn() {
		c.geo.age = ageCkLen(len(c.cfg.Ages.Rates) + 1)
	}
	c.mem = memBudget{limit: c.cfg.MemoryBudget, reserve: 6 * c.geo.bytes(false)}
}

// SetSource names the input in error messages (default "input").
func (c *Collector) SetSource(name string) { c.source = name }

// UpdateContigs replaces the contig list, for readers that append contigs
// first met in records. Earlier entries must not change.
func (c *Collector) UpdateContigs(contigs []vcfscan.Contig) {
	c.contigs = append(c.contigs[:0:0], contigs...)
	for len(c.autoOf) < len(c.contigs) {
		c.autoOf = append(c.autoOf, 0)
	}
}

func (c *Collector) contigName(id int) string {
	if id >= 0 && id < len(c.contigs) {
		return c.contigs[id].Name
	}
	return fmt.Sprintf("contig_%d", id)
}

func (c *Collector) isAutosome(id int) bool {
	if id < 0 || id >= len(c.autoOf) {
		return false
	}
	if c.autoOf[id] == 0 {
		c.autoOf[id] = 2
		if c.auto.is(c.contigs[id].Name) {
			c.autoOf[id] = 1
		}
	}
	return c.autoOf[id] == 1
}

func (c *Collector) parseErr(line int64, field, what string, err error) error {
	return &vcfscan.ParseError{File: c.source, Line: line, Offset: -1, Record: -1, Field: field,
		Err: fmt.Errorf("%s: %w", what, err)}
}

// AddBatch adds a batch. Batches must come in input order (Seq
// increasing) with each chromosome in one stretch and positions not
// decreasing within it. freqs[i] is the alternate-allele frequency of
// record i (for example the cohort frequency from the stats layer); freqs
// may be nil, and a NaN entry means unknown: then the frequency is
// estimated from the calls of this batch's record (all samples, see
// cohortFreq), and a site with no diploid calls at all is uninformative.
// With few samples, pass panel frequencies (for example INFO AF) when
// available: a cohort estimate from a handful of animals is poor. Calls that are
// haploid are treated as missing.
func (c *Collector) AddBatch(b *vcfscan.Batch, freqs []float64) error {
	if c.finished {
		return fmt.Errorf("roh: AddBatch after Finish")
	}
	if err := c.workerErr(); err != nil {
		return err
	}
	if b.Seq <= c.lastSeq {
		return fmt.Errorf("roh: batch %d after batch %d: %w", b.Seq, c.lastSeq, vcfscan.ErrUnsorted)
	}
	c.lastSeq = b.Seq
	if b.NSamples != len(c.samples) {
		return fmt.Errorf("roh: batch has %d samples, collector %d: %w", b.NSamples, len(c.samples), vcfscan.ErrSampleCount)
	}
	if freqs != nil && len(freqs) != len(b.Records) {
		return fmt.Errorf("roh: %d frequencies for %d records", len(freqs), len(b.Records))
	}
	if len(b.GT) < len(b.Records)*b.NSamples || (len(b.PL) > 0 && len(b.PL) < 3*len(b.Records)*b.NSamples) {
		return fmt.Errorf("roh: batch %d holds %d calls and %d likelihoods for %d records of %d samples",
			b.Seq, len(b.GT), len(b.PL), len(b.Records), b.NSamples)
	}
	ns := b.NSamples
	for i := range b.Records {
		rec := &b.Records[i]
		id := rec.ChromID
		if c.cur == nil || c.cur.id != id {
			if c.curSkip != id {
				if err := c.switchChrom(id, rec.Line); err != nil {
					return err
				}
			}
		}
		if c.cur == nil {
			c.excluded[c.contigName(id)]++
			continue
		}
		r := c.cur
		if r.nSites > 0 && rec.Pos < r.lastPos {
			return c.parseErr(rec.Line, "POS", fmt.Sprintf("position %d after %d on %s", rec.Pos, r.lastPos, r.name), vcfscan.ErrUnsorted)
		}
		calls := b.GT[i*ns : (i+1)*ns]
		p := math.NaN()
		if freqs != nil {
			p = freqs[i]
		}
		if p != p {
			p = cohortFreq(calls)
		}
		var pl []uint16
		if len(b.PL) > 0 && i < len(b.HasPL) && b.HasPL[i] {
			pl = b.PL[3*i*ns : 3*(i+1)*ns]
		}
		c.addSite(rec.Pos, p, calls, pl)
	}
	return nil
}

// addSite appends one site to the current chromosome's window, sending
// the window to detection when it is full. Calls go to a staging word
// per sample (sequential writes) and into the window once per 32 sites.
func (c *Collector) addSite(pos int64, p float64, calls []vcfscan.Geno, pl []uint16) {
	r := c.cur
	w := c.win
	if w == nil {
		w = c.getWindow()
		w.reset(r.nWin, r.nSites, r.lastCM)
		c.win = w
	}
	if r.nSites == 0 {
		r.firstPos = pos
	}
	r.nSites++
	r.lastPos = pos
	lt := w.n
	w.n++
	w.pos = append(w.pos, pos)
	w.freq = append(w.freq, p)
	if c.stage == nil {
		c.stage = make([]uint64, len(calls))
	}
	stage := c.stage[:len(calls)]
	sh := uint(lt&31) * 2
	for s, g := range calls {
		if g > 3 {
			g = 3 // haploid calls count as missing
		}
		stage[s] |= uint64(g) << sh
	}
	if pl != nil {
		c.geo.allocPL(w)
		k := w.nPL
		w.nPL++
		w.plSite = append(w.plSite, int32(k))
		stride := 3 * c.geo.w
		for s := range calls {
			d := w.pl[stride*s+3*k : stride*s+3*k+3 : stride*s+3*k+3]
			d[0], d[1], d[2] = cap255(pl[3*s]), cap255(pl[3*s+1]), cap255(pl[3*s+2])
		}
	} else {
		w.plSite = append(w.plSite, -1)
	}
	if lt&31 == 31 {
		c.flushStage()
	}
	if w.n == c.geo.w {
		c.win = nil
		r.push(w)
	}
}

// flushStage moves the staged calls into the current window.
func (c *Collector) flushStage() {
	w := c.win
	if w == nil || w.n == 0 {
		return
	}
	k := (w.n - 1) >> 5
	ww := c.geo.ww
	for s, v := range c.stage {
		w.geno[s*ww+k] = v
		c.stage[s] = 0
	}
}

func cap255(v uint16) uint8 {
	if v > 255 {
		return 255
	}
	return uint8(v)
}

// cohortFreq estimates the alternate-allele frequency from the diploid
// calls with one pseudo-count per allele, (alt+1)/(2n+2) (Laplace's rule
// of succession; common practice): in a small cohort a sample's own calls
// would otherwise make every site where all are homozygous look
// monomorphic and so uninformative. NaN when there are no diploid calls.
func cohortFreq(calls []vcfscan.Geno) float64 {
	var n, alt int
	for _, g := range calls {
		if g <= vcfscan.HomAlt {
			n += 2
			alt += int(g)
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return float64(alt+1) / float64(n+2)
}

// switchChrom closes the current chromosome and opens id.
func (c *Collector) switchChrom(id int, line int64) error {
	c.closeChrom()
	if c.curSkip >= 0 {
		c.done[c.curSkip] = true
		c.curSkip = -1
	}
	if c.done[id] {
		return c.parseErr(line, "CHROM", fmt.Sprintf("chromosome %s seen again after another", c.contigName(id)), vcfscan.ErrUnsorted)
	}
	if !c.raw && !c.isAutosome(id) {
		c.curSkip = id
		return nil
	}
	// at most two chromosomes in flight: the one finishing detection and
	// this one
	c.settle(len(c.chroms))
	c.cur = c.newChromRun(id)
	c.chroms = append(c.chroms, c.cur)
	return nil
}

// closeChrom sends the last window of the current chromosome to
// detection; detection finishes in the background.
func (c *Collector) closeChrom() {
	r := c.cur
	if r == nil {
		return
	}
	c.done[r.id] = true
	if w := c.win; w != nil {
		if w.n&31 != 0 {
			c.flushStage()
		}
		c.win = nil
		r.push(w)
	}
	close(r.in)
	c.cur = nil
}

// settle waits until the chromosomes before chroms[upto] are detected.
func (c *Collector) settle(upto int) {
	for ; c.settled < upto; c.settled++ {
		<-c.chroms[c.settled].done
	}
}

// prepare computes genetic positions and the shared emission and
// transition tables of a whole chromosome (whole-chromosome passes).
func (c *Collector) prepare(ch *chromData) {
	n := len(ch.pos)
	ch.cm = make([]float64, n)
	if m := c.cfg.Map.Chrom(ch.name); m != nil && len(m.Pos) > 0 {
		for i, p := range ch.pos {
			ch.cm[i] = m.At(p, c.cfg.CMPerMB)
		}
	} else {
		for i, p := range ch.pos {
			ch.cm[i] = float64(p) * c.cfg.CMPerMB / 1e6
		}
	}
	if c.cfg.Method != MethodHMM {
		return
	}
	ch.emit = make([]float32, 8*n)
	for t := 0; t < n; t++ {
		emissionRow(ch.emit[8*t:8*t+8], ch.freq[t], c.cfg.GenotypeError)
	}
	if !c.cfg.Fit {
		ch.trans = make([]float64, n)
		switchWeights(ch.trans, ch.cm, c.cfg.Rate)
	}
}

func (c *Collector) setErr(err error) {
	c.errMu.Lock()
	if c.err == nil {
		c.err = err
	}
	c.errMu.Unlock()
}

func (c *Collector) workerErr() error {
	c.errMu.Lock()
	defer c.errMu.Unlock()
	return c.err
}

func (c *Collector) failed() bool { return c.workerErr() != nil }

// detectWhole finds the runs of sample s on a whole chromosome with the
// whole-chromosome passes: the rules, or the HMM one sample at a time
// (with EM when fitting, storing the fitted values in fitF and fitRate).
func (c *Collector) detectWhole(ch *chromData, s int, sc *hmmScratch, fitF, fitRate []float64) []Run {
	maxGap := int64(c.cfg.MaxGapKB * 1000)
	if c.cfg.Method == MethodRules {
		return rulesRuns(ch, s, sc, &c.cfg.Rules, maxGap)
	}
	hasPL := ch.pl != nil
	sc.code = grow(sc.code, len(ch.pos))
	ch.unpack(s, sc.code)
	if hasPL || c.cfg.Fit {
		sc.fillEmissions(ch, s)
	}
	u, f := ch.trans, c.cfg.AutozygousPrior
	if c.cfg.Fit {
		fa, a := sc.fitSample(ch.cm, c.cfg.AutozygousPrior, c.cfg.Rate, c.cfg.FitIterations)
		fitF[s], fitRate[s] = fa, a
		switchWeights(sc.tr, ch.cm, a)
		u, f = sc.tr, fa
	}
	sc.forwardViterbi(ch, u, f, !hasPL && !c.cfg.Fit)
	sc.backward(u, f, ch.cm, nil, sc.path)
	return hmmRuns(ch, s, sc.code, sc.path, sc.post, maxGap)
}

// hmmRuns turns the Viterbi path into runs: maximal stretches in the
// autozygous state, split where consecutive sites are more than maxGap bp
// apart, trimmed to start and end on called sites.
func hmmRuns(ch *chromData, s int, code, path []uint8, post []float64, maxGap int64) []Run {
	var runs []Run
	n := len(path)
	t := 0
	for t < n {
		if path[t] != stA {
			// skip to the next autozygous site (IndexByte is vectorised)
			k := bytes.IndexByte(path[t:], stA)
			if k < 0 {
				break
			}
			t += k
		}
		u := t
		for u+1 < n && path[u+1] == stA && ch.pos[u+1]-ch.pos[u] <= maxGap {
			u++
		}
		// trim missing ends
		a, b := t, u
		for a <= b && code[a] == 3 {
			a++
		}
		for b >= a && code[b] == 3 {
			b--
		}
		if a <= b {
			r := Run{Sample: s, Start: ch.pos[a], End: ch.pos[b], StartCM: ch.cm[a], EndCM: ch.cm[b], NSites: b - a + 1}
			var q float64
			for k := a; k <= b; k++ {
				switch code[k] {
				case 1:
					r.NHet++
				case 3:
					r.NMissing++
				}
				q += post[k]
			}
			r.Quality = q / float64(r.NSites)
			runs = append(runs, r)
		}
		t = u + 1
	}
	return runs
}

// Finish waits for detection and returns the result. The Collector must
// not be used afterwards (Close is then a no-op).
func (c *Collector) Finish() (*Result, error) {
	if c.finished {
		return nil, fmt.Errorf("roh: Finish called twice")
	}
	c.shutdown()
	if err := c.workerErr(); err != nil {
		return nil, err
	}
	r := &Result{
		Method:        c.cfg.Method,
		Samples:       c.samples,
		Classes:       append([]float64(nil), c.cfg.Classes...),
		GenotypeError: c.cfg.GenotypeError,
		CMPerMB:       c.cfg.CMPerMB,
		Fit:           c.cfg.Fit,
		MapUsed:       c.cfg.Map != nil,
		AgeRates:      c.ageRates(),
		AgeMarginCM:   c.cfg.AgeMarginCM,
		AgeWhole:      c.cfg.AgeWholeChromosome && c.cfg.Ages != nil,
		AgeWholeShare: c.cfg.AgeWholeShare,
		Excluded:      c.excluded,
	}
	for _, ch := range c.chroms {
		r.Chroms = append(r.Chroms, ch.result())
	}
	c.chroms = nil
	return r, nil
}

// Close abandons detection (for example when the run is cancelled): it
// stops the workers, waits for them and frees the temporary files. Safe
// to call after Finish, and more than once.
func (c *Collector) Close() {
	if c.finished {
		return
	}
	c.setErr(errClosed)
	c.shutdown()
	c.chroms = nil
}

// Cancel makes detection stop at its next window: Finish, when running,
// then returns an error soon. Unlike the other methods it may be called
// from any goroutine, also while Finish runs (for example on interrupt).
func (c *Collector) Cancel() { c.setErr(errClosed) }

var errClosed = fmt.Errorf("roh: collector closed")

func (c *Collector) shutdown() {
	c.closeChrom()
	c.settle(len(c.chroms))
	c.finished = true
	close(c.tasks)
	c.workers.Wait()
}
