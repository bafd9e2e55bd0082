package roh

// forward9 and backward9 are forward and backward for the default grid
// (8 autozygous classes + 1), with the class count a constant so that the
// compiler drops the bounds checks and unrolls nothing by guesswork. The
// arithmetic, and its order, are those of the general passes, so results
// are identical (TestAges9MatchesGeneral).

const m9 = 9

func (w *AgeWorker) forward9(t *AgeTables, rho []float64, lo, hi int) {
	n := t.N
	em, al, vu, sd := w.em[:2*n], w.alpha[:m9*n], t.vu[:2*m9*n], w.sdraw[:n]
	r := (*[m9]float64)(rho)
	var p [m9]float64
	a0 := (*[m9]float64)(al[m9*lo:])
	for l := 0; l < m9-1; l++ {
		a0[l] = r[l] * em[2*lo]
	}
	a0[m9-1] = r[m9-1] * em[2*lo+1]
	p = *a0
	sd[lo] = 0
	for i := lo + 1; i < hi; i++ {
		cur := (*[m9]float64)(al[m9*i:])
		row := (*[2 * m9]float64)(vu[2*m9*i:])
		s := 0.0
		for k := 0; k < m9; k++ {
			s += row[m9+k] * p[k]
		}
		sd[i] = s
		eA, eN := em[2*i], em[2*i+1]
		for l := 0; l < m9-1; l++ {
			p[l] = eA * (row[l]*p[l] + r[l]*s)
		}
		p[m9-1] = eN * (row[m9-1]*p[m9-1] + r[m9-1]*s)
		*cur = p
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

func (w *AgeWorker) backward9(t *AgeTables, rho []float64, lo, hi int, sums, counts *[maxAgeStates]float64) {
	n := t.N
	em, al, vu, span, sd := w.em[:2*n], w.alpha[:m9*n], t.vu[:2*m9*n], t.Span[:n], w.sdraw[:n]
	r := (*[m9]float64)(rho)
	var bt, rr, su, co [m9]float64
	copy(su[:], sums[:m9])
	copy(co[:], counts[:m9])
	for l := range bt {
		bt[l] = 1
	}
	for i := hi - 1; i > lo; i-- {
		cur := (*[m9]float64)(al[m9*i:])
		row := (*[2 * m9]float64)(vu[2*m9*i:])
		s := sd[i]
		eA, eN := em[2*i], em[2*i+1]
		var wsum, z float64
		for l := 0; l < m9; l++ {
			e := eA
			if l == m9-1 {
				e = eN
			}
			g := cur[l] * bt[l]
			bl := e * bt[l]
			pb := r[l] * bl
			wsum += pb
			rr[l] = pb * s
			z += g
			cur[l] = g
			bt[l] = row[l] * bl
		}
		inv := 1 / z
		sp := span[i] * inv
		for l := 0; l < m9; l++ {
			g := cur[l]
			co[l] += rr[l] * inv
			su[l] += g * sp
			cur[l] = g * inv
			bt[l] += row[m9+l] * wsum
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
	copy(sums[:m9], su[:])
	copy(counts[:m9], co[:])
	a0 := al[m9*lo : m9*lo+m9]
	z := 0.0
	for l := 0; l < m9; l++ {
		a0[l] *= bt[l]
		z += a0[l]
	}
	for l := 0; l < m9; l++ {
		g := a0[l] / z
		counts[l] += g
		sums[l] += g * span[lo]
		a0[l] = g
	}
}
