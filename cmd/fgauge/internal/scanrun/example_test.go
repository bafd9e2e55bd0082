package scanrun_test

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"fgauge/cmd/fgauge/internal/scanrun"
	"fgauge/roh"
	"fgauge/vcfscan"
)

// Scan a public fixture (testdata/SOURCES.md) with the scan command's
// defaults and list the output folder.
func ExampleRun() {
	dir, _ := os.MkdirTemp("", "scanrun")
	defer os.RemoveAll(dir)
	rc := roh.DefaultConfig()
	if err := rc.Validate(); err != nil {
		panic(err)
	}
	out := filepath.Join(dir, "out")
	res, err := scanrun.Run(context.Background(), scanrun.Config{
		Input:   "../../../../testdata/cohort189.vcf.gz",
		Out:     out,
		Threads: 2,
		Read:    vcfscan.Options{Limits: scanrun.DefaultLimits()},
		Stats:   scanrun.StatsSettings{HWEMethod: "exact", MinCallRate: 0.9, JackknifeBlockMB: 5},
		ROH:     rc,
		Version: "example",
		Stderr:  io.Discard,
	})
	if err != nil {
		panic(err)
	}
	fmt.Println(res.Read, "records read,", res.Kept, "sites kept,", res.Samples, "samples")
	ents, _ := os.ReadDir(out)
	for _, e := range ents {
		fmt.Println(e.Name())
	}
	// Output:
	// 115 records read, 99 sites kept, 189 samples
	// run.json
	// runs.tsv
	// samples.tsv
	// sites.tsv.gz
	// sites.tsv.gz.tbi
}
