package roh

import (
	"bytes"
	"fmt"
	"math"
	"sync"

	"fgauge/vcfscan"
)

// Collector receives batches in input order, keeps the genotypes of the
// current chromosome and hands each finished chromosome to a pool of
// detection workers while reading continues. At most two chromosomes are
// held: the one being read and the one being detected (a third waits for
// the detection before it is queued).
//
// A Collector is used from one goroutine (AddBatch, Finish); its workers
// are internal.
type Collector struct {
	cfg     Config
	source  string
	samples []string
	contigs []vcfscan.Contig
	auto    autosomeSet
	autoOf  []int8 // per contig id: 0 unknown, 1 autosome, 2 other

	cur      *chromData
	curSkip  int // contig id of the excluded contig being read, or -1
	done     map[int]bool
	lastSeq  int64
	excluded map[string]int64
	chroms   []*chromWork

	jobs     chan job
	workers  sync.WaitGroup
	pending  *sync.WaitGroup // detection of inFlight
	inFlight *chromWork
	density  float64 // sites per bp of the last chromosome with a length

	errMu sync.Mutex
	err   error

	finished bool
	oneLane  bool // tests: detect one sample at a time only
}

// chromWork is one chromosome sent to detection.
type chromWork struct {
	res       ChromResult // summary now, runs once detected
	data      *chromData
	perSample [][]Run
	fitF      []float64
	fitRate   []float64
	mapSource string
}

type job struct {
	w      *chromWork
	s0, s1 int
	done   *sync.WaitGroup
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
		jobs:     make(chan job, 4*c.Threads),
	}
	col.UpdateContigs(contigs)
	for i := 0; i < c.Threads; i++ {
		col.workers.Add(1)
		go col.worker()
	}
	return col, nil
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
		ch := c.cur
		if n := len(ch.pos); n > 0 && rec.Pos < ch.pos[n-1] {
			return c.parseErr(rec.Line, "POS", fmt.Sprintf("position %d after %d on %s", rec.Pos, ch.pos[n-1], ch.name), vcfscan.ErrUnsorted)
		}
		calls := b.GT[i*ns : (i+1)*ns]
		p := math.NaN()
		if freqs != nil {
			p = freqs[i]
		}
		if p != p {
			p = cohortFreq(calls)
		}
		t := len(ch.pos)
		ch.pos = append(ch.pos, rec.Pos)
		ch.freq = append(ch.freq, p)
		// Calls go to a staging word per sample (sequential writes) and
		// are appended to the per-sample slices once per 32 sites.
		if ch.stage == nil {
			ch.stage = make([]uint64, ns)
		}
		stage := ch.stage[:len(calls)]
		sh := uint(t&31) * 2
		for s, g := range calls {
			if g > 3 {
				g = 3 // haploid calls count as missing
			}
			stage[s] |= uint64(g) << sh
		}
		if t&31 == 31 {
			ch.flushStage()
		}
		if len(b.PL) > 0 && i < len(b.HasPL) && b.HasPL[i] {
			if ch.pl == nil {
				ch.pl = make([][]uint8, ns)
				ch.stagePL = make([]uint8, ns*plBlock*3)
			}
			// Likelihoods are staged like the calls: plBlock sites per
			// sample, appended to the per-sample slices in one copy.
			pl := b.PL[3*i*ns : 3*(i+1)*ns]
			k := 3 * int(ch.nPL%plBlock)
			stage := ch.stagePL[:ns*plBlock*3]
			for s := 0; s < ns; s++ {
				d := stage[s*plBlock*3+k : s*plBlock*3+k+3 : s*plBlock*3+k+3]
				q := pl[3*s : 3*s+3 : 3*s+3]
				d[0], d[1], d[2] = cap255(q[0]), cap255(q[1]), cap255(q[2])
			}
			ch.plSite = append(ch.plSite, ch.nPL)
			ch.nPL++
			if ch.nPL%plBlock == 0 {
				ch.flushStagePL()
			}
		} else {
			ch.plSite = append(ch.plSite, -1)
		}
	}
	return nil
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
	if c.cur != nil {
		c.done[c.cur.id] = true
		c.dispatch(c.cur)
		c.cur = nil
	}
	if c.curSkip >= 0 {
		c.done[c.curSkip] = true
		c.curSkip = -1
	}
	if c.done[id] {
		return c.parseErr(line, "CHROM", fmt.Sprintf("chromosome %s seen again after another", c.contigName(id)), vcfscan.ErrUnsorted)
	}
	if !c.isAutosome(id) {
		c.curSkip = id
		return nil
	}
	c.cur = newChromData(id, c.contigs[id].Name, c.contigs[id].Length, len(c.samples))
	c.reserve(c.cur)
	return nil
}

// reserve gives the per-sample genotype slices of a new chromosome room
// for the sites expected from the previous chromosome's density and this
// one's header length (plus 10%), so that they rarely grow by copying.
// Without lengths, or for the first chromosome, slices grow as needed.
func (c *Collector) reserve(ch *chromData) {
	if c.density <= 0 || ch.length <= 0 {
		return
	}
	sites := c.density * float64(ch.length) * 1.1
	words := int(sites/32) + 1
	if words > 1<<26 {
		return
	}
	for s := range ch.geno {
		ch.geno[s] = make([]uint64, 0, words)
	}
}

// prepare computes genetic positions and the shared emission and
// transition tables of a finished chromosome.
func (c *Collector) prepare(ch *chromData, w *chromWork) {
	n := len(ch.pos)
	ch.cm = make([]float64, n)
	w.mapSource = "cm_per_mb"
	if m := c.cfg.Map.Chrom(ch.name); m != nil && len(m.Pos) > 0 {
		w.mapSource = "genetic_map"
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

// dispatch queues a finished chromosome for detection, after the previous
// one is done (bounding memory).
func (c *Collector) dispatch(ch *chromData) {
	ch.flushStage()
	ch.flushStagePL()
	w := &chromWork{data: ch, perSample: make([][]Run, len(c.samples))}
	w.res = ChromResult{Name: ch.name, Length: ch.length, NSites: len(ch.pos)}
	if n := len(ch.pos); n > 0 {
		w.res.FirstPos, w.res.LastPos = ch.pos[0], ch.pos[n-1]
		if ch.length > 0 {
			c.density = float64(n) / float64(ch.length)
		}
	}
	c.chroms = append(c.chroms, w)
	c.settle()
	if len(ch.pos) == 0 || len(c.samples) == 0 {
		w.release()
		return
	}
	c.prepare(ch, w)
	if c.cfg.Fit && c.cfg.Method == MethodHMM {
		w.fitF = make([]float64, len(c.samples))
		w.fitRate = make([]float64, len(c.samples))
	}
	ns := len(c.samples)
	chunk := (ns + 4*c.cfg.Threads - 1) / (4 * c.cfg.Threads)
	if chunk < 1 {
		chunk = 1
	}
	wg := &sync.WaitGroup{}
	var js []job
	for s0 := 0; s0 < ns; s0 += chunk {
		s1 := min(s0+chunk, ns)
		wg.Add(1)
		js = append(js, job{w: w, s0: s0, s1: s1, done: wg})
	}
	c.pending, c.inFlight = wg, w
	go func() {
		for _, j := range js {
			c.jobs <- j
		}
	}()
}

// settle waits for the chromosome in detection, if any, and keeps only
// its runs, so that its genotypes can be collected by the garbage
// collector.
func (c *Collector) settle() {
	if c.pending != nil {
		c.pending.Wait()
		c.inFlight.release()
		c.pending, c.inFlight = nil, nil
	}
}

// release moves the detected runs into the chromosome's result and drops
// the raw data.
func (w *chromWork) release() {
	w.res.MapSource = w.mapSource
	w.res.FitF, w.res.FitRate = w.fitF, w.fitRate
	for _, rs := range w.perSample {
		w.res.Runs = append(w.res.Runs, rs...)
	}
	w.data, w.perSample = nil, nil
}

func (c *Collector) worker() {
	defer c.workers.Done()
	var sc [2]hmmScratch
	for j := range c.jobs {
		c.detect(&sc, j)
		j.done.Done()
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

// detect finds the runs of samples j.s0..j.s1-1 on one chromosome. With
// the HMM and fixed parameters, samples go through the passes two at a
// time (forwardViterbi2, backward2).
func (c *Collector) detect(scs *[2]hmmScratch, j job) {
	defer func() {
		if r := recover(); r != nil {
			c.setErr(fmt.Errorf("roh: detection on %s failed: %v", j.w.data.name, r))
		}
	}()
	ch := j.w.data
	sc := &scs[0]
	maxGap := int64(c.cfg.MaxGapKB * 1000)
	hasPL := ch.pl != nil
	pairs := c.cfg.Method == MethodHMM && !c.cfg.Fit && !c.oneLane
	for s := j.s0; s < j.s1; s++ {
		if c.cfg.Method == MethodRules {
			j.w.perSample[s] = rulesRuns(ch, s, sc, &c.cfg.Rules, maxGap)
			continue
		}
		sc.code = grow(sc.code, len(ch.pos))
		ch.unpack(s, sc.code)
		if pairs && s+1 < j.s1 {
			s2 := &scs[1]
			s2.code = grow(s2.code, len(ch.pos))
			ch.unpack(s+1, s2.code)
			if hasPL {
				sc.fillEmissions(ch, s)
				s2.fillEmissions(ch, s+1)
			}
			forwardViterbi2(ch, ch.trans, c.cfg.AutozygousPrior, sc, s2, !hasPL)
			backward2(ch.trans, c.cfg.AutozygousPrior, sc, s2)
			j.w.perSample[s] = hmmRuns(ch, s, sc.code, sc.path, sc.post, maxGap)
			j.w.perSample[s+1] = hmmRuns(ch, s+1, s2.code, s2.path, s2.post, maxGap)
			s++
			continue
		}
		if hasPL || c.cfg.Fit {
			sc.fillEmissions(ch, s)
		}
		u, f := ch.trans, c.cfg.AutozygousPrior
		if c.cfg.Fit {
			fa, a := sc.fitSample(ch.cm, c.cfg.AutozygousPrior, c.cfg.Rate, c.cfg.FitIterations)
			j.w.fitF[s], j.w.fitRate[s] = fa, a
			switchWeights(sc.tr, ch.cm, a)
			u, f = sc.tr, fa
		}
		sc.forwardViterbi(ch, u, f, !hasPL && !c.cfg.Fit)
		sc.backward(u, f, ch.cm, nil, sc.path)
		j.w.perSample[s] = hmmRuns(ch, s, sc.code, sc.path, sc.post, maxGap)
	}
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
// not be used afterwards.
func (c *Collector) Finish() (*Result, error) {
	if c.finished {
		return nil, fmt.Errorf("roh: Finish called twice")
	}
	if c.cur != nil {
		c.done[c.cur.id] = true
		c.dispatch(c.cur)
		c.cur = nil
	}
	c.settle()
	c.finished = true
	close(c.jobs)
	c.workers.Wait()
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
		Excluded:      c.excluded,
	}
	for _, w := range c.chroms {
		r.Chroms = append(r.Chroms, w.res)
	}
	c.chroms = nil
	return r, nil
}
