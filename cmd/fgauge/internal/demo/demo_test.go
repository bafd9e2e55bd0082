package demo

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fgauge/cmd/fgauge/internal/mate"
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

// TestCandidates: the mating step's candidates are the youngest
// generation (the last 32 animals of the herd book: 8 kids in each of 4
// herds), bucks as sires and does as dams, none of them a parent.
func TestCandidates(t *testing.T) {
	recs, _ := demoHerdBook()
	ped, err := pedigree.FromRecords(recs, "demo")
	if err != nil {
		t.Fatal(err)
	}
	bucks, does := candidates(ped)
	if len(bucks) != 16 || len(does) != 16 {
		t.Fatalf("%d bucks, %d does; want 16 and 16", len(bucks), len(does))
	}
	young := map[string]pedigree.Sex{}
	for _, r := range recs[len(recs)-32:] {
		young[r.ID] = r.Sex
	}
	for _, r := range recs {
		for _, p := range []string{r.Sire, r.Dam} {
			if _, ok := young[p]; ok {
				t.Errorf("%s is a parent of %s", p, r.ID)
			}
		}
	}
	for _, id := range bucks {
		if young[id] != pedigree.SexMale {
			t.Errorf("sire %s: not a buck of the youngest generation", id)
		}
	}
	for _, id := range does {
		if young[id] != pedigree.SexFemale {
			t.Errorf("dam %s: not a doe of the youngest generation", id)
		}
	}
}

// TestRunMating runs the whole demo and checks its mating step: every doe
// once, no buck above the limit, and the plan's mean progeny F no higher
// than the plan made on the herd book alone (both measured genomically,
// same limits: the plan is the optimum, so this must hold) and below a
// random allocation's expectation.
func TestRunMating(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the whole demo")
	}
	dir := filepath.Join(t.TempDir(), "demo")
	var out, errb bytes.Buffer
	if err := Run(context.Background(), Config{Dir: dir, Threads: 2, Version: "test", Stdout: &out, Stderr: &errb}); err != nil {
		t.Fatalf("%v\n%s", err, errb.String())
	}
	ri, err := mate.ReadRunInfo(filepath.Join(dir, "mate", "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	pp := ri.PedigreePlan
	if pp == nil || pp.MeanCoancestryGenomic == nil {
		t.Fatalf("no pedigree-only plan in run.json: %+v", ri)
	}
	if m := ri.Plan.MeanCoancestrySegments; m == nil || !(*m >= 0 && *m < 0.25) {
		t.Errorf("plan's shared-segment coancestry %v: want a probability below 1/4 (no close kin left)", m)
	}
	if ri.Sires != 16 || ri.Dams != 16 || ri.SitesUsed < 10000 {
		t.Errorf("%d sires, %d dams, %d sites", ri.Sires, ri.Dams, ri.SitesUsed)
	}
	if !(ri.Plan.MeanProgenyF <= *pp.MeanCoancestryGenomic+1e-12 && ri.Plan.MeanProgenyF < ri.Random.MeanProgenyF) {
		t.Errorf("plan mean %v, herd-book plan %v, random %v", ri.Plan.MeanProgenyF, *pp.MeanCoancestryGenomic, ri.Random.MeanProgenyF)
	}
	b, err := os.ReadFile(filepath.Join(dir, "mate", "allocation.tsv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	use := map[string]int{}
	for _, l := range lines[1:] {
		use[strings.Split(l, "\t")[1]]++
	}
	for s, n := range use {
		if n > demoSireLimit {
			t.Errorf("buck %s given %d does", s, n)
		}
	}
	if len(lines) != 17 {
		t.Errorf("allocation.tsv: %d lines, want a header and 16 does", len(lines))
	}
	for _, want := range []string{"Mating plan for next season: 16 young bucks x 16 young does", "random allocation (expected):",
		"plan made on the herd book alone:", "shared-segment coancestry of the plan:", "Caution: a mating plan is advice"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("summary lacks %q:\n%s", want, out.String())
		}
	}
}
