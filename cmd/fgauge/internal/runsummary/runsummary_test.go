package runsummary_test

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fgauge/cmd/fgauge/internal/runsummary"
	"fgauge/cmd/fgauge/internal/scanrun"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/vcfscan"
)

// TestRoundTrip scans a public fixture (testdata/SOURCES.md) with
// populations and runs of homozygosity, reads run.json back with the type
// that wrote it, and writes it again: the bytes are the same, so nothing
// in the file is outside the type.
func TestRoundTrip(t *testing.T) {
	dir := t.TempDir()
	input := "../../../../testdata/cohort189.vcf.gz"
	rd, err := vcfscan.Open(input, vcfscan.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var pops strings.Builder
	for i, s := range rd.Samples() {
		if i%5 != 4 { // every fifth sample unlisted
			pops.WriteString(s + "\t" + []string{"hill", "brook"}[i%2] + "\n")
		}
	}
	rd.Close()
	p, err := stats.ReadPopulations(strings.NewReader(pops.String()), "herds.tsv")
	if err != nil {
		t.Fatal(err)
	}
	rc := roh.DefaultConfig()
	rc.Method = roh.MethodRules
	rc.Classes = []float64{0.5, 1, 2}
	if err := rc.Validate(); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	if _, err := scanrun.Run(context.Background(), scanrun.Config{
		Input: input, Out: out, Threads: 2,
		Read:  vcfscan.Options{Limits: scanrun.DefaultLimits()},
		Stats: scanrun.StatsSettings{HWEMethod: "exact", Populations: p, MinCallRate: 0.9, JackknifeBlockMB: 5},
		ROH:   rc, Version: "test", CommandLine: []string{"fgauge", "scan"}, Stderr: io.Discard,
	}); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(out, runsummary.FileName)
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	r, err := runsummary.Read(path)
	if err != nil {
		t.Fatal(err)
	}
	var again bytes.Buffer
	enc := json.NewEncoder(&again)
	enc.SetIndent("", "  ")
	if err := enc.Encode(r); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(raw, again.Bytes()) {
		t.Errorf("run.json does not round-trip through runsummary.Run:\n%s\n---\n%s", raw, again.Bytes())
	}
	// A few values a reader relies on.
	if r.Samples.Kept != 189 || r.Populations == nil || len(r.Populations.SamplesNotListed) != 37 || r.ROH == nil ||
		strings.Join(r.ROH.ClassColumns(), ",") != "f_roh_gt_0p5mb,f_roh_gt_1mb,f_roh_gt_2mb" ||
		r.Samples.HetRateBand == nil || !(r.Samples.HetRateBand.SD > 0) || r.Sites == nil || math.IsNaN(float64(r.Sites.Lambda)) {
		t.Errorf("summary %+v", r)
	}
}
