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
func emissionRow(row []float64, p, e float64) {
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
	row[0] = q*(1-e) + p*h
	row[1] = h
	row[2] = p*(1-e) + q*h
	row[3] = 1
	// Hardy-Weinberg
	rr, ra, aa := q*q, 2*p*q, p*p
	row[4] = rr*(1-e) + (ra+aa)*h
	row[5] = ra*(1-e) + (rr+aa)*h
	row[6] = aa*(1-e) + (rr+ra)*h
	row[7] = 1
}

// transitions fills, for each interval t>=1 (between sites t-1 and t), the
// probabilities A->A, A->N, N->A, N->N of the continuous-time two-state
// chain with stationary autozygous probability f and rate a per Morgan:
// with r = exp(-a*d) over d Morgans, P(A->A) = r + (1-r) f and
// P(N->A) = (1-r) f. This is the chain of Leutenegger et al. (2003); we
// take d from a genetic map or a constant cM/Mb instead of their marker
// map, and a is either fixed or fitted by EM (they maximise the
// likelihood numerically). Entries for t=0 hold the stationary
// distribution.
func transitions(tr []float64, cm []float64, f, a float64) {
	n := len(cm)
	if n == 0 {
		return
	}
	tr[0], tr[1], tr[2], tr[3] = f, 1-f, f, 1-f
	for t := 1; t < n; t++ {
		d := (cm[t] - cm[t-1]) / 100
		if d < 0 {
			d = 0
		}
		r := math.Exp(-a * d)
		k := tr[4*t : 4*t+4 : 4*t+4]
		k[0] = r + (1-r)*f
		k[1] = (1 - r) * (1 - f)
		k[2] = (1 - r) * f
		k[3] = r + (1-r)*(1-f)
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
// and chromosomes: 2 emissions, 2 forward values, 1 scale factor, 1 path
// byte and 1 genotype byte per site (41 bytes per site), plus the
// per-sample transitions when fitting (32 bytes per site).
type hmmScratch struct {
	code  []uint8
	em    []float64
	alpha []float64
	scale []float64
	path  []uint8
	post  []float64
	tr    []float64
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
			l0, l1, l2 := plLinear[pl[3*k]], plLinear[pl[3*k+1]], plLinear[pl[3*k+2]]
			em[2*t] = l0*row[0] + l1*row[1] + l2*row[2]
			em[2*t+1] = l0*row[4] + l1*row[5] + l2*row[6]
			continue
		}
		em[2*t] = row[g]
		em[2*t+1] = row[4+g]
	}
}

// forward runs the scaled forward pass and returns the log-likelihood.
func (w *hmmScratch) forward(tr []float64) float64 {
	n := len(w.em) / 2
	w.alpha = grow(w.alpha, 2*n)
	w.scale = grow(w.scale, n)
	em, al, sc := w.em, w.alpha, w.scale
	a := tr[0] * em[0]
	b := tr[1] * em[1]
	c := a + b
	al[0], al[1], sc[0] = a/c, b/c, c
	ll := math.Log(c)
	for t := 1; t < n; t++ {
		k := tr[4*t : 4*t+4 : 4*t+4]
		pa, pn := al[2*t-2], al[2*t-1]
		a = (pa*k[0] + pn*k[2]) * em[2*t]
		b = (pa*k[1] + pn*k[3]) * em[2*t+1]
		c = a + b
		inv := 1 / c
		al[2*t], al[2*t+1], sc[t] = a*inv, b*inv, c
		ll += math.Log(c)
	}
	return ll
}

// viterbi writes the most probable state path (stA or stN per site) into
// w.path, in scaled linear space.
func (w *hmmScratch) viterbi(tr []float64) {
	n := len(w.em) / 2
	w.path = grow(w.path, n)
	em, bp := w.em, w.path
	va := tr[0] * em[0]
	vn := tr[1] * em[1]
	bp[0] = 0
	for t := 1; t < n; t++ {
		k := tr[4*t : 4*t+4 : 4*t+4]
		var b uint8
		// into A
		xa, xn := va*k[0], vn*k[2]
		na := xa
		if xn > xa {
			na = xn
			b |= 1 // A came from N
		}
		// into N
		ya, yn := va*k[1], vn*k[3]
		nn := yn
		if ya > yn {
			nn = ya
			b |= 2 // N came from A
		}
		na *= em[2*t]
		nn *= em[2*t+1]
		m := na
		if nn > m {
			m = nn
		}
		inv := 1 / m
		va, vn = na*inv, nn*inv
		bp[t] = b
	}
	st := uint8(stA)
	if vn > va {
		st = stN
	}
	for t := n - 1; t >= 0; t-- {
		b := bp[t]
		bp[t] = st
		if st == stA {
			if b&1 != 0 {
				st = stN
			}
		} else if b&2 != 0 {
			st = stA
		}
	}
}

// emStats are the expected sufficient statistics of one EM round.
type emStats struct {
	timeA, timeN       float64 // expected Morgans spent in each state
	switchAN, switches float64 // expected A->N and all switches
}

// backward runs the scaled backward pass after forward, writing the
// posterior probability of the autozygous state per site into w.post and,
// when st is not nil, accumulating EM statistics over intervals of cm.
func (w *hmmScratch) backward(tr []float64, cm []float64, st *emStats) {
	n := len(w.em) / 2
	w.post = grow(w.post, n)
	em, al, sc, post := w.em, w.alpha, w.scale, w.post
	ba, bn := 1.0, 1.0
	post[n-1] = al[2*n-2]
	for t := n - 1; t >= 1; t-- {
		k := tr[4*t : 4*t+4 : 4*t+4]
		inv := 1 / sc[t]
		ea, en := em[2*t]*ba*inv, em[2*t+1]*bn*inv
		pa, pn := al[2*t-2], al[2*t-1]
		if st != nil {
			xaa, xan := pa*k[0]*ea, pa*k[1]*en
			xna, xnn := pn*k[2]*ea, pn*k[3]*en
			d := (cm[t] - cm[t-1]) / 100
			st.timeA += d * (xaa + 0.5*(xan+xna))
			st.timeN += d * (xnn + 0.5*(xan+xna))
			st.switchAN += xan
			st.switches += xan + xna
		}
		ba = k[0]*ea + k[1]*en
		bn = k[2]*ea + k[3]*en
		p := pa * ba
		q := pn * bn
		post[t-1] = p / (p + q)
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
	w.tr = grow(w.tr, 4*n)
	f, a := f0, a0
	prev := math.Inf(-1)
	for it := 0; it < iters; it++ {
		transitions(w.tr, cm, f, a)
		ll := w.forward(w.tr)
		var st emStats
		w.backward(w.tr, cm, &st)
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
