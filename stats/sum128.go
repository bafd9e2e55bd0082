package stats

import (
	"math"
	"math/bits"
)

// fracBits is the number of fractional bits of the Sum128 fixed point.
const fracBits = 64

// Sum128 is an exactly associative and commutative sum of float64 values:
// each value is scaled by 2^64, rounded to the nearest integer (ties to
// even) and added to a 128-bit two's-complement integer. Because integer
// addition is exact, the total does not depend on the order of additions
// or on how the inputs were split before merging. The resolution of one
// term is 2^-64 (about 5.4e-20, far below a float64 ulp of the terms), so
// a total equals the exact sum of the float64 terms rounded once; magnitudes
// up to about 9e18 are held.
//
// The zero value is a sum of nothing. Fields are exported for gob.
type Sum128 struct {
	Hi int64
	Lo uint64
}

// fixed converts v to its rounded 128-bit fixed-point value. NaN counts
// as 0; infinities and values beyond the range saturate.
//
// Finite normal values, nearly every call, are converted with integer
// operations on the float's bits: v = ±mant * 2^(exp-1075), so v*2^64 is
// mant shifted left or, rounded half to even, right. This is exactly
// RoundToEven(Ldexp(v, 64)) as fixedFloat computes it (TestFixedBits) at
// a fraction of the cost; the rest goes to fixedFloat.
func fixed(v float64) Sum128 {
	b := math.Float64bits(v)
	e := int(b >> 52 & 0x7ff)
	if e == 0 || e == 0x7ff {
		return fixedFloat(v)
	}
	mant := b&(1<<52-1) | 1<<52
	sh := e - 1075 + fracBits // v*2^64 = mant * 2^sh
	var r Sum128
	switch {
	case sh > 73: // beyond 2^126: saturate as fixedFloat does
		return fixedFloat(v)
	case sh >= 64:
		r = Sum128{Hi: int64(mant << uint(sh-64))}
	case sh > 0:
		r = Sum128{Hi: int64(mant >> uint(64-sh)), Lo: mant << uint(sh)}
	case sh == 0:
		r = Sum128{Lo: mant}
	case sh > -64:
		k := uint(-sh)
		q := mant >> k
		rem := mant & (1<<k - 1)
		half := uint64(1) << (k - 1)
		if rem > half || rem == half && q&1 == 1 {
			q++
		}
		r = Sum128{Lo: q}
	default:
		return Sum128{}
	}
	if b>>63 != 0 {
		r = r.neg()
	}
	return r
}

// fixedFloat is fixed by float operations: the reference for fixed, and
// its path for zeros, subnormals, infinities and NaN.
func fixedFloat(v float64) Sum128 {
	if v != v {
		return Sum128{}
	}
	s := math.RoundToEven(math.Ldexp(v, fracBits))
	if math.Abs(s) < 1<<62 {
		i := int64(s)
		return Sum128{Hi: i >> 63, Lo: uint64(i)}
	}
	neg := s < 0
	m, e := math.Frexp(math.Abs(s)) // s = m * 2^e, 0.5 <= m < 1, e >= 63
	if e > 126 {
		if neg {
			return Sum128{Hi: math.MinInt64 + 1, Lo: 0}
		}
		return Sum128{Hi: math.MaxInt64, Lo: math.MaxUint64}
	}
	mant := uint64(math.Ldexp(m, 53)) // exact 53-bit integer
	shift := uint(e - 53)             // >= 10
	var hi, lo uint64
	if shift >= 64 {
		hi, lo = mant<<(shift-64), 0
	} else {
		hi, lo = mant>>(64-shift), mant<<shift
	}
	r := Sum128{Hi: int64(hi), Lo: lo}
	if neg {
		r = r.neg()
	}
	return r
}

func (s Sum128) neg() Sum128 {
	lo, c := bits.Add64(^s.Lo, 1, 0)
	return Sum128{Hi: ^s.Hi + int64(c), Lo: lo}
}

// Add adds v, rounded to the fixed-point grid. NaN is ignored.
func (s *Sum128) Add(v float64) { s.AddSum(fixed(v)) }

// AddSum adds another fixed-point sum exactly.
func (s *Sum128) AddSum(o Sum128) {
	var c uint64
	s.Lo, c = bits.Add64(s.Lo, o.Lo, 0)
	s.Hi += o.Hi + int64(c)
}

// SubSum subtracts another fixed-point sum exactly.
func (s *Sum128) SubSum(o Sum128) { s.AddSum(o.neg()) }

// IsZero reports whether the sum is exactly zero.
func (s Sum128) IsZero() bool { return s.Hi == 0 && s.Lo == 0 }

// Float64 returns the sum as a float64 (correctly rounded up to the
// double rounding of the two halves, far below the grid resolution).
func (s Sum128) Float64() float64 {
	neg := s.Hi < 0
	if neg {
		s = s.neg()
	}
	v := math.Ldexp(float64(uint64(s.Hi)), 64-fracBits) + math.Ldexp(float64(s.Lo), -fracBits)
	if neg {
		return -v
	}
	return v
}
