package mating

// popDot2x2 uses the assembly kernel when the CPU has POPCNT.
var popDot2x2 = pickPopDot2x2()

func pickPopDot2x2() func(u0, u1, v0, v1 []uint64) (int64, int64, int64, int64) {
	if !hasPOPCNT() {
		return popDot2x2Go
	}
	return func(u0, u1, v0, v1 []uint64) (int64, int64, int64, int64) {
		n := len(u0) / 2
		if n == 0 {
			return 0, 0, 0, 0
		}
		_, _, _ = u1[2*n-1], v0[2*n-1], v1[2*n-1] // bounds: the kernel reads 2n words of each
		return popDot2x2Asm(&u0[0], &u1[0], &v0[0], &v1[0], n)
	}
}

// hasPOPCNT reports CPUID leaf 1 ECX bit 23.
func hasPOPCNT() bool

// popDot2x2Asm: n word pairs (a, b interleaved) of each of the four slices.
//
//go:noescape
func popDot2x2Asm(u0, u1, v0, v1 *uint64, n int) (n00, n01, n10, n11 int64)
