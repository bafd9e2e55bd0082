// Package runsummary is run.json, the machine-readable summary of a scan
// or a merge: what was read, kept, skipped and why, the warnings, and the
// summaries of the statistics and of the runs of homozygosity. Run is the
// one type that scan and merge write and the report reads; its parts
// that describe statistics are owned by the packages that compute them
// (stats.SitesSummary, stats.PopulationSummary, roh.Summary).
//
// Scan and merge both build it with Build, so a merge reports exactly
// what one pass would.
package runsummary

import (
	"encoding/json"
	"fmt"
	"io"
	"os"

	"fgauge/internal/numfmt"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/vcfscan"
)

// FileName is the name of the summary in OUTDIR.
const FileName = "run.json"

// Run is run.json. Fields are in the order the file lists them
// (alphabetical); optional sections are nil when they do not apply.
type Run struct {
	CommandLine []string                 `json:"command_line"`
	Depth       *Depth                   `json:"depth,omitempty"` // when records carry DP, PL or GL
	Input       Input                    `json:"input"`
	Populations *stats.PopulationSummary `json:"populations,omitempty"` // with --populations
	Records     Records                  `json:"records"`
	ROH         *roh.Summary             `json:"roh,omitempty"` // without --no-roh
	Samples     Samples                  `json:"samples"`
	Sex         *stats.SexSummary        `json:"sex,omitempty"`    // with non-PAR X or Y sites
	Shards      *Shards                  `json:"shards,omitempty"` // merges only
	Sites       *stats.SitesSummary      `json:"sites,omitempty"`
	Version     string                   `json:"version"`
	WallSeconds float64                  `json:"wall_seconds"`
	Warnings    map[string]int64         `json:"warnings"` // count by kind
}

// Depth is the cohort's read depth and what it means for the
// estimators: below stats.LowDepthThreshold hard-call estimators read
// heterozygotes seen on one allele as homozygotes and overstate F.
type Depth struct {
	// FLikFreqs is --f-lik-freqs (auto, likelihood or estimators).
	FLikFreqs string `json:"f_lik_freqs"`
	// HetOneAlleleRate is the expected share of heterozygous calls whose
	// reads all show one allele at Mean (Poisson depth, no read error).
	HetOneAlleleRate numfmt.JSONFloat `json:"het_one_allele_rate"`
	Low              bool             `json:"low"`           // Mean above 0 and below LowThreshold
	LowThreshold     float64          `json:"low_threshold"` // stats.LowDepthThreshold
	// Mean is the mean depth per call pooled over samples, from Source:
	// "dp" (FORMAT DP) or "pl" (implied by the likelihoods).
	Mean   numfmt.JSONFloat `json:"mean"`
	Source string           `json:"source"`
	// RecordsWithLikelihoods counts kept records with PL or GL (0: f_lik
	// is NA); RecordsNoFrequency those where no sample had informative
	// likelihoods.
	RecordsWithLikelihoods int64 `json:"records_with_likelihoods"`
	RecordsNoFrequency     int64 `json:"records_no_frequency"`
}

// depthSummary returns the Depth section, nil without DP and likelihoods.
func depthSummary(t *stats.Totals) *Depth {
	if t.Lik == nil {
		return nil
	}
	m, src := t.CohortDepth()
	d := &Depth{FLikFreqs: t.LikFreqs.String(), LowThreshold: stats.LowDepthThreshold,
		Mean: numfmt.JSONFloat(m), HetOneAlleleRate: numfmt.JSONFloat(stats.HetOneAlleleRate(m)),
		Low: m > 0 && stats.LowDepth(m), RecordsWithLikelihoods: t.Lik.Records, RecordsNoFrequency: t.Lik.NoFreq}
	if src != stats.DepthNone {
		d.Source = src.String()
	}
	return d
}

// Input identifies the file read.
type Input struct {
	Format    string `json:"format"`
	Path      string `json:"path"`       // as given on the command line
	SizeBytes int64  `json:"size_bytes"` // -1 for standard input
}

// Records counts the records read, kept, skipped by reason, and the
// calls masked by --min-gq/--min-dp.
type Records struct {
	Kept        int64            `json:"kept"`
	MaskedCalls int64            `json:"masked_calls"`
	Read        int64            `json:"read"`
	Skipped     map[string]int64 `json:"skipped"` // by vcfscan.SkipReason
}

// Samples counts the samples in the file and kept, and names those left
// out by --samples/--exclude-samples.
type Samples struct {
	Excluded Names `json:"excluded"`
	// HetRateBand is the het_rate_outlier band of samples.tsv.
	HetRateBand *stats.HetRateBand `json:"het_rate_band,omitempty"`
	InFile      int                `json:"in_file"`
	Kept        int                `json:"kept"`
}

// Shards describes the states a merge combined.
type Shards struct {
	Count                 int      `json:"count"`
	RecordsOutsideRegions int64    `json:"records_outside_regions"`
	RecordsRead           int64    `json:"records_read"`
	Regions               []string `json:"regions"`
	ShardWallSeconds      float64  `json:"shard_wall_seconds"`
	States                []string `json:"states"`
}

// Names is a list of sample names. Reading also accepts entries that are
// not strings (older or hand-made files) and keeps their JSON text.
type Names []string

// UnmarshalJSON reads a list whose entries are names or any JSON value.
func (n *Names) UnmarshalJSON(b []byte) error {
	var raw []json.RawMessage
	if err := json.Unmarshal(b, &raw); err != nil {
		return err
	}
	out := make(Names, 0, len(raw))
	for _, r := range raw {
		var s string
		if json.Unmarshal(r, &s) == nil {
			out = append(out, s)
			continue
		}
		out = append(out, string(r))
	}
	*n = out
	return nil
}

// Facts are the counts and identities run.json reports besides the
// statistics: from one scan, or summed over the shards of a merge.
type Facts struct {
	Version       string // of fgauge
	Argv          []string
	InputPath     string
	InputSize     int64
	InputFormat   string
	Read, Kept    int64
	Skipped       [vcfscan.NumSkipReasons]int64
	Masked        int64
	SamplesInFile []string
	Samples       []string // kept, in output order
	Warnings      []vcfscan.Warning
	WallSeconds   float64
}

// Build builds run.json from the facts and the (merged) statistics, and
// prints the warnings and the note on samples missing from --populations
// to stderr.
func Build(stderr io.Writer, f *Facts, totals *stats.Totals, rres *roh.Result) *Run {
	skipped := map[string]int64{}
	for i := vcfscan.SkipReason(0); i < vcfscan.NumSkipReasons; i++ {
		skipped[i.String()] = f.Skipped[i]
	}
	warns := append(append([]vcfscan.Warning(nil), f.Warnings...), Warnings(totals, f.Kept, rres)...)
	warnings := map[string]int64{}
	for _, w := range warns {
		warnings[w.Kind] = w.Count
	}
	excluded := Names{}
	keptSet := map[string]bool{}
	for _, s := range f.Samples {
		keptSet[s] = true
	}
	for _, s := range f.SamplesInFile {
		if !keptSet[s] {
			excluded = append(excluded, s)
		}
	}
	r := &Run{
		Version:     f.Version,
		CommandLine: f.Argv,
		Input:       Input{Path: f.InputPath, SizeBytes: f.InputSize, Format: f.InputFormat},
		Records:     Records{Read: f.Read, Kept: f.Kept, Skipped: skipped, MaskedCalls: f.Masked},
		Samples:     Samples{InFile: len(f.SamplesInFile), Kept: len(f.Samples), Excluded: excluded, HetRateBand: ptr(totals.HetRateBand())},
		Sex:         totals.SexSummary(),
		Sites:       totals.Summary(),
		Depth:       depthSummary(totals),
		Warnings:    warnings,
		WallSeconds: f.WallSeconds,
	}
	if totals.HasPopulations() {
		r.Populations = totals.PopulationSummary()
		if n := len(r.Populations.SamplesNotListed); n > 0 {
			fmt.Fprintf(stderr, "fgauge: %d samples are not in --populations and are left out of population statistics (listed in run.json)\n", n)
		}
	}
	if rres != nil {
		r.ROH = rres.Summary()
	}
	for _, w := range warns {
		fmt.Fprintf(stderr, "fgauge: warning: %s (%d times; first: %s)\n", w.Kind, w.Count, w.Example)
	}
	return r
}

// Read reads run.json from path. Unknown fields are ignored; missing ones
// stay zero (missing sections nil).
func Read(path string) (*Run, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	r := &Run{}
	if err := json.Unmarshal(b, r); err != nil {
		return nil, err
	}
	return r, nil
}

func ptr[T any](v T) *T { return &v }
