package demo

import (
	"math"
	"testing"

	"fgauge/stats/pedigree"
)

// TestHerdBook: the invented herd book holds the planned matings with
// their textbook pedigree F (common practice): full sibs 1/4, sire x
// daughter 1/4, half sibs 1/8, first cousins 1/16; and it is the same on
// every call (fixed seed).
func TestHerdBook(t *testing.T) {
	recs, herdOf := demoHerdBook()
	ped, err := pedigree.FromRecords(recs, "demo")
	if err != nil {
		t.Fatal(err)
	}
	f := ped.Inbreeding()
	want := map[float64]int{0.25: 0, 0.125: 0, 0.0625: 0}
	matings := map[string]bool{}
	for i := 0; i < ped.Len(); i++ {
		if f[i] > 0 {
			matings[describeMating(ped, i)] = true
			for w := range want {
				if math.Abs(f[i]-w) < 1e-12 {
					want[w]++
				}
			}
		}
	}
	for w, n := range want {
		if n == 0 {
			t.Errorf("no animal with pedigree F %v", w)
		}
	}
	// Four herds of 10 founders, 8 kids, 10 and 8 in the next
	// generations, plus twins at Brookend and Fernlea.
	if len(herdOf) != len(recs) || len(recs) != 4*(10+8+10+8)+2 {
		t.Errorf("%d animals, %d with a herd", len(recs), len(herdOf))
	}
	recs2, _ := demoHerdBook()
	for i := range recs {
		if recs[i] != recs2[i] {
			t.Fatalf("herd book differs between calls at %d: %+v %+v", i, recs[i], recs2[i])
		}
	}
	for _, m := range []string{"full-sib mating (BROOK-011 x BROOK-012)", "sire STONE-002 mated to his own daughter STONE-012",
		"half-sib mating: both parents by FERN-001"} {
		if !matings[m] {
			t.Errorf("no %q in %v", m, matings)
		}
	}
}
