package mating

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"fgauge/stats/pedigree"
)

// Invented goat family: buck_a and doe_a are founders; kid_1 and kid_2
// are their full sibs; buck_b a founder; kid_3 is buck_b x doe_a.
const family = `id	sire	dam
buck_a	0	0
doe_a	0	0
buck_b	0	0
kid_1	buck_a	doe_a
kid_2	buck_a	doe_a
kid_3	buck_b	doe_a
`

// TestPedigreeCoancestry: textbook kinships (common practice: full sibs
// 1/4, half sibs 1/8, parent and offspring 1/4, unrelated founders 0); an
// animal absent from the pedigree is an unrelated founder.
func TestPedigreeCoancestry(t *testing.T) {
	ped, err := pedigree.Read(strings.NewReader(family), "family.tsv")
	if err != nil {
		t.Fatal(err)
	}
	m, absent, err := PedigreeCoancestry(ped, []string{"kid_1", "buck_b"}, []string{"kid_2", "kid_3", "doe_a", "stray"})
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{0.25, 0.125, 0.25, 0, 0, 0.25, 0, 0}
	for i, w := range want {
		if math.Abs(m.V[i]-w) > 1e-15 {
			t.Errorf("pair %d: %v, want %v", i, m.V[i], w)
		}
	}
	if len(absent) != 1 || absent[0] != "stray" {
		t.Errorf("absent %v, want [stray]", absent)
	}
}

// TestInfeasible: the error names the dams that cannot be served.
func TestInfeasible(t *testing.T) {
	cost := &Matrix{Sires: 2, Dams: 3, V: []float64{
		0.1, 0.3, 0.0, // sire x
		0.2, 0.3, 0.0, // sire y
	}}
	ids := AllocOptions{SireIDs: []string{"x", "y"}, DamIDs: []string{"d1", "d2", "d3"}}
	ids.Limits, ids.Ceiling = []int{3, 3}, 0.25
	_, err := Allocate(context.Background(), cost, ids)
	var ie *InfeasibleError
	if !errors.As(err, &ie) || len(ie.NoSire) != 1 || ie.NoSire[0] != 1 || !strings.Contains(err.Error(), "d2") {
		t.Fatalf("ceiling: got %v", err)
	}
	ids.Limits, ids.Ceiling = []int{1, 1}, math.Inf(1)
	_, err = Allocate(context.Background(), cost, ids)
	if !errors.As(err, &ie) || ie.Capacity != 2 || len(ie.Unserved) != 1 || !strings.Contains(err.Error(), "2 places for 3 dams") {
		t.Fatalf("capacity: got %v", err)
	}
	t.Log(err)
}
