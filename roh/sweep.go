package roh

import (
	"math"
	"math/bits"
)

// The HMM with fixed parameters runs as three sweeps over the windows of
// a chromosome, each window handled for all samples while its per-site
// table is in cache:
//
//  1. forward (in input order, while the next window is read): the
//     forward recursion and the Viterbi recursion, two samples at a time;
//     Viterbi back-pointer flags and a forward checkpoint per block of
//     128 sites are kept with the window;
//  2. reverse: the Viterbi traceback (the path replaces the flags) and the
//     backward recursion, keeping a backward checkpoint per block;
//  3. forward: inside the blocks where a sample's path is autozygous, the
//     forward and backward values are recomputed from the two checkpoints
//     and give the posterior at those sites; runs are assembled in order.
//
// The recursions are those of Leutenegger et al. (2003, Am J Hum Genet
// 73:516-523) in the scaled linear form of hmm.go; every value is
// computed by the same floating-point operations, in the same order, as
// the whole-chromosome passes (forwardViterbi, backward, hmmRuns), and the
// rescaling points depend only on the site index, so the recomputed
// forward and backward values, the posteriors and the runs are bit for
// bit those of the whole-chromosome passes (TestEngineMatchesWholePasses).
//
// Per call, a sweep is a table lookup by genotype code (four products of
// transition and emission probability, computed once per site for all
// samples) and a few multiplications, additions and comparisons: no exp,
// log or division except the renormalisation every rescaleEvery sites.

// siteProducts are the products of one site, by genotype code.
type siteProducts [16]float64

// siteTable holds the per-site terms of one window, shared by all samples.
type siteTable struct {
	rows []float32 // 8 per site: emissionRow
	tr   []float64 // 4 per site: stay in A, A->N, N->A, stay in N
	// prod holds per site, for genotype code g at 4*g, the products
	// (A->A)*e_A, (N->A)*e_A, (A->N)*e_N, (N->N)*e_N.
	prod []siteProducts
}

// buildSites fills the table for window sites [lo, hi), computing the
// switch weights into w.u unless haveU (they are kept with the window
// after sweep 1, sparing an exponential per site in sweeps 2 and 3).
func (tab *siteTable) buildSites(w *window, cfg *Config, lo, hi int, haveU bool) {
	f, a, e := cfg.AutozygousPrior, cfg.Rate, cfg.GenotypeError
	for lt := lo; lt < hi; lt++ {
		row := tab.rows[8*lt : 8*lt+8 : 8*lt+8]
		emissionRow(row, w.freq[lt], e)
		// as switchWeights: u = 1 - exp(-a*d), 0 before the first site
		u := 0.0
		if haveU {
			u = w.u[lt]
		} else if w.t0+lt > 0 {
			prev := w.cmPrev
			if lt > 0 {
				prev = w.cm[lt-1]
			}
			d := (w.cm[lt] - prev) / 100
			if d < 0 {
				d = 0
			}
			u = -math.Expm1(-a * d)
		}
		w.u[lt] = u
		an, na := u*(1-f), u*f
		sa, sn := 1-an, 1-na
		tr := tab.tr[4*lt : 4*lt+4 : 4*lt+4]
		tr[0], tr[1], tr[2], tr[3] = sa, an, na, sn
		p := &tab.prod[lt]
		for g := 0; g < 4; g++ {
			ea, en := float64(row[g]), float64(row[4+g])
			p[4*g], p[4*g+1], p[4*g+2], p[4*g+3] = sa*ea, na*ea, an*en, sn*en
		}
	}
}

func (tab *siteTable) size(n int) {
	tab.rows = grow(tab.rows, 8*n)
	tab.tr = grow(tab.tr, 4*n)
	tab.prod = grow(tab.prod, n)
}

// plEmission returns the two state emissions of sample s at window site
// lt, which has likelihoods: as fillEmissions, the sum over genotypes of
// likelihood (relative to the most likely genotype) times state
// probability.
func (g geometry) plEmission(w *window, row []float32, s, lt int) (float64, float64) {
	k := int(w.plSite[lt])
	o := 3*g.w*s + 3*k
	q0, q1, q2 := w.pl[o], w.pl[o+1], w.pl[o+2]
	m := min(q0, q1, q2)
	l0, l1, l2 := plLinear[q0-m], plLinear[q1-m], plLinear[q2-m]
	ea := l0*float64(row[0]) + l1*float64(row[1]) + l2*float64(row[2])
	en := l0*float64(row[4]) + l1*float64(row[5]) + l2*float64(row[6])
	return ea, en
}

// emAt returns sample s's two emissions at window site lt.
func (g geometry) emAt(w *window, tab *siteTable, s, lt int) (float64, float64) {
	row := tab.rows[8*lt : 8*lt+8 : 8*lt+8]
	if w.nPL > 0 && w.plSite[lt] >= 0 {
		return g.plEmission(w, row, s, lt)
	}
	c := g.code(w, s, lt)
	return float64(row[c]), float64(row[4+c])
}

// sampleProducts fills dst with sample s's products per site, for
// windows with likelihoods: at each site, the entry of code 0 holds the
// sample's four products (from its likelihoods, or copied from the
// table for its genotype code), so the sweeps read them with code 0.
func (g geometry) sampleProducts(w *window, tab *siteTable, s int, dst []siteProducts) []siteProducts {
	dst = grow(dst, w.n)
	for lt := 0; lt < w.n; lt++ {
		d := &dst[lt]
		if w.plSite[lt] >= 0 {
			ea, en := g.plEmission(w, tab.rows[8*lt:8*lt+8:8*lt+8], s, lt)
			tr := tab.tr[4*lt : 4*lt+4 : 4*lt+4]
			d[0], d[1], d[2], d[3] = tr[0]*ea, tr[2]*ea, tr[1]*en, tr[3]*en
			continue
		}
		c := int(g.code(w, s, lt))
		copy(d[:4], tab.prod[lt][4*c:4*c+4])
	}
	return dst
}

// sweepScratch is one worker's buffers for the sweeps.
type sweepScratch struct {
	ps1, ps2 []siteProducts // per-sample products (windows with likelihoods)
	alpha    []float64      // 2 per block site
	post     []float64      // 1 per block site
}

// products returns the product table of sample s and the mask of the
// genotype code that indexes it: the shared table, or in windows with
// likelihoods the sample's own (read with code 0).
func (g geometry) products(w *window, tab *siteTable, s int, buf *[]siteProducts) ([]siteProducts, uint64) {
	if w.nPL == 0 {
		return tab.prod, 3
	}
	*buf = g.sampleProducts(w, tab, s, *buf)
	return *buf, 0
}

// hmmState is what the sweeps carry from one window to the next, per
// sample.
type hmmState struct {
	a, b   float64 // forward values at the last site swept
	va, vn float64 // Viterbi values
	ba, bn float64 // backward values
	st     uint8   // traceback state (stA, stN)
}

// forwardPair is sweep 1 over window w for samples s1 and s2 (equal for a
// lone sample): forwardViterbi's recursions, two independent chains per
// step, back-pointer flags into w.bp and forward checkpoints into w.ckF.
//
// The flags of a site take 2 bits, at the place of its call in w.geno:
// bit 0 is set when the best predecessor of A is A, bit 1 when the best
// predecessor of N is A.
func (g geometry) forwardPair(w *window, tab *siteTable, sc *sweepScratch, f float64, st1, st2 *hmmState, s1, s2 int) {
	p1, gm := g.products(w, tab, s1, &sc.ps1)
	p2 := p1
	if w.nPL > 0 {
		p2, _ = g.products(w, tab, s2, &sc.ps2)
	}
	n := w.n
	p1, p2 = p1[:n], p2[:n]
	gw1, gw2 := w.geno[s1*g.ww:(s1+1)*g.ww], w.geno[s2*g.ww:(s2+1)*g.ww]
	bp1, bp2 := w.bp[s1*g.ww:(s1+1)*g.ww], w.bp[s2*g.ww:(s2+1)*g.ww]
	ck1, ck2 := w.ckF[s1*g.nb*2:(s1+1)*g.nb*2], w.ckF[s2*g.nb*2:(s2+1)*g.nb*2]
	a1, b1, va1, vn1 := st1.a, st1.b, st1.va, st1.vn
	a2, b2, va2, vn2 := st2.a, st2.b, st2.va, st2.vn
	j0 := 0
	if w.t0 == 0 {
		e1a, e1n := g.emAt(w, tab, s1, 0)
		e2a, e2n := g.emAt(w, tab, s2, 0)
		a1, b1 = f*e1a, (1-f)*e1n
		a2, b2 = f*e2a, (1-f)*e2n
		va1, vn1, va2, vn2 = a1, b1, a2, b2
		j0 = 1
	}
	for wi := 0; wi*32 < n; wi++ {
		if wi%(blockSites/32) == 0 && w.t0+wi*32 > 0 {
			k := 2 * (wi / (blockSites / 32))
			ck1[k], ck1[k+1] = a1, b1
			ck2[k], ck2[k+1] = a2, b2
		}
		x1, x2 := gw1[wi]>>(2*uint(j0)), gw2[wi]>>(2*uint(j0))
		// flags enter at the top and move down two bits a site
		var f1, f2 uint64
		lt, end := wi*32+j0, min(wi*32+32, n)
		for ; lt < end; lt++ {
			q1, q2 := &p1[lt], &p2[lt]
			c1, c2 := 4*(x1&gm), 4*(x2&gm)
			x1, x2 = x1>>2, x2>>2
			aa1, na21, an21, nn1 := q1[c1], q1[c1+1], q1[c1+2], q1[c1+3]
			aa2, na22, an22, nn2 := q2[c2], q2[c2+1], q2[c2+2], q2[c2+3]
			a1, b1 = a1*aa1+b1*na21, a1*an21+b1*nn1
			a2, b2 = a2*aa2+b2*na22, a2*an22+b2*nn2
			// branch-free max and argmax per lane, as in forwardViterbi
			xa1 := int64(math.Float64bits(va1 * aa1))
			xn1 := int64(math.Float64bits(vn1 * na21))
			ya1 := int64(math.Float64bits(va1 * an21))
			yn1 := int64(math.Float64bits(vn1 * nn1))
			sa1, sn1 := (xn1-xa1)>>63, (yn1-ya1)>>63 // -1: A from A; -1: N from A
			va1 = math.Float64frombits(uint64(xa1 ^ ((xa1 ^ xn1) &^ sa1)))
			vn1 = math.Float64frombits(uint64(yn1 ^ ((yn1 ^ ya1) & sn1)))
			f1 = f1>>2 | uint64(sa1&1|sn1&2)<<62
			xa2 := int64(math.Float64bits(va2 * aa2))
			xn2 := int64(math.Float64bits(vn2 * na22))
			ya2 := int64(math.Float64bits(va2 * an22))
			yn2 := int64(math.Float64bits(vn2 * nn2))
			sa2, sn2 := (xn2-xa2)>>63, (yn2-ya2)>>63
			va2 = math.Float64frombits(uint64(xa2 ^ ((xa2 ^ xn2) &^ sa2)))
			vn2 = math.Float64frombits(uint64(yn2 ^ ((yn2 ^ ya2) & sn2)))
			f2 = f2>>2 | uint64(sa2&1|sn2&2)<<62
			if lt%rescaleEvery == 0 { // w.t0 is a multiple of rescaleEvery
				inv1, inv2 := 1/(a1+b1), 1/(a2+b2)
				a1, b1, a2, b2 = a1*inv1, b1*inv1, a2*inv2, b2*inv2
				inv1, inv2 = 1/maxNonNeg(va1, vn1), 1/maxNonNeg(va2, vn2)
				va1, vn1, va2, vn2 = va1*inv1, vn1*inv1, va2*inv2, vn2*inv2
			}
		}
		down := 2 * uint(wi*32+32-end)
		bp1[wi], bp2[wi] = f1>>down, f2>>down
		j0 = 0
	}
	st1.a, st1.b, st1.va, st1.vn = a1, b1, va1, vn1
	st2.a, st2.b, st2.va, st2.vn = a2, b2, va2, vn2
}

// reversePair is sweep 2 over window w for samples s1 and s2 (equal for
// a lone sample): the traceback (as forwardViterbi's) and backward's
// recursion, with backward checkpoints into w.ckB. The path (1 bit a
// site, set when autozygous) of sites [64m, 64m+64) replaces flag word 2m
// once those sites are done.
func (g geometry) reversePair(w *window, tab *siteTable, sc *sweepScratch, st1, st2 *hmmState, s1, s2 int) {
	p1, gm := g.products(w, tab, s1, &sc.ps1)
	p2 := p1
	if w.nPL > 0 {
		p2, _ = g.products(w, tab, s2, &sc.ps2)
	}
	n := w.n
	p1, p2 = p1[:n], p2[:n]
	gw1, gw2 := w.geno[s1*g.ww:(s1+1)*g.ww], w.geno[s2*g.ww:(s2+1)*g.ww]
	bp1, bp2 := w.bp[s1*g.ww:(s1+1)*g.ww], w.bp[s2*g.ww:(s2+1)*g.ww]
	ck1, ck2 := w.ckB[s1*g.nb*2:(s1+1)*g.nb*2], w.ckB[s2*g.nb*2:(s2+1)*g.nb*2]
	ba1, bn1, ba2, bn2 := st1.ba, st1.bn, st2.ba, st2.bn
	t1, t2 := uint64(st1.st), uint64(st2.st) // 0 A, 1 N
	k := 2 * ((n - 1) / blockSites)
	ck1[k], ck1[k+1] = ba1, bn1
	ck2[k], ck2[k+1] = ba2, bn2
	var pw1, pw2 uint64
	for wi := (n - 1) >> 5; wi >= 0; wi-- {
		f1, f2 := bp1[wi], bp2[wi]
		x1, x2 := gw1[wi], gw2[wi]
		for j := min(31, n-1-wi*32); j >= 0; j-- {
			lt := wi*32 + j
			b, cs := uint(lt)&63, 2*uint(j)&63
			pw1 |= (t1 ^ 1) << b
			pw2 |= (t2 ^ 1) << b
			// the predecessor of the current state: flag bit 0 for A,
			// bit 1 for N; a set bit means A
			t1 = ^(f1 >> ((cs + uint(t1)) & 63)) & 1
			t2 = ^(f2 >> ((cs + uint(t2)) & 63)) & 1
			if b == 0 {
				bp1[wi], bp2[wi] = pw1, pw2
				pw1, pw2 = 0, 0
			}
			if w.t0+lt == 0 {
				break
			}
			q1, q2 := &p1[lt], &p2[lt]
			c1, c2 := 4*(x1>>cs&gm), 4*(x2>>cs&gm)
			ba1, bn1 = q1[c1]*ba1+q1[c1+2]*bn1, q1[c1+1]*ba1+q1[c1+3]*bn1
			ba2, bn2 = q2[c2]*ba2+q2[c2+2]*bn2, q2[c2+1]*ba2+q2[c2+3]*bn2
			if lt%rescaleEvery == 0 {
				inv1, inv2 := 1/(ba1+bn1), 1/(ba2+bn2)
				ba1, bn1, ba2, bn2 = ba1*inv1, bn1*inv1, ba2*inv2, bn2*inv2
				if lt%blockSites == 0 && lt > 0 {
					k := 2 * (lt/blockSites - 1)
					ck1[k], ck1[k+1] = ba1, bn1
					ck2[k], ck2[k+1] = ba2, bn2
				}
			}
		}
	}
	st1.ba, st1.bn, st1.st = ba1, bn1, uint8(t1)
	st2.ba, st2.bn, st2.st = ba2, bn2, uint8(t2)
}

// runAcc assembles one sample's current run in sweep 3, as hmmRuns does
// on the whole path: a stretch of autozygous sites not split by a gap,
// trimmed to its first and last called sites, with the posterior sum
// taken in site order and frozen at the last called site.
type runAcc struct {
	open    bool  // the previous site is in a stretch
	has     bool  // the stretch has a called site
	lastPos int64 // position of the previous site of the stretch
	first   int   // chromosome index of the first called site
	last    int
	run     Run     // Start, StartCM set at the first called site; the rest at the last
	q       float64 // posterior sum from the first called site to the current site
	nHet    int
	nMiss   int
}

// close ends the stretch, appending its run if it has a called site.
func (a *runAcc) close(out *[]Run) {
	if a.open && a.has {
		r := a.run
		r.NSites = a.last - a.first + 1
		r.Quality /= float64(r.NSites)
		*out = append(*out, r)
	}
	a.open, a.has = false, false
}

// postHook, when set (tests, one collector at a time), receives every
// posterior computed by sweep 3.
var postHook func(s, t int, p float64)

// posteriorSample is sweep 3 over window w for sample s: posteriors in
// the blocks where the path is autozygous, from the checkpoints, and run
// assembly.
func (g geometry) posteriorSample(w *window, tab *siteTable, sc *sweepScratch, f float64, maxGap int64, s int, acc *runAcc, out *[]Run) {
	n := w.n
	path := w.bp[s*g.ww : (s+1)*g.ww] // path word m at 2m
	ckF, ckB := w.ckF[s*g.nb*2:(s+1)*g.nb*2], w.ckB[s*g.nb*2:(s+1)*g.nb*2]
	var p []siteProducts
	var gm uint64
	gw := w.geno[s*g.ww : (s+1)*g.ww]
	for j := 0; j*blockSites < n; j++ {
		lo, hi := j*blockSites, min((j+1)*blockSites, n)
		// first and last autozygous sites of the block
		fa, la := -1, -1
		for m := lo >> 6; m<<6 < hi; m++ {
			x := path[2*m]
			if hi-m<<6 < 64 {
				x &= 1<<uint(hi-m<<6) - 1
			}
			if x != 0 {
				if fa < 0 {
					fa = m<<6 + bits.TrailingZeros64(x)
				}
				la = m<<6 + 63 - bits.LeadingZeros64(x)
			}
		}
		if fa < 0 {
			acc.close(out)
			continue
		}
		if p == nil {
			p, gm = g.products(w, tab, s, &sc.ps1)
		}
		// forward values over [lo, la]
		sc.alpha = grow(sc.alpha, 2*blockSites)
		al := sc.alpha
		var a, b float64
		from := lo
		if w.t0+lo == 0 {
			ea, en := g.emAt(w, tab, s, 0)
			a, b = f*ea, (1-f)*en
			al[0], al[1] = a, b
			from = 1
		} else {
			a, b = ckF[2*j], ckF[2*j+1]
		}
		for lt := from; lt <= la; lt++ {
			c := 4 * (gw[lt>>5] >> (2 * uint(lt&31)) & gm)
			q := &p[lt]
			a, b = a*q[c]+b*q[c+1], a*q[c+2]+b*q[c+3]
			if lt%rescaleEvery == 0 {
				inv := 1 / (a + b)
				a, b = a*inv, b*inv
			}
			al[2*(lt-lo)], al[2*(lt-lo)+1] = a, b
		}
		// backward values over [fa, hi-1] and posteriors at autozygous sites
		sc.post = grow(sc.post, blockSites)
		post := sc.post
		ba, bn := ckB[2*j], ckB[2*j+1]
		if path[2*((hi-1)>>6)]>>uint((hi-1)&63)&1 != 0 {
			pp, qq := al[2*(hi-1-lo)]*ba, al[2*(hi-1-lo)+1]*bn
			post[hi-1-lo] = pp / (pp + qq)
		}
		for lt := hi - 1; lt > fa; lt-- {
			c := 4 * (gw[lt>>5] >> (2 * uint(lt&31)) & gm)
			q := &p[lt]
			ba, bn = q[c]*ba+q[c+2]*bn, q[c+1]*ba+q[c+3]*bn
			if lt%rescaleEvery == 0 {
				inv := 1 / (ba + bn)
				ba, bn = ba*inv, bn*inv
			}
			if path[2*((lt-1)>>6)]>>uint((lt-1)&63)&1 != 0 {
				pp, qq := al[2*(lt-1-lo)]*ba, al[2*(lt-1-lo)+1]*bn
				post[lt-1-lo] = pp / (pp + qq)
			}
		}
		if postHook != nil {
			for lt := fa; lt <= la; lt++ {
				if path[2*(lt>>6)]>>uint(lt&63)&1 != 0 {
					postHook(s, w.t0+lt, post[lt-lo])
				}
			}
		}
		// runs, as hmmRuns
		if fa > lo {
			acc.close(out)
		}
		for lt := fa; lt < hi; lt++ {
			if path[2*(lt>>6)]>>uint(lt&63)&1 == 0 {
				acc.close(out)
				if lt > la {
					break
				}
				continue
			}
			pos := w.pos[lt]
			if acc.open && pos-acc.lastPos > maxGap {
				acc.close(out)
			}
			acc.open = true
			acc.lastPos = pos
			c := uint8(gw[lt>>5]>>(2*uint(lt&31))) & 3
			if !acc.has {
				if c == 3 {
					continue
				}
				acc.has = true
				acc.first = w.t0 + lt
				acc.run = Run{Sample: s, Start: pos, StartCM: w.cm[lt]}
				acc.q, acc.nHet, acc.nMiss = 0, 0, 0
			}
			acc.q += post[lt-lo]
			switch c {
			case 1:
				acc.nHet++
			case 3:
				acc.nMiss++
			}
			if c != 3 {
				acc.last = w.t0 + lt
				acc.run.End, acc.run.EndCM = pos, w.cm[lt]
				acc.run.NHet, acc.run.NMissing, acc.run.Quality = acc.nHet, acc.nMiss, acc.q
			}
		}
	}
}

// maxNonNeg is max for non-negative numbers (not NaN), by their bit
// patterns, whose order as integers is the order of the values: cheaper
// than the built-in max, which must also order NaN and signed zeros.
func maxNonNeg(a, b float64) float64 {
	x, y := int64(math.Float64bits(a)), int64(math.Float64bits(b))
	return math.Float64frombits(uint64(x ^ ((x ^ y) & ((x - y) >> 63))))
}
