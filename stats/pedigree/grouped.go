package pedigree

import "slices"

// column computes entries of one column x = A e_s of the numerator
// relationship matrix by Colleau's (2002, Genetics Selection Evolution
// 34:409-421) indirect method, A = T D T' (T = L of Meuwissen & Luo):
//
//   - u = T' e_s by passing weights from s up through its ancestors;
//   - v = D u, which needs D only on s and its ancestors;
//   - x = T v at the animals asked for, by x_i = v_i + (x_sire + x_dam)/2
//     over their ancestors, memoised until the next start.
type column struct {
	p       *Pedigree
	u, v, x []float64
	stamp   []int32 // column number that last computed x[j]
	seen    []int32 // column number that last listed j among the ancestors
	num     int32
	anc     []int32 // s and its ancestors, parents first (where v is set)
	stack   []int32
}

func newColumn(p *Pedigree) *column {
	n := len(p.ids)
	return &column{p: p, u: make([]float64, n), v: make([]float64, n), x: make([]float64, n),
		stamp: make([]int32, n), seen: make([]int32, n)}
}

// start begins the column of s; d(j) must return D_j for s and its ancestors.
// The ancestors are listed parents-first by a depth-first post-order walk
// (no sorting or heap needed), and u is pushed from s up through them in
// the reverse of that order, so each node passes on its u complete.
func (c *column) start(s int32, d func(int32) float64) {
	for _, j := range c.anc {
		c.v[j] = 0
	}
	c.anc = c.anc[:0]
	c.num++
	p := c.p
	// Post-order over s and its ancestors; ^j on the stack emits j.
	c.stack = append(c.stack[:0], s)
	for len(c.stack) > 0 {
		j := c.stack[len(c.stack)-1]
		c.stack = c.stack[:len(c.stack)-1]
		if j < 0 {
			c.anc = append(c.anc, ^j)
			continue
		}
		if c.seen[j] == c.num {
			continue
		}
		c.seen[j] = c.num
		c.stack = append(c.stack, ^j)
		if a := p.sire[j]; a >= 0 && c.seen[a] != c.num {
			c.stack = append(c.stack, a)
		}
		if a := p.dam[j]; a >= 0 && c.seen[a] != c.num {
			c.stack = append(c.stack, a)
		}
	}
	u := c.u
	u[s] = 1
	for k := len(c.anc) - 1; k >= 0; k-- {
		j := c.anc[k]
		uj := u[j]
		u[j] = 0
		if a := p.sire[j]; a >= 0 {
			u[a] += 0.5 * uj
		}
		if a := p.dam[j]; a >= 0 {
			u[a] += 0.5 * uj
		}
		c.v[j] = d(j) * uj
	}
}

// at returns a_{s,i} for the column started last.
func (c *column) at(i int32) float64 {
	p := c.p
	if c.stamp[i] == c.num {
		return c.x[i]
	}
	c.stack = append(c.stack[:0], i)
	for len(c.stack) > 0 {
		j := c.stack[len(c.stack)-1]
		if c.stamp[j] == c.num {
			c.stack = c.stack[:len(c.stack)-1]
			continue
		}
		a, b := p.sire[j], p.dam[j]
		ready := true
		if a >= 0 && c.stamp[a] != c.num {
			c.stack = append(c.stack, a)
			ready = false
		}
		if b >= 0 && c.stamp[b] != c.num {
			c.stack = append(c.stack, b)
			ready = false
		}
		if !ready {
			continue
		}
		xj := c.v[j]
		if a >= 0 {
			xj += 0.5 * c.x[a]
		}
		if b >= 0 {
			xj += 0.5 * c.x[b]
		}
		c.x[j] = xj
		c.stamp[j] = c.num
		c.stack = c.stack[:len(c.stack)-1]
	}
	return c.x[i]
}

// inbreedingBySire computes the same coefficients as the Meuwissen & Luo
// trace, grouped by sire in the manner of Sargolzaei, Iwaisaki & Colleau
// (2005, Journal of Animal Breeding and Genetics 122:325-331): for each
// sire s, taken in pedigree order, the column A e_s is computed (see
// column) and every offspring of s and a dam d gets F = a_sd / 2. D is
// needed only on s and its ancestors, whose F are known because every sire
// before s in pedigree order is done. The sire's ancestry is traced once
// for all its offspring, and the mates' ancestries are walked once for all
// of them.
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
	col := newColumn(p)
	for lo := 0; lo < len(kids); {
		s := p.sire[kids[lo]]
		hi := lo
		for hi < len(kids) && p.sire[kids[hi]] == s {
			hi++
		}
		col.start(s, dOf)
		for _, i := range kids[lo:hi] {
			f[i] = 0.5 * col.at(p.dam[i])
		}
		lo = hi
	}
	d = make([]float64, n)
	for i := int32(0); i < int32(n); i++ {
		d[i] = dOf(i)
	}
	return f, d
}
