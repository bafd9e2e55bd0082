package main

import (
	"strings"
	"testing"
)

// TestColumnsMate: `fgauge columns` explains the mating outputs, with the
// base population of each coancestry measure.
func TestColumnsMate(t *testing.T) {
	code, out := runCmd(t, "columns", "--file", "pairs.tsv")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, out)
	}
	for _, want := range []string{"coancestry_genomic", "coancestry_pedigree", "progeny_f", "VanRaden (2008", "base population: the pedigree's founders", "base population: the one whose allele frequencies", "coancestry_segments", "base population: ancestors recent enough"} {
		if !strings.Contains(out, want) {
			t.Errorf("columns --file pairs.tsv lacks %q:\n%s", want, out)
		}
	}
	if code, out := runCmd(t, "columns", "--file", "allocation.tsv"); code != 0 || !strings.Contains(out, "allocation.tsv  dam") {
		t.Errorf("columns --file allocation.tsv: exit %d\n%s", code, out)
	}
}
