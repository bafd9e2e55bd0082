package roh

import (
	"errors"
	"fmt"
	"math"
	"strconv"
)

// Age-stratified autozygosity.
//
// The model is the multiple-class hidden Markov model of Druet & Gautier
// (2017, Molecular Ecology 26:5820-5841): K autozygous (HBD) classes and
// one non-autozygous class. Class k has a rate R_k per Morgan; a segment
// of class k is exponentially long with mean 1/R_k Morgans (100/R_k cM),
// and R_k is about twice the number of generations back to the common
// ancestor whose copies meet in the segment (2G meioses separate the two
// copies). Between two sites d Morgans apart the chain stays in its class
// with probability exp(-R_k d); otherwise it draws a new class (possibly
// the same) from the mixing proportions rho. So
//
//	P(k -> l) = exp(-R_k d) [k == l] + (1 - exp(-R_k d)) rho_l,
//
// and the first site's class is drawn from rho. The non-autozygous class
// has its own rate, by default that of the oldest autozygous class (as
// Druet & Gautier do). With one autozygous class and both rates equal to
// a, this is the two-state chain of Leutenegger et al. (2003, Am J Hum
// Genet 73:516-523) that the "hmm" detector uses (rho = (f, 1-f)), which
// TestAgesOneClassMatchesHMM checks.
//
// Emissions are those of the two-state detector (emissionRow, or the
// phred-likelihood sums of fillEmissions): every autozygous class shares
// the autozygous emission. Per sample and chromosome the mixing
// proportions are fitted by expectation-maximisation, the rates stay on
// their grid.
//
// Cost: the transition factorises, so one step costs O(K) and not O(K^2):
//
//	alpha_t(l) = e_l(t) [exp(-R_l d) alpha_{t-1}(l) + rho_l s],
//	s = sum_k (1 - exp(-R_k d)) alpha_{t-1}(k),
//
// and exp(-R_k d) for every class and interval is computed once per
// chromosome (AgeTables) and shared by all samples: the per-sample step is
// table lookups and multiply-adds, with no exp or log. The EM rounds are
// accelerated by SQUAREM and stop when the per-class shares settle.
//
// Outputs, per sample and chromosome (AgeFit): the posterior length of
// each class, sum over sites of posterior x the site's span (half of each
// neighbouring interval, intervals over MaxGapBP weigh nothing), rounded
// once to int64 fixed point (AgeUnit per bp), so that sums over
// chromosomes and shards are exact and order-free. f_within_<G>g (FWithin)
// is the summed length of the autozygous classes with R_k <= 2G over the
// covered length f_roh divides by (Result.Covered). The fit of a
// chromosome depends on that chromosome alone (mixing proportions are
// fitted per sample and chromosome, not genome-wide), which is what keeps
// shards byte-identical. RunClass gives a run's most probable class and
// its mean posterior.
//
// Cost (BenchmarkAgesPass, BenchmarkAgesFit, BenchmarkAgesFitWindows; 1,000
// samples x 5,000 sites, CPU time, 2 cores at load 16-28): one
// forward-backward pass of the 8+1 classes is 4.2x the two-state
// detector's one-lane passes measured in the same run (about 84 against
// 20 ns per genotype); the whole-chromosome fit takes 6.9 rounds on
// average, about 570 ns per genotype, some 30x the two-state detector.
// That is far beyond the budget of the full scan, so the scan should fit
// in windows: FitWindows over the two-state runs widened by AgeWindows
// (1 cM), costing about 900 ns per genotype inside the windows (10.5
// rounds) and nothing outside. Windows hold 1.7% of the sites of
// unrelated array-density animals and 11-20% of those of full-sib to
// selfed offspring (simulated), so about 15 ns per genotype of an outbred
// cohort (as much again as the two-state detector) and 100-180 ns in a
// heavily inbred one. The price: outside the windows everything counts as
// non-autozygous, so f_within_<G>g for G >= 64 sees only the ancient
// sharing next to runs, and windowed f_within_8g ran 0.005-0.03 below
// realized F where the whole fit did not (TestAgesPedigreeF).
//
// Memory: shared tables 32 + 16(K+1) + 8 bytes per site (184 for K = 8)
// per chromosome; per worker 24 + 8(K+1) bytes per site (96 for K = 8)
// for the chromosome being fitted, reused across samples (one sample at a
// time). Viterbi, used only by checks, adds K+1 bytes per site.

// ErrAgeConfig is wrapped by errors about an invalid AgeConfig.
var ErrAgeConfig = errors.New("invalid age-class configuration")

// AgeGenerations are the generation bounds G of the f_within_<G>g
// columns: 2, 4, ..., 256.
var AgeGenerations = []int{2, 4, 8, 16, 32, 64, 128, 256}

// AgeConfig controls the age-stratified model.
type AgeConfig struct {
	// Rates are the rates R_k (per Morgan) of the autozygous classes,
	// increasing (youngest class first). The default grid is R_k = 2G_k
	// for G_k in AgeGenerations: 4, 8, ..., 512 per Morgan, mean segment
	// lengths 25, 12.5, ..., 0.195 cM. Class k then stands for common
	// ancestors about G_k generations back, and f_within_<G>g sums the
	// classes with R_k <= 2G.
	Rates []float64
	// NonAutozygousRate is the rate of the non-autozygous class; 0 means
	// the largest of Rates.
	NonAutozygousRate float64
	// GenotypeError is the per-call error rate of the emissions (see
	// emissionRow).
	GenotypeError float64
	// Start are the starting stationary shares of the autozygous classes
	// (one per rate; the non-autozygous class takes the rest). nil means
	// 0.01 per class. The mixing proportions are rho_k proportional to
	// share_k * R_k.
	Start []float64
	// Iterations bounds the EM rounds of the mixing proportions; 0 keeps
	// the start (no fitting). Each round is one forward and one backward
	// pass.
	Iterations int
	// Tolerance stops EM when no class's share of the (windowed)
	// chromosome's posterior length moved by more than it since the last
	// round: the outputs have settled even where a tiny mixing proportion
	// still moves.
	Tolerance float64
	// PriorCount is added to the expected draws of every class in each EM
	// round (a Dirichlet prior on the mixing proportions, so the rounds
	// give its posterior mode): with the few segments of one chromosome,
	// plain EM often gives all of a sample's recent autozygosity to one
	// class next to the true one. 0 is plain EM.
	PriorCount float64
	// MaxGapBP: an interval between consecutive sites longer than this
	// weighs nothing in the per-class lengths (as runs are split there);
	// 0 means no limit.
	MaxGapBP int64
}

// DefaultAgeConfig returns the log2 grid of 8 autozygous classes (see
// AgeConfig.Rates), genotype error 0.001 (as the two-state detector), 20
// EM rounds at most with tolerance 2e-4, a prior count of 0.5 draws per
// class, and runs split at 1 Mb gaps. The starting shares, the round
// limit and the prior count are our choices (the prior count brought
// r(f_within_8g, planted recent F) from 0.989 to 0.993 in
// TestAgesPlantedRecovery).
func DefaultAgeConfig() *AgeConfig {
	r := make([]float64, len(AgeGenerations))
	for i, g := range AgeGenerations {
		r[i] = 2 * float64(g)
	}
	return &AgeConfig{Rates: r, GenotypeError: 0.001, Iterations: 20, Tolerance: 2e-4, PriorCount: 0.5, MaxGapBP: 1_000_000}
}

// maxAgeStates bounds K+1 so that a path fits in a byte and scratch
// arrays live on the stack.
const maxAgeStates = 32

// Validate checks the configuration and fills defaults.
func (c *AgeConfig) Validate() error {
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%w: %s", ErrAgeConfig, fmt.Sprintf(format, a...))
	}
	if len(c.Rates) == 0 || len(c.Rates)+1 > maxAgeStates {
		return bad("%d autozygous classes: want 1 to %d", len(c.Rates), maxAgeStates-1)
	}
	for i, r := range c.Rates {
		if !(r > 0) || math.IsInf(r, 0) || (i > 0 && r <= c.Rates[i-1]) {
			return bad("rates %v: want positive and increasing", c.Rates)
		}
	}
	if c.NonAutozygousRate == 0 {
		c.NonAutozygousRate = c.Rates[len(c.Rates)-1]
	}
	if !(c.NonAutozygousRate > 0) || math.IsInf(c.NonAutozygousRate, 0) {
		return bad("non-autozygous rate %g: want a positive number", c.NonAutozygousRate)
	}
	if !(c.GenotypeError > 0 && c.GenotypeError < 0.5) {
		return bad("genotype error %g: want a value in (0, 0.5)", c.GenotypeError)
	}
	if c.Start == nil {
		c.Start = make([]float64, len(c.Rates))
		for i := range c.Start {
			c.Start[i] = 0.01
		}
	}
	tot := 0.0
	for _, v := range c.Start {
		if !(v > 0) {
			return bad("starting share %g: want positive", v)
		}
		tot += v
	}
	if len(c.Start) != len(c.Rates) || !(tot < 1) {
		return bad("starting shares %v: want one per class, summing below 1", c.Start)
	}
	if c.Iterations < 0 || c.Tolerance < 0 || c.MaxGapBP < 0 || !(c.PriorCount >= 0) {
		return bad("iterations, tolerance and maximum gap must not be negative")
	}
	return nil
}

// StartMixing returns the starting mixing proportions (K+1, the
// non-autozygous class last) of a validated configuration.
func (c *AgeConfig) StartMixing() []float64 {
	k := len(c.Rates)
	rho := make([]float64, k+1)
	rest := 1.0
	for i, sh := range c.Start {
		rho[i] = sh * c.Rates[i]
		rest -= sh
	}
	rho[k] = rest * c.NonAutozygousRate
	normalise(rho)
	return rho
}

func normalise(x []float64) {
	s := 0.0
	for _, v := range x {
		s += v
	}
	for i := range x {
		x[i] /= s
	}
}

// AgeColumn names the column of generation bound g: "f_within_8g".
func AgeColumn(g int) string { return "f_within_" + strconv.Itoa(g) + "g" }

// AgeTables are the per-site tables of one chromosome, shared read-only
// by every sample and worker: 8 emission probabilities (emissionRow), and
// for each of the K+1 classes the probability of staying in the class
// over the interval before the site, exp(-R_k d), and of drawing anew,
// 1 - exp(-R_k d); plus each site's weight in the per-class lengths.
// Memory: 32 + 16(K+1) + 8 bytes per site (184 for K = 8).
type AgeTables struct {
	K    int
	N    int       // sites
	Emit []float32 // 8 per site
	vu   []float64 // 2(K+1) per site: stay for each class, then leave
	Span []float64 // bp per site: half of each neighbouring interval not longer than MaxGapBP
}

// NewAgeTables builds the tables of one chromosome from the site
// positions (bp, not decreasing), genetic positions (cM, as the detector
// prepares them from a map or a constant cM/Mb) and alternate-allele
// frequencies (NaN: unknown, uninformative). emit, when not nil, is the
// detector's emission table of the same sites (8 per site, emissionRow
// with the same genotype error) and is shared instead of recomputed.
// cfg must be validated.
func NewAgeTables(cfg *AgeConfig, pos []int64, cm, freq []float64, emit []float32) *AgeTables {
	n := len(pos)
	k := len(cfg.Rates)
	t := &AgeTables{K: k, N: n, Emit: emit, vu: make([]float64, 2*(k+1)*n), Span: make([]float64, n)}
	if t.Emit == nil {
		t.Emit = make([]float32, 8*n)
		for i := 0; i < n; i++ {
			emissionRow(t.Emit[8*i:8*i+8], freq[i], cfg.GenotypeError)
		}
	}
	rates := append(append([]float64(nil), cfg.Rates...), cfg.NonAutozygousRate)
	m := k + 1
	for i := 0; i < n; i++ {
		row := t.vu[2*m*i : 2*m*(i+1)]
		d := 0.0
		if i > 0 {
			d = max(cm[i]-cm[i-1], 0) / 100
		}
		for c, r := range rates {
			u := -math.Expm1(-r * d)
			row[c], row[m+c] = 1-u, u
		}
		if i > 0 {
			gap := pos[i] - pos[i-1]
			if cfg.MaxGapBP == 0 || gap <= cfg.MaxGapBP {
				h := float64(gap) / 2
				t.Span[i-1] += h
				t.Span[i] += h
			}
		}
	}
	return t
}

// AgeUnit is the fixed-point scale of AgeFit.ClassBP: units per bp.
const AgeUnit = 1 << 24

// AgeFit is the outcome for one sample on one chromosome.
type AgeFit struct {
	// Mixing are the mixing proportions used for the posteriors (K+1, the
	// non-autozygous class last).
	Mixing []float64
	// ClassBP is, per class, the sum over sites of the posterior
	// probability of the class times the site's span (AgeTables.Span), in
	// units of 1/AgeUnit bp, rounded once per chromosome: integer sums
	// over chromosomes and shards are exact whatever their order. The
	// autozygous classes' entries over the covered length give
	// f_within_<G>g (see FWithin).
	ClassBP []int64
	// Rounds is the number of EM rounds run.
	Rounds int
}

// AgeWorker holds one worker's scratch, reused across samples and
// chromosomes: 2 emissions, K+1 forward values and one draw term per
// site (24 + 8(K+1) bytes per site, 96 for K = 8). After Fit the forward values are
// replaced by the posteriors of the last pass, which RunClass reads.
type AgeWorker struct {
	em    []float64 // emission pairs: own, or the caller's (LoadEmissions)
	own   []float64
	alpha []float64
	sdraw []float64
	m     int // K+1 of the last Fit
	n     int

	general bool // tests: never the 9-class passes
}

// LoadCodes fills the sample's emissions from genotype codes (0, 1, 2
// copies of ALT, 3 missing) by table lookup, as the two-state detector
// does without likelihoods.
func (w *AgeWorker) LoadCodes(t *AgeTables, codes []uint8) {
	n := t.N
	w.em = grow(w.own, 2*n)
	w.own = w.em
	em, tab := w.em, t.Emit
	for i, g := range codes[:n] {
		g &= 3
		row := tab[8*i : 8*i+8 : 8*i+8]
		em[2*i], em[2*i+1] = float64(row[g]), float64(row[4+g])
	}
}

// LoadEmissions takes the sample's emission pairs (autozygous,
// non-autozygous per site, 2 per site) as the two-state detector holds
// them after its forward pass (looked up from the codes, or summed over
// phred likelihoods by fillEmissions), without copying: em must not
// change until the next Load. The worker never writes to it.
func (w *AgeWorker) LoadEmissions(em []float64) {
	w.em = em
}

// Fit fits the mixing proportions of the loaded sample by EM (at most
// cfg.Iterations rounds from cfg.StartMixing) over the whole chromosome
// and returns the per-class posterior lengths of the last round. cfg must
// be the validated configuration t was built with.
func (w *AgeWorker) Fit(t *AgeTables, cfg *AgeConfig) AgeFit {
	return w.fit(t, cfg.StartMixing(), cfg.Iterations, cfg.Tolerance, cfg.PriorCount, nil)
}

// FitWindows is Fit restricted to windows: half-open site index ranges
// [lo, hi), sorted and disjoint (see AgeWindows). Each window is an
// independent stretch of the chain whose first class is drawn from the
// mixing proportions, as at a chromosome start; the mixing proportions
// are fitted on the windows together, and every site outside them counts
// as non-autozygous in ClassBP. The prior count is scaled by the share of
// the chromosome's span inside the windows. Posterior and RunClass are
// valid inside the windows only.
func (w *AgeWorker) FitWindows(t *AgeTables, cfg *AgeConfig, windows [][2]int) AgeFit {
	if windows == nil {
		windows = [][2]int{}
	}
	return w.fit(t, cfg.StartMixing(), cfg.Iterations, cfg.Tolerance, cfg.PriorCount, windows)
}

// Posteriors runs one forward-backward pass with fixed mixing proportions
// (no fitting) and returns the per-class posterior lengths.
func (w *AgeWorker) Posteriors(t *AgeTables, rho []float64) AgeFit {
	return w.fit(t, append([]float64(nil), rho...), 1, 0, 0, nil)
}

// pass runs forward and backward over every window.
func (w *AgeWorker) pass(t *AgeTables, rho []float64, windows [][2]int) (sums, counts [maxAgeStates]float64) {
	for _, win := range windows {
		if win[1] <= win[0] {
			continue
		}
		if t.K+1 == m9 && !w.general {
			w.forward9(t, rho, win[0], win[1])
			w.backward9(t, rho, win[0], win[1], &sums, &counts)
			continue
		}
		w.forward(t, rho, win[0], win[1])
		w.backward(t, rho, win[0], win[1], &sums, &counts)
	}
	return
}

func (w *AgeWorker) fit(t *AgeTables, rho []float64, rounds int, tol, prior float64, windows [][2]int) AgeFit {
	m := t.K + 1
	n := t.N
	w.m, w.n = m, n
	res := AgeFit{ClassBP: make([]int64, m)}
	if n == 0 {
		res.Mixing = rho
		return res
	}
	outside := 0.0 // span outside the windows
	if windows == nil {
		windows = [][2]int{{0, n}}
	} else {
		next := 0
		for _, win := range windows {
			if win[0] < next || win[1] > n || win[0] > win[1] {
				panic(fmt.Sprintf("roh: age windows %v not sorted, disjoint and within %d sites", windows, n))
			}
			for i := next; i < win[0]; i++ {
				outside += t.Span[i]
			}
			next = win[1]
		}
		for i := next; i < n; i++ {
			outside += t.Span[i]
		}
		// the prior keeps its weight relative to the data: it shrinks
		// with the share of the chromosome the windows cover
		all := 0.0
		for _, v := range t.Span {
			all += v
		}
		if all > 0 {
			prior *= (all - outside) / all
		}
	}
	w.alpha = grow(w.alpha, m*n)
	w.sdraw = grow(w.sdraw, n)
	rounds = max(rounds, 1)
	var sums, counts, prev, next, x0, x1 [maxAgeStates]float64
	phase := 0
	for it := 0; it < rounds; it++ {
		sums, counts = w.pass(t, rho, windows)
		res.Rounds = it + 1
		// the per-class shares of this pass against those of the last
		tot := 0.0
		for _, v := range sums[:m] {
			tot += v
		}
		moved := 0.0
		for l := range sums[:m] {
			sh := sums[l] / tot
			moved = max(moved, math.Abs(sh-prev[l]))
			prev[l] = sh
		}
		if it == rounds-1 || (it > 0 && moved <= tol) {
			break
		}
		tot = 0.0
		for l := range counts[:m] {
			counts[l] += prior
			tot += counts[l]
		}
		if !(tot > 0) {
			break // no sites in windows
		}
		for l := range rho {
			next[l] = max(counts[l]/tot, 1e-9)
		}
		normalise(next[:m])
		// SQUAREM (Varadhan & Roland 2008, Scand J Stat 35:335-353) on
		// log proportions: after two plain EM steps from x0 to x1 to x2,
		// jump to x0 - 2a r + a^2 v with r = x1 - x0, v = x2 - 2 x1 + x0,
		// a = -|r|/|v| (at most -1); the next round's EM step from there
		// stabilises it. It needs about a third of the rounds of plain EM
		// here.
		switch phase {
		case 0:
			for l := 0; l < m; l++ {
				x0[l] = math.Log(rho[l])
			}
			copy(rho, next[:m])
			phase = 1
		case 1:
			var rr, vv float64
			for l := 0; l < m; l++ {
				x1[l] = math.Log(rho[l])
				x2 := math.Log(next[l])
				r, v := x1[l]-x0[l], x2-2*x1[l]+x0[l]
				rr += r * r
				vv += v * v
			}
			a := -1.0
			if vv > 0 {
				a = min(-math.Sqrt(rr/vv), -1)
			}
			for l := 0; l < m; l++ {
				x2 := math.Log(next[l])
				r, v := x1[l]-x0[l], x2-2*x1[l]+x0[l]
				rho[l] = math.Exp(max(x0[l]-2*a*r+a*a*v, -40))
			}
			normalise(rho)
			phase = 0
		}
	}
	sums[m-1] += outside
	res.Mixing = rho
	for l := 0; l < m; l++ {
		res.ClassBP[l] = int64(math.Round(sums[l] * AgeUnit))
	}
	return res
}

// AgeWindows turns site index ranges [first, last] (inclusive, for
// example the runs of the two-state detector, sorted by first) into the
// windows of FitWindows: each range widened by marginCM centimorgans on
// both sides (cm are the sites' genetic positions), overlapping or
// touching windows merged. The margin lets the chain settle before and
// after a run, so that the posteriors inside it depend little on where
// the window starts (TestAgesPedigreeF and the windowed case of
// TestAgesPlantedRecovery compare windowed with whole-chromosome fits).
func AgeWindows(cm []float64, ranges [][2]int, marginCM float64) [][2]int {
	var out [][2]int
	n := len(cm)
	for _, r := range ranges {
		lo, hi := r[0], r[1]
		for lo > 0 && cm[r[0]]-cm[lo-1] <= marginCM {
			lo--
		}
		for hi+1 < n && cm[hi+1]-cm[r[1]] <= marginCM {
			hi++
		}
		if k := len(out); k > 0 && lo <= out[k-1][1] {
			out[k-1][1] = max(out[k-1][1], hi+1)
			continue
		}
		out = append(out, [2]int{lo, hi + 1})
	}
	return out
}

// forward fills w.alpha with forward values and w.sdraw with the draw
// term s of each site. The stored values of a site are those before its
// rescaling (every rescaleEvery sites), computed from the rescaled values
// of the site before, so that backward can take the posteriors and the
// expected draws from them without recomputing s.
func (w *AgeWorker) forward(t *AgeTables, rho []float64, lo, hi int) {
	m, n := t.K+1, t.N
	em, al, vu, sd := w.em[:2*n], w.alpha[:m*n], t.vu, w.sdraw[:n]
	last := m - 1
	var prev [maxAgeStates]float64
	a0 := al[m*lo : m*lo+m : m*lo+m]
	for l := range a0 {
		e := em[2*lo]
		if l == last {
			e = em[2*lo+1]
		}
		a0[l] = rho[l] * e
		prev[l] = a0[l]
	}
	sd[lo] = 0
	rho = rho[:m:m]
	for i := lo + 1; i < hi; i++ {
		cur := al[m*i : m*(i+1) : m*(i+1)]
		row := vu[2*m*i : 2*m*(i+1) : 2*m*(i+1)]
		stay, leave := row[:m:m], row[m:2*m:2*m]
		p := prev[:m:m]
		s := 0.0
		for k, a := range p {
			s += leave[k] * a
		}
		sd[i] = s
		eA, eN := em[2*i], em[2*i+1]
		for l := range cur {
			e := eA
			if l == last {
				e = eN
			}
			v := e * (stay[l]*p[l] + rho[l]*s)
			cur[l] = v
			p[l] = v
		}
		if (i-lo)%rescaleEvery == 0 {
			z := 0.0
			for _, a := range p {
				z += a
			}
			inv := 1 / z
			for l := range p {
				p[l] *= inv
			}
		}
	}
}

// backward runs the backward recursion after forward. It adds to sums,
// per class, the posterior probabilities weighted by t.Span (bp), and to
// counts the expected draws of the class (the first site's class and
// every redraw): the EM statistics of rho. With b_l = e_l beta_i(l), the
// posterior of class l at site i is alpha_i(l) beta_i(l) / Z and the
// expected redraws into l are rho_l s_i b_l / Z. The posteriors overwrite
// w.alpha.
func (w *AgeWorker) backward(t *AgeTables, rho []float64, lo, hi int, sums, counts *[maxAgeStates]float64) {
	m, n := t.K+1, t.N
	em, al, vu, span, sd := w.em[:2*n], w.alpha[:m*n], t.vu, t.Span[:n], w.sdraw[:n]
	var beta, r [maxAgeStates]float64
	for l := 0; l < m; l++ {
		beta[l] = 1
	}
	last := m - 1
	rho = rho[:m:m]
	for i := hi - 1; i > lo; i-- {
		cur := al[m*i : m*(i+1) : m*(i+1)]
		row := vu[2*m*i : 2*m*(i+1) : 2*m*(i+1)]
		stay, leave := row[:m:m], row[m:2*m:2*m]
		bt, rr := beta[:m:m], r[:m:m]
		s := sd[i]
		eA, eN := em[2*i], em[2*i+1]
		var wsum, z float64
		for l := range bt {
			e := eA
			if l == last {
				e = eN
			}
			g := cur[l] * bt[l]
			bl := e * bt[l]
			pb := rho[l] * bl
			wsum += pb
			rr[l] = pb * s
			z += g
			cur[l] = g
			bt[l] = stay[l] * bl
		}
		inv := 1 / z
		sp := span[i] * inv
		for l := range bt {
			g := cur[l]
			counts[l] += rr[l] * inv
			sums[l] += g * sp
			cur[l] = g * inv
			bt[l] += leave[l] * wsum
		}
		if (hi-i)%rescaleEvery == 0 {
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
	// first site: its class is a draw from rho
	a0 := al[m*lo : m*lo+m]
	z := 0.0
	for l := 0; l < m; l++ {
		a0[l] *= beta[l]
		z += a0[l]
	}
	for l := 0; l < m; l++ {
		g := a0[l] / z
		counts[l] += g
		sums[l] += g * span[lo]
		a0[l] = g
	}
}

// RunClass returns, for the sites first..last (indexes, inclusive) of the
// sample and chromosome of the last Fit or Posteriors, the autozygous
// class with the highest mean posterior over those sites and that mean:
// the age annotation of a run found by the detector. It returns -1 and
// NaN for an empty or out-of-range interval.
func (w *AgeWorker) RunClass(first, last int) (int, float64) {
	if first < 0 || last >= w.n || first > last {
		return -1, math.NaN()
	}
	m := w.m
	var s [maxAgeStates]float64
	for i := first; i <= last; i++ {
		g := w.alpha[m*i : m*(i+1) : m*(i+1)]
		for l := 0; l < m-1; l++ {
			s[l] += g[l]
		}
	}
	best := 0
	for l := 1; l < m-1; l++ {
		if s[l] > s[best] {
			best = l
		}
	}
	return best, s[best] / float64(last-first+1)
}

// Posterior returns the posterior probability of class l at site i after
// Fit or Posteriors.
func (w *AgeWorker) Posterior(i, l int) float64 { return w.alpha[w.m*i+l] }

// Viterbi returns the most probable class path of the loaded sample
// under mixing proportions rho (class K is non-autozygous). It allocates
// K+1 bytes of back-pointers per site; the scan does not need it (it
// serves the check against the two-state detector and callers that want
// age-classed segments).
func (w *AgeWorker) Viterbi(t *AgeTables, rho []float64) []uint8 {
	m, n := t.K+1, t.N
	path := make([]uint8, n)
	if n == 0 {
		return path
	}
	bp := make([]uint8, m*n)
	em := w.em[:2*n]
	var d, nd [maxAgeStates]float64
	for l := 0; l < m; l++ {
		e := em[0]
		if l == m-1 {
			e = em[1]
		}
		d[l] = rho[l] * e
	}
	for i := 1; i < n; i++ {
		row := t.vu[2*m*i : 2*m*(i+1) : 2*m*(i+1)]
		stay, leave := row[:m:m], row[m:2*m:2*m]
		best, bk := -1.0, 0
		for k := 0; k < m; k++ {
			if v := d[k] * leave[k]; v > best {
				best, bk = v, k
			}
		}
		eA, eN := em[2*i], em[2*i+1]
		top := 0.0
		for l := 0; l < m; l++ {
			e := eA
			if l == m-1 {
				e = eN
			}
			x := d[l] * (stay[l] + leave[l]*rho[l])
			y := rho[l] * best
			from := uint8(l)
			if y > x {
				x, from = y, uint8(bk)
			}
			nd[l] = e * x
			bp[m*i+l] = from
			top = max(top, nd[l])
		}
		inv := 1 / top
		for l := 0; l < m; l++ {
			d[l] = nd[l] * inv
		}
	}
	st := 0
	for l := 1; l < m; l++ {
		if d[l] > d[st] {
			st = l
		}
	}
	for i := n - 1; i >= 0; i-- {
		path[i] = uint8(st)
		if i > 0 {
			st = int(bp[m*i+st])
		}
	}
	return path
}

// FWithin returns f_within_<G>g for each G of AgeGenerations: the summed
// ClassBP of the autozygous classes with rate at most 2G (over the
// chromosomes of a sample) over the covered length (bp; the denominator
// of f_roh, Result.Covered). NaN when covered is not positive.
func FWithin(classBP []int64, rates []float64, covered int64) []float64 {
	out := make([]float64, len(AgeGenerations))
	for j, g := range AgeGenerations {
		var s int64
		for k, r := range rates {
			if r <= 2*float64(g) {
				s += classBP[k]
			}
		}
		out[j] = math.NaN()
		if covered > 0 {
			out[j] = float64(s) / AgeUnit / float64(covered)
		}
	}
	return out
}
