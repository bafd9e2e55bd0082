package pedigree

import "slices"

// inbreedingBySire computes the same coefficients as the Meuwissen & Luo
// trace, grouped by sire in the manner of Sargolzaei, Iwaisaki & Colleau
// (2005, Journal of Animal Breeding and Genetics 122:325-331). For each
// sire s, taken in pedigree order, the column x = A e_s is computed with
// Colleau's (2002, Genetics Selection Evolution 34:409-421) indirect
// method, A = T D T' (T = L of Meuwissen & Luo):
//
//   - u = T' e_s by tracing the ancestors of s, youngest first;
//   - v = D u, which needs D only on s and its ancestors, whose F are known
//     because every sire before s in pedigree order is done;
//   - x = T v at each mate d of s, by x_i = v_i + (x_sire + x_dam)/2 over
//     the ancestors of the mates, memoised within the group;
//
// and every offspring of s and d gets F = a_sd / 2 = x_d / 2. The sire's
// ancestry is traced once for all its offspring, and the mates' ancestries
// are walked once for all of them.
func (p *Pedigree) inbreedingBySire() (f, d []float64) {
	n := len(p.ids)
	f = make([]float64, n)
	dOf := func(i int32) float64 {
		fs, fd := -1.0, -1.0
		if s := p.sire[i]; s >= 0 {
			fs = f[s]
		}
		if m := p.dam[i]; m >= 0 {
			fd = f[m]
		}
		return 0.5 - 0.25*(fs+fd)
	}
	// Animals with both parents known, by sire (pedigree order within).
	var kids []int32
	for i := int32(0); i < int32(n); i++ {
		if p.sire[i] >= 0 && p.dam[i] >= 0 {
			kids = append(kids, i)
		}
	}
	slices.SortStableFunc(kids, func(a, b int32) int { return int(p.sire[a] - p.sire[b]) })
	t := newTracer(n)
	v := make([]float64, n) // D_j * T_{sire,j} on the sire's ancestors
	x := make([]float64, n)
	stamp := make([]int32, n) // group that last computed x[j]
	var sireAnc, stack []int32
	group := int32(0)
	for lo := 0; lo < len(kids); {
		s := p.sire[kids[lo]]
		hi := lo
		for hi < len(kids) && p.sire[kids[hi]] == s {
			hi++
		}
		group++
		sireAnc = sireAnc[:0]
		t.push(s, 1)
		for len(t.heap) > 0 {
			j := t.pop()
			uj := t.l[j]
			t.l[j] = 0
			if a := p.sire[j]; a >= 0 {
				t.push(a, 0.5*uj)
			}
			if a := p.dam[j]; a >= 0 {
				t.push(a, 0.5*uj)
			}
			v[j] = dOf(j) * uj
			sireAnc = append(sireAnc, j)
		}
		for _, i := range kids[lo:hi] {
			dam := p.dam[i]
			if stamp[dam] != group {
				stack = append(stack[:0], dam)
				for len(stack) > 0 {
					j := stack[len(stack)-1]
					if stamp[j] == group {
						stack = stack[:len(stack)-1]
						continue
					}
					a, b := p.sire[j], p.dam[j]
					ready := true
					if a >= 0 && stamp[a] != group {
						stack = append(stack, a)
						ready = false
					}
					if b >= 0 && stamp[b] != group {
						stack = append(stack, b)
						ready = false
					}
					if !ready {
						continue
					}
					xj := v[j]
					if a >= 0 {
						xj += 0.5 * x[a]
					}
					if b >= 0 {
						xj += 0.5 * x[b]
					}
					x[j] = xj
					stamp[j] = group
					stack = stack[:len(stack)-1]
				}
			}
			f[i] = 0.5 * x[dam]
		}
		for _, j := range sireAnc {
			v[j] = 0
		}
		lo = hi
	}
	d = make([]float64, n)
	for i := int32(0); i < int32(n); i++ {
		d[i] = dOf(i)
	}
	return f, d
}
