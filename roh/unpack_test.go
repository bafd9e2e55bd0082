package roh

import (
	"math/rand/v2"
	"testing"
)

// TestUnpack packs random codes as the Collector does (2 bits per site,
// 32 per word, lowest first) and checks that unpack returns them, for
// lengths that end inside a word and on a word boundary.
func TestUnpack(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, n := range []int{0, 1, 31, 32, 33, 64, 100, 1000} {
		want := make([]uint8, n)
		ch := &chromData{geno: make([][]uint64, 1)}
		for i := range want {
			want[i] = uint8(rng.IntN(4))
			if i%32 == 0 {
				ch.geno[0] = append(ch.geno[0], 0)
			}
			ch.geno[0][i/32] |= uint64(want[i]) << (2 * (i % 32))
		}
		got := make([]uint8, n)
		ch.unpack(0, got)
		for i := range want {
			if got[i] != want[i] {
				t.Fatalf("n=%d: site %d: code %d, packed %d", n, i, got[i], want[i])
			}
		}
	}
}
