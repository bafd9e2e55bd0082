package roh

import "math"

// The two-lane passes below run the same recursions as forwardViterbi
// (lookup mode) and backward for two samples at once. One sample's
// recursion is a chain of dependent multiplications that leaves most of
// the processor idle; two independent chains in one loop fill it, and the
// per-site tables are read once for both. The arithmetic of each lane is
// exactly that of the one-lane pass, so results are identical
// (TestTwoLanesMatchOneLane).

// traceback turns Viterbi back-pointer flags into the state path in place.
func traceback(bp []uint8, va, vn float64) {
	st := uint8(stA)
	if vn >= va {
		st = stN
	}
	for t := len(bp) - 1; t >= 0; t-- {
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

// forwardViterbi2 is forwardViterbi for the samples whose codes are in
// w1.code and w2.code; with lookup false their emissions must already be
// in w1.em and w2.em (fillEmissions).
func forwardViterbi2(ch *chromData, u []float64, f float64, w1, w2 *hmmScratch, lookup bool) {
	n := len(w1.code)
	for _, w := range [2]*hmmScratch{w1, w2} {
		w.alpha = grow(w.alpha, 2*n)
		w.path = grow(w.path, n)
		w.em = grow(w.em, 2*n)
	}
	tab := ch.emit
	u = u[:n]
	em1, al1, bp1, c1 := w1.em[:2*n], w1.alpha[:2*n], w1.path[:n], w1.code[:n]
	em2, al2, bp2, c2 := w2.em[:2*n], w2.alpha[:2*n], w2.path[:n], w2.code[:n]
	if lookup {
		g1, g2 := c1[0]&3, c2[0]&3
		em1[0], em1[1] = float64(tab[g1]), float64(tab[4+g1])
		em2[0], em2[1] = float64(tab[g2]), float64(tab[4+g2])
	}
	a1, b1 := f*em1[0], (1-f)*em1[1]
	a2, b2 := f*em2[0], (1-f)*em2[1]
	al1[0], al1[1], al2[0], al2[1] = a1, b1, a2, b2
	va1, vn1, va2, vn2 := a1, b1, a2, b2
	bp1[0], bp2[0] = 0, 0
	for t := 1; t < n; t++ {
		var e1a, e1n, e2a, e2n float64
		if lookup {
			row := tab[8*t : 8*t+8 : 8*t+8]
			g1, g2 := c1[t]&3, c2[t]&3
			e1a, e1n = float64(row[g1]), float64(row[4+g1])
			e2a, e2n = float64(row[g2]), float64(row[4+g2])
			em1[2*t], em1[2*t+1] = e1a, e1n
			em2[2*t], em2[2*t+1] = e2a, e2n
		} else {
			e1a, e1n = em1[2*t], em1[2*t+1]
			e2a, e2n = em2[2*t], em2[2*t+1]
		}
		an, na := u[t]*(1-f), u[t]*f
		sa, sn := 1-an, 1-na
		aa1, na21, an21, nn1 := sa*e1a, na*e1a, an*e1n, sn*e1n
		aa2, na22, an22, nn2 := sa*e2a, na*e2a, an*e2n, sn*e2n
		a1, b1 = a1*aa1+b1*na21, a1*an21+b1*nn1
		a2, b2 = a2*aa2+b2*na22, a2*an22+b2*nn2
		// branch-free max and argmax per lane, as in forwardViterbi
		xa1 := int64(math.Float64bits(va1 * aa1))
		xn1 := int64(math.Float64bits(vn1 * na21))
		ya1 := int64(math.Float64bits(va1 * an21))
		yn1 := int64(math.Float64bits(vn1 * nn1))
		xa2 := int64(math.Float64bits(va2 * aa2))
		xn2 := int64(math.Float64bits(vn2 * na22))
		ya2 := int64(math.Float64bits(va2 * an22))
		yn2 := int64(math.Float64bits(vn2 * nn2))
		sa1, sn1 := (xn1-xa1)>>63, (yn1-ya1)>>63
		sa2, sn2 := (xn2-xa2)>>63, (yn2-ya2)>>63
		fl1 := uint8(1+sa1) | uint8(-sn1)<<1
		fl2 := uint8(1+sa2) | uint8(-sn2)<<1
		va1 = math.Float64frombits(uint64(xa1 ^ ((xa1 ^ xn1) &^ sa1)))
		vn1 = math.Float64frombits(uint64(yn1 ^ ((yn1 ^ ya1) & sn1)))
		va2 = math.Float64frombits(uint64(xa2 ^ ((xa2 ^ xn2) &^ sa2)))
		vn2 = math.Float64frombits(uint64(yn2 ^ ((yn2 ^ ya2) & sn2)))
		if t%rescaleEvery == 0 {
			inv1, inv2 := 1/(a1+b1), 1/(a2+b2)
			a1, b1, a2, b2 = a1*inv1, b1*inv1, a2*inv2, b2*inv2
			inv1, inv2 = 1/max(va1, vn1), 1/max(va2, vn2)
			va1, vn1, va2, vn2 = va1*inv1, vn1*inv1, va2*inv2, vn2*inv2
		}
		al1[2*t], al1[2*t+1] = a1, b1
		al2[2*t], al2[2*t+1] = a2, b2
		bp1[t], bp2[t] = fl1, fl2
	}
	traceback(bp1, va1, vn1)
	traceback(bp2, va2, vn2)
}

// backward2 is backward (without EM statistics) for two samples.
func backward2(u []float64, f float64, w1, w2 *hmmScratch) {
	n := len(w1.em) / 2
	w1.post = grow(w1.post, n)
	w2.post = grow(w2.post, n)
	em1, al1, post1, p1 := w1.em[:2*n], w1.alpha[:2*n], w1.post[:n], w1.path[:n]
	em2, al2, post2, p2 := w2.em[:2*n], w2.alpha[:2*n], w2.post[:n], w2.path[:n]
	u = u[:n]
	ba1, bn1, ba2, bn2 := 1.0, 1.0, 1.0, 1.0
	post1[n-1] = al1[2*n-2] / (al1[2*n-2] + al1[2*n-1])
	post2[n-1] = al2[2*n-2] / (al2[2*n-2] + al2[2*n-1])
	for t := n - 1; t >= 1; t-- {
		an, na := u[t]*(1-f), u[t]*f
		k0, k1, k2, k3 := 1-an, an, na, 1-na
		e1a, e1n := em1[2*t], em1[2*t+1]
		e2a, e2n := em2[2*t], em2[2*t+1]
		ba1, bn1 = (k0*e1a)*ba1+(k1*e1n)*bn1, (k2*e1a)*ba1+(k3*e1n)*bn1
		ba2, bn2 = (k0*e2a)*ba2+(k1*e2n)*bn2, (k2*e2a)*ba2+(k3*e2n)*bn2
		if t%rescaleEvery == 0 {
			inv1, inv2 := 1/(ba1+bn1), 1/(ba2+bn2)
			ba1, bn1, ba2, bn2 = ba1*inv1, bn1*inv1, ba2*inv2, bn2*inv2
		}
		if p1[t-1] == stA {
			p, q := al1[2*t-2]*ba1, al1[2*t-1]*bn1
			post1[t-1] = p / (p + q)
		}
		if p2[t-1] == stA {
			p, q := al2[2*t-2]*ba2, al2[2*t-1]*bn2
			post2[t-1] = p / (p + q)
		}
	}
}
