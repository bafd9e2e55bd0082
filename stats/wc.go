package stats

// WeirCockerham returns the per-site variance components a, b, c of
// Weir & Cockerham (1984, Evolution 38:1358-1370, eqs. 2-4) for one
// biallelic site over r populations, from each population's number of
// diploid individuals called n[i], copies of the alternate allele alt[i]
// and heterozygotes het[i]. Populations with no calls are left out. The
// genome-wide estimators are ratios of sums over sites:
//
//	theta (F_ST) = sum a / sum (a+b+c)
//	F     (F_IT) = sum (a+b) / sum (a+b+c)
//	f     (F_IS) = sum b / sum (b+c)
//
// Only one allele's components are returned; for a biallelic site the
// other allele's are identical, so ratios are unchanged. ok is false when
// fewer than two populations have calls, the mean sample size is not above
// 1, or the site is monomorphic in the pooled sample (all components 0).
func WeirCockerham(n, alt, het []int64) (a, b, c float64, ok bool) {
	var r, sumN, sumN2, sumAlt, sumHet float64
	for i := range n {
		if n[i] <= 0 {
			continue
		}
		ni := float64(n[i])
		r++
		sumN += ni
		sumN2 += ni * ni
		sumAlt += float64(alt[i])
		sumHet += float64(het[i])
	}
	if r < 2 {
		return 0, 0, 0, false
	}
	nbar := sumN / r
	if nbar <= 1 {
		return 0, 0, 0, false
	}
	pbar := sumAlt / (2 * sumN)
	if pbar <= 0 || pbar >= 1 {
		return 0, 0, 0, false
	}
	nc := (r*nbar - sumN2/(r*nbar)) / (r - 1)
	var s2 float64
	for i := range n {
		if n[i] <= 0 {
			continue
		}
		ni := float64(n[i])
		d := float64(alt[i])/(2*ni) - pbar
		s2 += ni * d * d
	}
	s2 /= (r - 1) * nbar
	hbar := sumHet / sumN
	pq := pbar * (1 - pbar)
	a = nbar / nc * (s2 - (pq-(r-1)/r*s2-hbar/4)/(nbar-1))
	b = nbar / (nbar - 1) * (pq - (r-1)/r*s2 - (2*nbar-1)/(4*nbar)*hbar)
	c = hbar / 2
	return a, b, c, true
}

// WCSums accumulates Weir & Cockerham components over sites, exactly.
type WCSums struct {
	A, B, C Sum128
	N       int64 // sites contributing
}

func (s *WCSums) add(a, b, c float64) {
	s.A.Add(a)
	s.B.Add(b)
	s.C.Add(c)
	s.N++
}

func (s *WCSums) merge(o *WCSums) {
	s.A.AddSum(o.A)
	s.B.AddSum(o.B)
	s.C.AddSum(o.C)
	s.N += o.N
}

func (s *WCSums) sub(o *WCSums) WCSums {
	r := *s
	r.A.SubSum(o.A)
	r.B.SubSum(o.B)
	r.C.SubSum(o.C)
	r.N -= o.N
	return r
}

// theta, fit, fis are the ratio estimators (NaN when the denominator is 0).
func (s *WCSums) theta() float64 {
	a, b, c := s.A.Float64(), s.B.Float64(), s.C.Float64()
	return ratio(a, a+b+c)
}

func (s *WCSums) fit() float64 {
	a, b, c := s.A.Float64(), s.B.Float64(), s.C.Float64()
	return ratio(a+b, a+b+c)
}

func (s *WCSums) fis() float64 {
	b, c := s.B.Float64(), s.C.Float64()
	return ratio(b, b+c)
}

func ratio(x, y float64) float64 {
	if y == 0 {
		return nan
	}
	return x / y
}
