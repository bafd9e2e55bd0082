package roh

import (
	"math"
)

// HMM states, as indexes into emission and transition tables.
const (
	stA = 0 // autozygous
	stN = 1 // not autozygous
)

// emissionRow fills the probabilities of observing codes 0/0, 0/1, 1/1
// and missing in the autozygous (row[0:4]) and non-autozygous (row[4:8])
// states at a site whose alternate-allele frequency is p, under genotype
// error e: a true genotype is reported as each of the two others with
// probability e/2. In the autozygous state the true genotype is 0/0 with
// probability 1-p and 1/1 with probability p (Leutenegger et al. 2003,
// Am J Hum Genet 73:516-523, who also allow for genotyping error); in the
// other state it follows Hardy-Weinberg proportions. A missing call, and
// every call at a site of unknown frequency, has probability 1 in both
// states, so it is uninformative.
func emissionRow(row []float32, p, e float64) {
	if p != p { // NaN: unknown frequency
		for i := range row[:8] {
			row[i] = 1
		}
		return
	}
	if p < 0 {
		p = 0
	}
	if p > 1 {
		p = 1
	}
	q := 1 - p
	h := e / 2
	// autozygous
	row[0] = float32(q*(1-e) + p*h)
	row[1] = float32(h)
	row[2] = float32(p*(1-e) + q*h)
	row[3] = 1
	// Hardy-Weinberg
	rr, ra, aa := q*q, 2*p*q, p*p
	row[4] = float32(rr*(1-e) + (ra+aa)*h)
	row[5] = float32(ra*(1-e) + (rr+aa)*h)
	row[6] = float32(aa*(1-e) + (rr+ra)*h)
	row[7] = 1
}

// switchWeights fills, for each interval t>=1 (between sites t-1 and t),
// u[t] = 1 - exp(-a*d) for the d Morgans between the sites (u[0] is 0).
// With u and the stationary autozygous probability f, the continuous-time
// two-state chain of Leutenegger et al. (2003) moves A->N with probability
// u*(1-f) and N->A with u*f, and stays otherwise; storing only u (8 bytes
// a site, shared by all samples) keeps memory traffic low, and the four
// transition probabilities cost two multiplications per step. We take d
// from a genetic map or a constant cM/Mb instead of their marker map, and
// a is either fixed or fitted by EM (they maximise the likelihood
// numerically).
func switchWeights(u []float64, cm []float64, a float64) {
	n := len(cm)
	if n == 0 {
		return
	}
	u[0] = 0
	for t := 1; t < n; t++ {
		d := (cm[t] - cm[t-1]) / 100
		if d < 0 {
			d = 0
		}
		u[t] = -math.Expm1(-a * d)
	}
}

// plLinear[x] = 10^(-x/10): phred to likelihood.
var plLinear = func() (t [256]float64) {
	for i := range t {
		t[i] = math.Pow(10, -float64(i)/10)
	}
	return
}()

// hmmScratch holds one worker's per-site buffers, reused across samples
// and chromosomes: 2 emissions, 2 forward values, 1 posterior, 1 path
// byte and 1 genotype byte per site (42 bytes per site), plus the
// per-sample switch weights when fitting (8 bytes per site).
type hmmScratch struct {
	code  []uint8
	em    []float64
	alpha []float64
	path  []uint8
	post  []float64
	tr    []float64
	ev    []int32 // rules: indices of heterozygous and missing calls
	kind  []uint8 // rules: their codes
}

func grow[T any](s []T, n int) []T {
	if cap(s) < n {
		return make([]T, n)
	}
	return s[:n]
}

// fillEmissions writes the two state emissions of each site for one
// sample: a table lookup for genotype codes, or the sum over genotypes of
// likelihood times state probability where phred likelihoods are stored.
func (w *hmmScratch) fillEmissions(ch *chromData, s int) {
	n := len(ch.pos)
	w.code = grow(w.code, n)
	w.em = grow(w.em, 2*n)
	ch.unpack(s, w.code)
	em := w.em
	tab := ch.emit
	var pl []uint8
	if ch.pl != nil {
		pl = ch.pl[s]
	}
	for t, g := range w.code {
		row := tab[8*t : 8*t+8 : 8*t+8]
		if k := ch.plSite[t]; pl != nil && k >= 0 {
			// relative to the most likely genotype, so the largest
			// likelihood is 1 and long stretches cannot underflow
			q0, q1, q2 := pl[3*k], pl[3*k+1], pl[3*k+2]
			m := min(q0, q1, q2)
			l0, l1, l2 := plLinear[q0-m], plLinear[q1-m], plLinear[q2-m]
			em[2*t] = l0*float64(row[0]) + l1*float64(row[1]) + l2*float64(row[2])
			em[2*t+1] = l0*float64(row[4]) + l1*float64(row[5]) + l2*float64(row[6])
			continue
		}
		em[2*t] = float64(row[g])
		em[2*t+1] = float64(row[4+g])
	}
}

// rescaleEvery is how often (in sites) the forward, backward and Viterbi
// values are renormalised. Between renormalisations the values shrink by
// at most the product of the smallest emissions (at least 1e-12 each for a
// genotype error above 2e-12), far from float64 underflow; renormalising
// every site would put a division on the critical path of every step.
const rescaleEvery = 8

// forward runs the forward pass, storing per site the forward values
// (scaled by an arbitrary positive factor per site) in w.alpha. It returns
// the log-likelihood when wantLL is set (else 0).
func (w *hmmScratch) forward(u []float64, f float64, wantLL bool) float64 {
	n := len(w.em) / 2
	w.alpha = grow(w.alpha, 2*n)
	em, al := w.em, w.alpha
	u = u[:n]
	a := f * em[0]
	b := (1 - f) * em[1]
	al[0], al[1] = a, b
	ll := 0.0
	for t := 1; t < n; t++ {
		an, na := u[t]*(1-f), u[t]*f
		e := em[2*t : 2*t+2 : 2*t+2]
		// transition times emission first: off the dependency chain
		aa, na2 := (1-an)*e[0], na*e[0]
		an2, nn := an*e[1], (1-na)*e[1]
		a, b = a*aa+b*na2, a*an2+b*nn
		if t%rescaleEvery == 0 {
			c := a + b
			inv := 1 / c
			a, b = a*inv, b*inv
			if wantLL {
				ll += math.Log(c)
			}
		}
		al[2*t], al[2*t+1] = a, b
	}
	if wantLL {
		ll += math.Log(a + b)
	}
	return ll
}

// forwardViterbi runs the forward pass and the Viterbi recursion in one
// sweep (two independent dependency chains per step, so the processor
// overlaps them), storing forward values in w.alpha and the most probable
// path in w.path. When the sample has no phred likelihoods on this
// chromosome the emissions are looked up from the genotype codes in the
// same sweep and stored for the backward pass; otherwise fillEmissions
// must have run first and lookup is false.
func (w *hmmScratch) forwardViterbi(ch *chromData, u []float64, f float64, lookup bool) {
	n := len(w.code)
	w.alpha = grow(w.alpha, 2*n)
	w.path = grow(w.path, n)
	w.em = grow(w.em, 2*n)
	em, al, bp, code, tab := w.em, w.alpha, w.path, w.code, ch.emit
	u = u[:n]
	if lookup {
		g := code[0]
		em[0], em[1] = float64(tab[g]), float64(tab[4+g])
	}
	a := f * em[0]
	b := (1 - f) * em[1]
	al[0], al[1] = a, b
	va, vn := a, b
	bp[0] = 0
	for t := 1; t < n; t++ {
		e := em[2*t : 2*t+2 : 2*t+2]
		if lookup {
			row := tab[8*t : 8*t+8 : 8*t+8]
			g := code[t] & 3
			e[0], e[1] = float64(row[g]), float64(row[4+g])
		}
		an, na := u[t]*(1-f), u[t]*f
		// transition times emission first: off the dependency chains
		aa, na2 := (1-an)*e[0], na*e[0]
		an2, nn := an*e[1], (1-na)*e[1]
		a, b = a*aa+b*na2, a*an2+b*nn
		// Branch-free max and argmax: the comparisons flip unpredictably
		// in non-autozygous stretches, and for non-negative floats the
		// order of the bit patterns (as integers) is the order of the
		// values.
		xa := int64(math.Float64bits(va * aa))
		xn := int64(math.Float64bits(vn * na2))
		ya := int64(math.Float64bits(va * an2))
		yn := int64(math.Float64bits(vn * nn))
		sa := (xn - xa) >> 63 // 0 when A came from N (xn >= xa), else -1
		sn := (yn - ya) >> 63 // -1 when N came from A (ya > yn), else 0
		fl := uint8(1+sa) | uint8(-sn)<<1
		va = math.Float64frombits(uint64(xa ^ ((xa ^ xn) &^ sa)))
		vn = math.Float64frombits(uint64(yn ^ ((yn ^ ya) & sn)))
		if t%rescaleEvery == 0 {
			inv := 1 / (a + b)
			a, b = a*inv, b*inv
			inv = 1 / max(va, vn)
			va, vn = va*inv, vn*inv
		}
		al[2*t], al[2*t+1] = a, b
		bp[t] = fl
	}
	st := uint8(stA)
	if vn >= va {
		st = stN
	}
	for t := n - 1; t >= 0; t-- {
		fl := bp[t]
		bp[t] = st
		if st == stA {
			if fl&1 != 0 {
				st = stN
			}
		} else if fl&2 != 0 {
			st = stA
		}
	}
}

// emStats are the expected sufficient statistics of one EM round.
type emStats struct {
	timeA, timeN       float64 // expected Morgans spent in each state
	switchAN, switches float64 // expected A->N and all switches
}

// backward runs the backward pass after forward. It writes the posterior
// probability of the autozygous state into w.post at the sites where path
// (the Viterbi path, when not nil) is autozygous: only run sites need it,
// and skipping the others saves a division per site. When st is not nil
// it accumulates EM statistics over intervals of cm.
func (w *hmmScratch) backward(u []float64, f float64, cm []float64, st *emStats, path []uint8) {
	n := len(w.em) / 2
	w.post = grow(w.post, n)
	em, al, post := w.em, w.alpha, w.post
	u = u[:n]
	if path != nil {
		path = path[:n]
	}
	ba, bn := 1.0, 1.0
	post[n-1] = al[2*n-2] / (al[2*n-2] + al[2*n-1])
	for t := n - 1; t >= 1; t-- {
		an, na := u[t]*(1-f), u[t]*f
		k := [4]float64{1 - an, an, na, 1 - na}
		pa, pn := al[2*t-2], al[2*t-1]
		if st != nil {
			ea, en := em[2*t]*ba, em[2*t+1]*bn
			xaa, xan := pa*k[0]*ea, pa*k[1]*en
			xna, xnn := pn*k[2]*ea, pn*k[3]*en
			z := 1 / (xaa + xan + xna + xnn)
			xaa, xan, xna, xnn = xaa*z, xan*z, xna*z, xnn*z
			d := (cm[t] - cm[t-1]) / 100
			st.timeA += d * (xaa + 0.5*(xan+xna))
			st.timeN += d * (xnn + 0.5*(xan+xna))
			st.switchAN += xan
			st.switches += xan + xna
		}
		// transition times emission first: off the dependency chain
		ea, en := em[2*t], em[2*t+1]
		ba, bn = (k[0]*ea)*ba+(k[1]*en)*bn, (k[2]*ea)*ba+(k[3]*en)*bn
		if t%rescaleEvery == 0 {
			inv := 1 / (ba + bn)
			ba, bn = ba*inv, bn*inv
		}
		if path != nil && path[t-1] == stA {
			p, q := pa*ba, pn*bn
			post[t-1] = p / (p + q)
		}
	}
}

// fitSample estimates the autozygous fraction and the rate for one sample
// on one chromosome by EM. The M step treats expected occupation times
// and switch counts as those of a continuously observed chain (exact for
// short intervals): F = time in A / total time, a = switches / (time in A
// * (1-F) + time in N * F). One pseudo-switch at the starting rate keeps a
// finite when no switch is expected. Returns the fitted f and a.
func (w *hmmScratch) fitSample(cm []float64, f0, a0 float64, iters int) (float64, float64) {
	n := len(cm)
	w.tr = grow(w.tr, n)
	f, a := f0, a0
	prev := math.Inf(-1)
	for it := 0; it < iters; it++ {
		switchWeights(w.tr, cm, a)
		ll := w.forward(w.tr, f, true)
		var st emStats
		w.backward(w.tr, f, cm, &st, nil)
		tot := st.timeA + st.timeN
		if !(tot > 0) {
			break
		}
		nf := st.timeA / tot
		nf = math.Min(math.Max(nf, 1e-4), 1-1e-4)
		na := (st.switches + 1) / (st.timeA*(1-nf) + st.timeN*nf + 1/a0)
		na = math.Min(math.Max(na, 0.1), 1e4)
		f, a = nf, na
		if ll-prev < 1e-4*math.Abs(ll) && it > 0 {
			break
		}
		prev = ll
	}
	return f, a
}
