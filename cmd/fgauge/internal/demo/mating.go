package demo

import (
	"context"
	"fmt"
	"io"
	"math"
	"path/filepath"

	"fgauge/cmd/fgauge/internal/mate"
	"fgauge/stats/pedigree"
)

// demoSireLimit is the most does a young buck is given in the demo's plan.
const demoSireLimit = 2

// candidates are the cooperative's youngest generation, the animals to be
// mated next season: its bucks as sires, its does as dams, in herd-book
// order.
func candidates(ped *pedigree.Pedigree) (bucks, does []string) {
	gen := make([]int, ped.Len())
	for i := range gen {
		gen[i] = -1
	}
	var depth func(i int) int
	depth = func(i int) int {
		if i < 0 {
			return -1
		}
		if gen[i] < 0 {
			gen[i] = 1 + max(depth(ped.Sire(i)), depth(ped.Dam(i)))
		}
		return gen[i]
	}
	last := 0
	for i := range gen {
		last = max(last, depth(i))
	}
	for i := range gen {
		if gen[i] != last {
			continue
		}
		switch ped.SexOf(i) {
		case pedigree.SexMale:
			bucks = append(bucks, ped.ID(i))
		case pedigree.SexFemale:
			does = append(does, ped.ID(i))
		}
	}
	return bucks, does
}

// matingStep plans next season's matings of the youngest generation on
// the simulated genotypes (genomic coancestry), with the herd book for
// the pedigree columns and the pedigree-only plan, into dir.
func matingStep(ctx context.Context, cfg *Config, vcfPath, dir string, ped *pedigree.Pedigree) (*mate.Result, error) {
	bucks, does := candidates(ped)
	return mate.Run(ctx, mate.Config{
		Input: vcfPath, Sires: bucks, Dams: does, OutDir: dir, Force: true,
		SireLimit: demoSireLimit, MaxProgenyF: math.NaN(),
		Pedigree: ped, PlanOn: mate.PlanGenomic, Segments: true,
		Threads: max(cfg.Threads, 1), Stderr: cfg.Stderr,
		CommandLine: cfg.CommandLine, Version: cfg.Version,
	})
}

// writeMatingSummary prints the plan against a random allocation and the
// plan made on the herd book alone, all measured genomically, and the
// caution.
func writeMatingSummary(w io.Writer, res *mate.Result, dir string) {
	ri := &res.Info
	fmt.Fprintf(w, "\nMating plan for next season: %d young bucks x %d young does, at most %d does per buck\n",
		ri.Sires, ri.Dams, demoSireLimit)
	fmt.Fprintln(w, "(expected progeny F = genomic coancestry of the parents, relative to the whole cohort:")
	fmt.Fprintln(w, " below 0 means less related than the cohort's average pair)")
	fmt.Fprintf(w, "  %-44s mean %7.4f   highest %7.4f\n", "plan with the lowest mean progeny F:", ri.Plan.MeanProgenyF, deref(ri.Plan.MaxProgenyF))
	fmt.Fprintf(w, "  %-44s mean %7.4f\n", "random allocation (expected):", ri.Random.MeanProgenyF)
	if pp := ri.PedigreePlan; pp != nil && pp.MeanCoancestryGenomic != nil {
		fmt.Fprintf(w, "  %-44s mean %7.4f   highest %7.4f\n", "plan made on the herd book alone:", *pp.MeanCoancestryGenomic, deref(pp.MaxCoancestryGenomic))
	}
	if m := ri.Plan.MeanCoancestrySegments; m != nil {
		fmt.Fprintf(w, "  %-44s mean %7.4f   (chance that random alleles of the two parents lie in a\n", "shared-segment coancestry of the plan:", *m)
		fmt.Fprintln(w, "  shared stretch of 3 Mb or more: probability scale, recent ancestry only)")
	}
	fmt.Fprintf(w, "  %s lists the pairs; %s shows the pair map.\n",
		filepath.Join(dir, "allocation.tsv"), filepath.Join(dir, "mate.html"))
	fmt.Fprintln(w, "Caution: a mating plan is advice; genetic merit, health, fertility, welfare and the breeding")
	fmt.Fprintln(w, "programme's rules also decide, and the herd book rules and local regulations come first.")
}

func deref(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}
