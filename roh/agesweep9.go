package roh

// forwardWindow9 and backwardWindow9 are forwardWindow and
// backwardWindow for the default grid (8 autozygous classes + 1): the
// chain's values of one sample live in local variables across the sites
// of the window instead of in memory, so that a site's step waits on
// arithmetic only, not on stores and reloads of the site before. The
// arithmetic and its order are those of the general recursions (and of
// AgeWorker.forward9 and backward9), so results are identical
// (TestAgeSweepsMatchWorker).

func (a *ageChrom) forwardWindow9(g geometry, w *window, s int, sm *ageSample, sc *ageScratch, keep bool) {
	a.checkpoint(w, s, sm, sc, keep)
	n := w.n
	r := (*[m9]float64)(sm.rho[:m9])
	p0, p1, p2, p3, p4, p5, p6, p7, p8 := sm.fp[0], sm.fp[1], sm.fp[2], sm.fp[3], sm.fp[4], sm.fp[5], sm.fp[6], sm.fp[7], sm.fp[8]
	vu := a.tab.vu[:2*m9*n]
	rows := a.tab.rows[:8*n]
	gw := w.geno[s*g.ww : (s+1)*g.ww]
	var alpha []float64
	var sd []float64
	var flag []uint8
	var em []float64
	if keep {
		alpha, sd, flag, em = sc.alpha[:m9*n], sc.sd[:n], sc.flag[:n], sc.em[:2*n]
	}
	iv := sm.iv
	fIv, fIn, fLo := sm.fIv, sm.fIn, sm.fLo
	for lt := 0; lt < n; lt++ {
		c := w.cm[lt]
		for fIv < len(iv) && iv[fIv][1] < c {
			fIv++
		}
		if !(fIv < len(iv) && iv[fIv][0] <= c) {
			fIn = false
			if keep {
				flag[lt] = 0
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
			em[2*lt], em[2*lt+1] = eA, eN
		}
		if !fIn {
			fIn, fLo = true, i
			p0, p1, p2, p3, p4, p5, p6, p7, p8 = r[0]*eA, r[1]*eA, r[2]*eA, r[3]*eA, r[4]*eA, r[5]*eA, r[6]*eA, r[7]*eA, r[8]*eN
			if keep {
				al := (*[m9]float64)(alpha[m9*lt:])
				al[0], al[1], al[2], al[3], al[4], al[5], al[6], al[7], al[8] = p0, p1, p2, p3, p4, p5, p6, p7, p8
				sd[lt] = 0
				flag[lt] = 3
			}
			continue
		}
		row := (*[2 * m9]float64)(vu[2*m9*lt:])
		draw := row[9]*p0 + row[10]*p1 + row[11]*p2 + row[12]*p3 + row[13]*p4 + row[14]*p5 + row[15]*p6 + row[16]*p7 + row[17]*p8
		p0 = eA * (row[0]*p0 + r[0]*draw)
		p1 = eA * (row[1]*p1 + r[1]*draw)
		p2 = eA * (row[2]*p2 + r[2]*draw)
		p3 = eA * (row[3]*p3 + r[3]*draw)
		p4 = eA * (row[4]*p4 + r[4]*draw)
		p5 = eA * (row[5]*p5 + r[5]*draw)
		p6 = eA * (row[6]*p6 + r[6]*draw)
		p7 = eA * (row[7]*p7 + r[7]*draw)
		p8 = eN * (row[8]*p8 + r[8]*draw)
		if keep {
			al := (*[m9]float64)(alpha[m9*lt:])
			al[0], al[1], al[2], al[3], al[4], al[5], al[6], al[7], al[8] = p0, p1, p2, p3, p4, p5, p6, p7, p8
			sd[lt] = draw
			flag[lt] = 1
		}
		if (i-fLo)%rescaleEvery == 0 {
			inv := 1 / (p0 + p1 + p2 + p3 + p4 + p5 + p6 + p7 + p8)
			p0, p1, p2, p3, p4, p5, p6, p7, p8 = p0*inv, p1*inv, p2*inv, p3*inv, p4*inv, p5*inv, p6*inv, p7*inv, p8*inv
		}
	}
	sm.fIv, sm.fIn, sm.fLo = fIv, fIn, fLo
	sm.fp[0], sm.fp[1], sm.fp[2], sm.fp[3], sm.fp[4], sm.fp[5], sm.fp[6], sm.fp[7], sm.fp[8] = p0, p1, p2, p3, p4, p5, p6, p7, p8
}

func (a *ageChrom) backwardWindow9(w *window, sm *ageSample, sc *ageScratch) {
	n := w.n
	r := (*[m9]float64)(sm.rho[:m9])
	vu, span := a.tab.vu[:2*m9*n], a.tab.span[:n]
	alpha, sdr, flag, em := sc.alpha[:m9*n], sc.sd[:n], sc.flag[:n], sc.em[:2*n]
	co, su := (*[m9]float64)(sm.counts[:m9]), (*[m9]float64)(sm.sums[:m9])
	b0, b1, b2, b3, b4, b5, b6, b7, b8 := sm.bt[0], sm.bt[1], sm.bt[2], sm.bt[3], sm.bt[4], sm.bt[5], sm.bt[6], sm.bt[7], sm.bt[8]
	bIn, bHi, bRun := sm.bIn, sm.bHi, sm.bRun
	runs := sm.runs
	for lt := n - 1; lt >= 0; lt-- {
		fl := flag[lt]
		if fl == 0 {
			bIn = false
			continue
		}
		i := w.t0 + lt
		if !bIn {
			bIn, bHi = true, i+1
			b0, b1, b2, b3, b4, b5, b6, b7, b8 = 1, 1, 1, 1, 1, 1, 1, 1, 1
		}
		cur := (*[m9]float64)(alpha[m9*lt:])
		// the run holding this site, if any
		pos := w.pos[lt]
		var run *ageRunRef
		for bRun >= 0 && runs[bRun].start > pos {
			bRun--
		}
		if bRun >= 0 && runs[bRun].end >= pos {
			run = &runs[bRun]
		}
		if sm.first {
			sm.inSpan += span[lt]
		}
		if fl == 3 {
			// first site of an age window: its class is a draw from rho
			gg := [m9]float64{cur[0] * b0, cur[1] * b1, cur[2] * b2, cur[3] * b3, cur[4] * b4, cur[5] * b5, cur[6] * b6, cur[7] * b7, cur[8] * b8}
			z := gg[0] + gg[1] + gg[2] + gg[3] + gg[4] + gg[5] + gg[6] + gg[7] + gg[8]
			for l := 0; l < m9; l++ {
				g := gg[l] / z
				co[l] += g
				su[l] += g * span[lt]
				if run != nil && l < m9-1 {
					run.sum[l] += g
				}
			}
			bIn = false
			continue
		}
		sd := sdr[lt]
		eA, eN := em[2*lt], em[2*lt+1]
		row := (*[2 * m9]float64)(vu[2*m9*lt:])
		g0, g1, g2, g3, g4, g5, g6, g7, g8 := cur[0]*b0, cur[1]*b1, cur[2]*b2, cur[3]*b3, cur[4]*b4, cur[5]*b5, cur[6]*b6, cur[7]*b7, cur[8]*b8
		l0, l1, l2, l3, l4, l5, l6, l7, l8 := eA*b0, eA*b1, eA*b2, eA*b3, eA*b4, eA*b5, eA*b6, eA*b7, eN*b8
		q0, q1, q2, q3, q4, q5, q6, q7, q8 := r[0]*l0, r[1]*l1, r[2]*l2, r[3]*l3, r[4]*l4, r[5]*l5, r[6]*l6, r[7]*l7, r[8]*l8
		wsum := q0 + q1 + q2 + q3 + q4 + q5 + q6 + q7 + q8
		z := g0 + g1 + g2 + g3 + g4 + g5 + g6 + g7 + g8
		b0 = row[0]*l0 + row[9]*wsum
		b1 = row[1]*l1 + row[10]*wsum
		b2 = row[2]*l2 + row[11]*wsum
		b3 = row[3]*l3 + row[12]*wsum
		b4 = row[4]*l4 + row[13]*wsum
		b5 = row[5]*l5 + row[14]*wsum
		b6 = row[6]*l6 + row[15]*wsum
		b7 = row[7]*l7 + row[16]*wsum
		b8 = row[8]*l8 + row[17]*wsum
		inv := 1 / z
		sp := span[lt] * inv
		co[0] += q0 * sd * inv
		co[1] += q1 * sd * inv
		co[2] += q2 * sd * inv
		co[3] += q3 * sd * inv
		co[4] += q4 * sd * inv
		co[5] += q5 * sd * inv
		co[6] += q6 * sd * inv
		co[7] += q7 * sd * inv
		co[8] += q8 * sd * inv
		su[0] += g0 * sp
		su[1] += g1 * sp
		su[2] += g2 * sp
		su[3] += g3 * sp
		su[4] += g4 * sp
		su[5] += g5 * sp
		su[6] += g6 * sp
		su[7] += g7 * sp
		su[8] += g8 * sp
		if run != nil {
			rs := (*[m9 - 1]float64)(run.sum[:m9-1])
			rs[0] += g0 * inv
			rs[1] += g1 * inv
			rs[2] += g2 * inv
			rs[3] += g3 * inv
			rs[4] += g4 * inv
			rs[5] += g5 * inv
			rs[6] += g6 * inv
			rs[7] += g7 * inv
		}
		if (bHi-i)%rescaleEvery == 0 {
			inv := 1 / (b0 + b1 + b2 + b3 + b4 + b5 + b6 + b7 + b8)
			b0, b1, b2, b3, b4, b5, b6, b7, b8 = b0*inv, b1*inv, b2*inv, b3*inv, b4*inv, b5*inv, b6*inv, b7*inv, b8*inv
		}
	}
	sm.bIn, sm.bHi, sm.bRun = bIn, bHi, bRun
	sm.bt[0], sm.bt[1], sm.bt[2], sm.bt[3], sm.bt[4], sm.bt[5], sm.bt[6], sm.bt[7], sm.bt[8] = b0, b1, b2, b3, b4, b5, b6, b7, b8
}
