// Package runsummary builds run.json, the machine-readable summary of a
// scan or a merge: what was read, kept, skipped and why, the warnings, and
// the summaries of the statistics and runs of homozygosity. Scan and
// merge both build it here, so a merge reports exactly what one pass
// would.
package runsummary

import (
	"fmt"
	"io"

	"fgauge/roh"
	"fgauge/stats"
	"fgauge/vcfscan"
)

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
	Unlisted      []string // kept samples absent from --populations
	WallSeconds   float64
}

// Build builds run.json from the facts and the (merged) statistics,
// and prints the warnings and the note on unlisted samples to stderr. Scan
// and merge share it, so a merge reports exactly what one pass would.
func Build(stderr io.Writer, f *Facts, totals *stats.Totals, rres *roh.Result) map[string]any {
	skipped := map[string]any{}
	for i := vcfscan.SkipReason(0); i < vcfscan.NumSkipReasons; i++ {
		skipped[i.String()] = f.Skipped[i]
	}
	warns := append(append([]vcfscan.Warning(nil), f.Warnings...), Warnings(totals, f.Kept, rres)...)
	warnings := map[string]any{}
	for _, w := range warns {
		warnings[w.Kind] = w.Count
	}
	excluded := []string{}
	keptSet := map[string]bool{}
	for _, s := range f.Samples {
		keptSet[s] = true
	}
	for _, s := range f.SamplesInFile {
		if !keptSet[s] {
			excluded = append(excluded, s)
		}
	}
	info := map[string]any{
		"version":      f.Version,
		"command_line": f.Argv,
		"input":        map[string]any{"path": f.InputPath, "size_bytes": f.InputSize, "format": f.InputFormat},
		"records": map[string]any{
			"read": f.Read, "kept": f.Kept, "skipped": skipped, "masked_calls": f.Masked,
		},
		"samples":      map[string]any{"in_file": len(f.SamplesInFile), "kept": len(f.Samples), "excluded": excluded},
		"sites":        totals.Summary(),
		"warnings":     warnings,
		"wall_seconds": f.WallSeconds,
	}
	if totals.HasPopulations() {
		ps := totals.PopulationSummary()
		ps["samples_not_listed"] = append([]string{}, f.Unlisted...)
		info["populations"] = ps
		if n := len(f.Unlisted); n > 0 {
			fmt.Fprintf(stderr, "fgauge: %d samples are not in --populations and are left out of population statistics (listed in run.json)\n", n)
		}
	}
	if rres != nil {
		info["roh"] = rres.Summary()
	}
	for _, w := range warns {
		fmt.Fprintf(stderr, "fgauge: warning: %s (%d times; first: %s)\n", w.Kind, w.Count, w.Example)
	}
	return info
}
