package mate

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"

	"fgauge/cmd/fgauge/internal/outdir"
	"fgauge/mating"
)

// cautions are printed in run.json, the page and --help.
var cautions = []string{
	"A mating plan is advice: genetic merit, health, fertility, welfare and the breeding programme's rules also decide which matings are made.",
	"Expected progeny F is an average over possible offspring; a single offspring can be more or less inbred.",
	"coancestry_genomic is relative to the population whose allele frequencies were used (its average is 0; negative values are normal); coancestry_pedigree is relative to the pedigree's founders and misses unrecorded relationships.",
	"Local regulations come first: follow the herd book or breed society rules and the animal-breeding and welfare law that applies where the animals are kept, and ask a breeding adviser or veterinarian where required.",
}

// RunInfo is run.json: written and read by this type (ReadRunInfo).
type RunInfo struct {
	Version          string    `json:"version"`
	CommandLine      []string  `json:"command_line"`
	Input            InputInfo `json:"input"`
	Sires            int       `json:"sires"`
	Dams             int       `json:"dams"`
	SitesUsed        int       `json:"sites_used"`
	SitesWithoutFreq int64     `json:"sites_without_frequency"`
	MissingCalls     int64     `json:"missing_calls_of_candidates"`
	Frequencies      string    `json:"frequencies"`
	PlanOn           string    `json:"plan_on"`
	// SegmentMinMB is the shortest stretch coancestry_segments counted;
	// absent without --segments.
	SegmentMinMB   *float64 `json:"segment_min_mb,omitempty"`
	BlendWeight    *float64 `json:"blend_weight,omitempty"`
	SireLimit      int      `json:"sire_limit"` // 0: none
	SireLimitsFile string   `json:"sire_limits_file,omitempty"`
	MaxProgenyF    *float64 `json:"max_progeny_f"` // null: none
	// PairsAboveCeiling counts the pairs never to be used.
	PairsAboveCeiling int64 `json:"pairs_above_ceiling"`
	// Plan is the chosen allocation.
	Plan PlanSummary `json:"plan"`
	// Random is the expectation over random allocations: each dam given
	// to one of the sires' places drawn uniformly (each sire with
	// probability proportional to its limit), ignoring the ceiling.
	Random PlanSummary `json:"random_allocation_expectation"`
	// PedigreePlan is the plan chosen on coancestry_pedigree alone (same
	// limits, ceiling applied to coancestry_pedigree), evaluated with
	// both measures; only with --pedigree.
	PedigreePlan    *PedigreePlan `json:"pedigree_only_plan,omitempty"`
	PedigreeAbsent  []string      `json:"candidates_not_in_pedigree,omitempty"`
	AllocationMoves int64         `json:"allocation_moves"`
	WallSeconds     float64       `json:"wall_seconds"`
	PhaseSeconds    PhaseSeconds  `json:"phase_seconds"`
	Cautions        []string      `json:"cautions"`
}

// PhaseSeconds splits the wall time: reading the input and packing the
// genotypes, the pair coancestries, the allocation(s) with the summaries,
// and writing the outputs.
type PhaseSeconds struct {
	ReadAndPack float64 `json:"read_and_pack"`
	Genomic     float64 `json:"genomic"`
	Allocation  float64 `json:"allocation"`
	Write       float64 `json:"write"`
}

// InputInfo describes the genotype input.
type InputInfo struct {
	Path          string `json:"path"`
	Format        string `json:"format"`
	SamplesInFile int    `json:"samples_in_file"`
	RecordsRead   int64  `json:"records_read"`
	SNPsKept      int64  `json:"snps_kept"`
}

// PlanSummary gives the mean and max progeny F of a plan, and its mean
// under each coancestry measure (null when the measure is absent; max is
// null for the random expectation).
type PlanSummary struct {
	MeanProgenyF           float64  `json:"mean_progeny_f"`
	MaxProgenyF            *float64 `json:"max_progeny_f"`
	MeanCoancestryGenomic  float64  `json:"mean_coancestry_genomic"`
	MeanCoancestryPedigree *float64 `json:"mean_coancestry_pedigree"`
	MeanCoancestrySegments *float64 `json:"mean_coancestry_segments,omitempty"`
}

// PedigreePlan is the pedigree-only plan, or why there is none.
type PedigreePlan struct {
	Infeasible             string   `json:"infeasible,omitempty"`
	MeanCoancestryGenomic  *float64 `json:"mean_coancestry_genomic"`
	MaxCoancestryGenomic   *float64 `json:"max_coancestry_genomic"`
	MeanCoancestryPedigree *float64 `json:"mean_coancestry_pedigree"`
}

// ReadRunInfo reads a run.json written by Run.
func ReadRunInfo(path string) (*RunInfo, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var ri RunInfo
	if err := json.Unmarshal(b, &ri); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return &ri, nil
}

func writeRunInfo(sd *outdir.Dir, ri *RunInfo) error {
	f, err := sd.Create("run.json")
	if err != nil {
		return err
	}
	enc := json.NewEncoder(f)
	enc.SetIndent("", "  ")
	if err := enc.Encode(ri); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// jsonFloat is nil for NaN (JSON null).
func jsonFloat(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// meanOf averages m over the plan's pairs, in dam order.
func meanOf(m *mating.Matrix, sireOf []int) (mean, mx float64) {
	mx = math.Inf(-1)
	var t float64
	for d, s := range sireOf {
		v := m.At(s, d)
		t += v
		mx = max(mx, v)
	}
	return t / float64(len(sireOf)), mx
}

func summarize(a *mating.Allocation, gen, ped, pf, seg *mating.Matrix) PlanSummary {
	ps := PlanSummary{MeanProgenyF: a.Mean, MaxProgenyF: jsonFloat(a.Max)}
	ps.MeanCoancestryGenomic, _ = meanOf(gen, a.SireOf)
	if ped != nil {
		m, _ := meanOf(ped, a.SireOf)
		ps.MeanCoancestryPedigree = &m
	}
	if seg != nil {
		m, _ := meanOf(seg, a.SireOf)
		ps.MeanCoancestrySegments = &m
	}
	return ps
}

// randomExpectation: dam d goes to sire s with probability
// limit_s / sum(limits) (a uniformly random injection of dams into the
// sires' places), so the expected mean is sum_s limit_s mean_d(c) / sum.
func randomExpectation(limits []int, pf, gen, ped *mating.Matrix) PlanSummary {
	total := 0
	for _, l := range limits {
		total += l
	}
	exp := func(m *mating.Matrix) float64 {
		var t float64
		for s := 0; s < m.Sires; s++ {
			var row float64
			for d := 0; d < m.Dams; d++ {
				row += m.At(s, d)
			}
			t += float64(limits[s]) * row
		}
		return t / float64(total) / float64(m.Dams)
	}
	ps := PlanSummary{MeanProgenyF: exp(pf), MeanCoancestryGenomic: exp(gen)}
	if ped != nil {
		v := exp(ped)
		ps.MeanCoancestryPedigree = &v
	}
	return ps
}

// pedigreePlan solves the allocation on pedigree coancestry alone and
// evaluates it genomically.
func pedigreePlan(ctx context.Context, ped, gen *mating.Matrix, limits []int, ceiling float64) *PedigreePlan {
	a, err := mating.Allocate(ctx, ped, mating.AllocOptions{Limits: limits, Ceiling: ceiling})
	if err != nil {
		var ie *mating.InfeasibleError
		if errors.As(err, &ie) {
			return &PedigreePlan{Infeasible: err.Error()}
		}
		return &PedigreePlan{Infeasible: "not computed: " + err.Error()}
	}
	mg, xg := meanOf(gen, a.SireOf)
	mp, _ := meanOf(ped, a.SireOf)
	return &PedigreePlan{MeanCoancestryGenomic: &mg, MaxCoancestryGenomic: &xg, MeanCoancestryPedigree: &mp}
}

func aboveCeiling(pf *mating.Matrix, ceiling float64) int64 {
	if math.IsNaN(ceiling) {
		return 0
	}
	var n int64
	for _, v := range pf.V {
		if v > ceiling {
			n++
		}
	}
	return n
}

// summaryLine is the one line printed on stdout.
func summaryLine(ri *RunInfo, dir string) string {
	s := fmt.Sprintf("fgauge mate: %d dams on %d sires (%d sites): mean progeny F %.4g (max %.4g) against %.4g for a random allocation",
		ri.Dams, ri.Sires, ri.SitesUsed, ri.Plan.MeanProgenyF, deref(ri.Plan.MaxProgenyF), ri.Random.MeanProgenyF)
	if pp := ri.PedigreePlan; pp != nil && pp.MeanCoancestryGenomic != nil {
		s += fmt.Sprintf("; pedigree-only plan, genomic mean %.4g", *pp.MeanCoancestryGenomic)
	}
	return s + "; written to " + dir
}

func deref(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}
