package runsummary

import (
	"fmt"
	"io"

	"fgauge/roh"
	"fgauge/stats"
	"fgauge/vcfscan"
)

// runFacts are the counts and identities run.json reports besides the
// statistics: from one scan, or summed over the shards of a merge.
type runFacts struct {
	argv          []string
	inputPath     string
	inputSize     int64
	inputFormat   string
	read, kept    int64
	skipped       [vcfscan.NumSkipReasons]int64
	masked        int64
	samplesInFile []string
	samples       []string // kept, in output order
	warnings      []vcfscan.Warning
	unlisted      []string // kept samples absent from --populations
	wallSeconds   float64
}

// runSummary builds run.json from the facts and the (merged) statistics,
// and prints the warnings and the note on unlisted samples to stderr. Scan
// and merge share it, so a merge reports exactly what one pass would.
func runSummary(stderr io.Writer, f *runFacts, totals *stats.Totals, rres *roh.Result) map[string]any {
	skipped := map[string]any{}
	for i := vcfscan.SkipReason(0); i < vcfscan.NumSkipReasons; i++ {
		skipped[i.String()] = f.skipped[i]
	}
	warns := append(append([]vcfscan.Warning(nil), f.warnings...), scanWarnings(totals, f.kept, rres)...)
	warnings := map[string]any{}
	for _, w := range warns {
		warnings[w.Kind] = w.Count
	}
	excluded := []string{}
	keptSet := map[string]bool{}
	for _, s := range f.samples {
		keptSet[s] = true
	}
	for _, s := range f.samplesInFile {
		if !keptSet[s] {
			excluded = append(excluded, s)
		}
	}
	info := map[string]any{
		"version":      version,
		"command_line": f.argv,
		"input":        map[string]any{"path": f.inputPath, "size_bytes": f.inputSize, "format": f.inputFormat},
		"records": map[string]any{
			"read": f.read, "kept": f.kept, "skipped": skipped, "masked_calls": f.masked,
		},
		"samples":      map[string]any{"in_file": len(f.samplesInFile), "kept": len(f.samples), "excluded": excluded},
		"sites":        totals.Summary(),
		"warnings":     warnings,
		"wall_seconds": f.wallSeconds,
	}
	if totals.HasPopulations() {
		ps := totals.PopulationSummary()
		ps["samples_not_listed"] = append([]string{}, f.unlisted...)
		info["populations"] = ps
		if n := len(f.unlisted); n > 0 {
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
