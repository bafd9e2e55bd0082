package stats

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"
)

// exactFixed is the obviously-correct path: round(v*2^fracBits) with big.Float,
// summed in big.Int.
func exactFixed(vs []float64) *big.Int {
	sum := new(big.Int)
	for _, v := range vs {
		f := new(big.Float).SetFloat64(v)
		f.SetMantExp(f, fracBits)
		// round half to even
		i, _ := f.Int(nil) // truncates toward zero
		frac := new(big.Float).Sub(f, new(big.Float).SetInt(i))
		half := big.NewFloat(0.5)
		a := new(big.Float).Abs(frac)
		switch a.Cmp(half) {
		case 1:
			i.Add(i, big.NewInt(int64(frac.Sign())))
		case 0:
			if i.Bit(0) == 1 {
				i.Add(i, big.NewInt(int64(frac.Sign())))
			}
		}
		sum.Add(sum, i)
	}
	return sum
}

func sumToBig(s Sum128) *big.Int {
	b := new(big.Int).SetInt64(s.Hi)
	b.Lsh(b, 64)
	return b.Add(b, new(big.Int).SetUint64(s.Lo))
}

func TestSum128(t *testing.T) {
	for _, tc := range []struct {
		name string
		vs   []float64
	}{
		{"small", []float64{0.1, 0.2, -0.3}},
		{"negative", []float64{-1e-3, -2.5, -1e6}},
		{"ties", []float64{math.Ldexp(0.5, -fracBits), math.Ldexp(1.5, -fracBits), math.Ldexp(-0.5, -fracBits)}},
		{"large", []float64{3e15, 3e15, -1e17, 7.25e17, 1e-9}},
		{"cancel", []float64{1e18, 1, -1e18}},
	} {
		var s Sum128
		for _, v := range tc.vs {
			s.Add(v)
		}
		if got, want := sumToBig(s), exactFixed(tc.vs); got.Cmp(want) != 0 {
			t.Errorf("%s: %v, want %v", tc.name, got, want)
		}
	}
	var s Sum128
	s.Add(-2.75)
	if s.Float64() != -2.75 {
		t.Errorf("Float64 %v", s.Float64())
	}
}

// TestSum128OrderFree: any order and split gives identical bits.
func TestSum128OrderFree(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	vs := make([]float64, 5000)
	for i := range vs {
		vs[i] = (rng.Float64() - 0.3) * math.Pow(10, float64(rng.IntN(22)-10))
	}
	var a Sum128
	for _, v := range vs {
		a.Add(v)
	}
	for trial := 0; trial < 5; trial++ {
		rng.Shuffle(len(vs), func(i, j int) { vs[i], vs[j] = vs[j], vs[i] })
		cut := rng.IntN(len(vs))
		var x, y Sum128
		for _, v := range vs[:cut] {
			x.Add(v)
		}
		for _, v := range vs[cut:] {
			y.Add(v)
		}
		y.AddSum(x)
		if y != a {
			t.Fatalf("trial %d: %+v != %+v", trial, y, a)
		}
	}
	if got, want := sumToBig(a), exactFixed(vs); got.Cmp(want) != 0 {
		t.Fatalf("%v vs %v", got, want)
	}
}

// FuzzSum128 compares the fast fixed-point path with big arithmetic.
func FuzzSum128(f *testing.F) {
	f.Add(0.1, -3.5, 1e17)
	f.Add(1e-12, 2.5e-10, -7e17)
	f.Fuzz(func(t *testing.T, a, b, c float64) {
		vs := []float64{a, b, c}
		for _, v := range vs {
			if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > 1e18 {
				return
			}
		}
		var s Sum128
		for _, v := range vs {
			s.Add(v)
		}
		if got, want := sumToBig(s), exactFixed(vs); got.Cmp(want) != 0 {
			t.Fatalf("%v: %v, want %v", vs, got, want)
		}
	})
}

func BenchmarkSum128Add(b *testing.B) {
	var s Sum128
	v := fixed(0.123456)
	for i := 0; i < b.N; i++ {
		s.AddSum(v)
	}
	_ = s
}

// TestFixedBits checks the integer conversion of fixed against fixedFloat
// (RoundToEven(Ldexp(v, 64)) in float64, the earlier definition) on
// values of every binary exponent that matters, rounding ties, both signs,
// zeros, subnormals, infinities and NaN.
func TestFixedBits(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	vs := []float64{0, math.Copysign(0, -1), math.SmallestNonzeroFloat64, -math.SmallestNonzeroFloat64,
		math.Inf(1), math.Inf(-1), math.NaN(), math.MaxFloat64, -math.MaxFloat64, 1, -1, 0.5, 0.25, 0.75,
		math.Ldexp(1, 62), math.Ldexp(1, 63), math.Ldexp(1, 126), math.Ldexp(1, 127), -math.Ldexp(1, 126)}
	for e := -1100; e <= 140; e++ {
		for k := 0; k < 40; k++ {
			m := 1 + rng.Float64()
			if k < 4 {
				// ties and near ties at the rounding position
				m = 1 + float64(k)*0.5
			}
			v := math.Ldexp(m, e)
			vs = append(vs, v, -v, math.Nextafter(v, 0), math.Nextafter(v, math.Inf(1)))
		}
		// exact half-grid points: (2j+1) * 2^-65
		vs = append(vs, math.Ldexp(float64(2*rng.IntN(1<<20)+1), -fracBits-1), math.Ldexp(float64(2*rng.IntN(1<<20)+1), e))
	}
	for _, v := range vs {
		if got, want := fixed(v), fixedFloat(v); got != want {
			t.Fatalf("fixed(%v) = %+v, fixedFloat gives %+v", v, got, want)
		}
	}
}

// BenchmarkFixed converts values typical of the per-site tables.
func BenchmarkFixed(b *testing.B) {
	vs := []float64{0.125, -0.97, 3.5, 0.0021, 417.25, -1.5e-7, 0.33333333333333331}
	b.Run("bits", func(b *testing.B) {
		var s Sum128
		for b.Loop() {
			for _, v := range vs {
				s.AddSum(fixed(v))
			}
		}
	})
	b.Run("float", func(b *testing.B) {
		var s Sum128
		for b.Loop() {
			for _, v := range vs {
				s.AddSum(fixedFloat(v))
			}
		}
	})
}
