package pedigree

import "slices"

// inbreedingBySire computes the same coefficients as the Meuwissen & Luo
// trace, grouped by sire in the manner of Sargolzaei, Iwaisaki & Colleau
// (2005, Journal of Animal Breeding and Genetics 122:325-331): animals are
// taken generation by generation (level = longest path to a founder); for
// each sire of the generation the column x = A e_sire is computed with
// Colleau's (2002, Genetics Selection Evolution 34:409-421) indirect
// method, A = T D T', on the ancestors of that sire's mates only, and each
// offspring gets F = x_dam / 2. The sire's ancestry is traced once per
// generation instead of once per offspring, and the dams' ancestries are
// walked once for all their matings with that sire.
func (p *Pedigree) inbreedingBySire() (f, d []float64) {
	n := len(p.ids)
	f = make([]float64, n)
	d = make([]float64, n)
	level := make([]int32, n)
	maxLevel := int32(0)
	for i := 0; i < n; i++ {
		s, m := p.sire[i], p.dam[i]
		var l int32
		if s >= 0 {
			l = level[s] + 1
		}
		if m >= 0 && level[m]+1 > l {
			l = level[m] + 1
		}
		level[i] = l
		maxLevel = max(maxLevel, l)
	}
	// Animals of each level with both parents known, sorted by sire.
	byLevel := make([][]int32, maxLevel+1)
	setD := func(i int32) {
		fs, fd := -1.0, -1.0
		if s := p.sire[i]; s >= 0 {
			fs = f[s]
		}
		if m := p.dam[i]; m >= 0 {
			fd = f[m]
		}
		d[i] = 0.5 - 0.25*(fs+fd)
	}
	for i := int32(0); i < int32(n); i++ {
		byLevel[level[i]] = append(byLevel[level[i]], i)
	}
	t := newTracer(n)
	v := make([]float64, n) // D_j * T_{sire,j} on the sire's ancestors
	x := make([]float64, n)
	stamp := make([]int32, n) // group id that last computed x[j]
	var sireAnc []int32
	var stack []int32
	group := int32(0)
	for lev := int32(0); lev <= maxLevel; lev++ {
		// Founders and animals with an unknown parent keep F = 0; the others
		// are sorted by sire (those with an unknown parent sort first).
		all := byLevel[lev]
		animals := make([]int32, 0, len(all))
		for _, i := range all {
			if p.sire[i] >= 0 && p.dam[i] >= 0 {
				animals = append(animals, i)
			}
		}
		slices.SortStableFunc(animals, func(a, b int32) int { return int(p.sire[a] - p.sire[b]) })
		for lo := 0; lo < len(animals); {
			s := p.sire[animals[lo]]
			hi := lo
			for hi < len(animals) && p.sire[animals[hi]] == s {
				hi++
			}
			group++
			// u = T' e_s over the ancestors of s (and s), v = D u.
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
				v[j] = d[j] * uj
				sireAnc = append(sireAnc, j)
			}
			// x = T v at each dam: x_i = v_i + (x_sire + x_dam)/2, evaluated
			// depth-first with memoisation over the dams' ancestors.
			for _, i := range animals[lo:hi] {
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
		// D of this level's animals, for the levels above.
		for _, i := range all {
			setD(i)
		}
		byLevel[lev] = nil
	}
	return f, d
}
