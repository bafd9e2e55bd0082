package main

import (
	"errors"
	"flag"
	"io"
	"os"
	"path/filepath"
	"testing"

	"fgauge/stats"
	"fgauge/vcfscan"
)

func TestStatsFlags(t *testing.T) {
	dir := t.TempDir()
	pops := filepath.Join(dir, "herds.txt")
	if err := os.WriteFile(pops, []byte("sample population\ncow_1 herd_a\ncow_2 herd_b\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name  string
		args  []string
		usage bool // want a usage error
		check func(*testing.T, *stats.Config, *vcfscan.Options, *statsFlags)
	}{
		{"defaults", nil, false, func(t *testing.T, c *stats.Config, o *vcfscan.Options, _ *statsFlags) {
			if c.HWEMethod != "exact" || c.Freqs != stats.FreqCohort || c.MinCallRate != 0.9 || c.JackknifeBlockBP != 5_000_000 || c.PopOf != nil {
				t.Errorf("%+v", c)
			}
		}},
		{"populations", []string{"--populations", pops, "--jackknife-block-mb", "0.5"}, false, func(t *testing.T, c *stats.Config, o *vcfscan.Options, f *statsFlags) {
			if c.Freqs != stats.FreqPopulation || len(c.PopNames) != 2 || c.PopOf[2] != -1 || c.JackknifeBlockBP != 500_000 || len(f.unlisted) != 1 {
				t.Errorf("%+v unlisted %v", c, f.unlisted)
			}
		}},
		{"info", []string{"--freqs-from-info", "AF", "--hwe-method", "chisq"}, false, func(t *testing.T, c *stats.Config, o *vcfscan.Options, _ *statsFlags) {
			if c.Freqs != stats.FreqInfo || o.InfoKey != "AF" || c.HWEMethod != "chisq" {
				t.Errorf("%+v %+v", c, o)
			}
		}},
		{"bad_method", []string{"--hwe-method", "fisher"}, true, nil},
		{"both_freqs", []string{"--freqs", pops, "--freqs-from-info", "AF"}, true, nil},
		{"bad_rate", []string{"--min-call-rate", "2"}, true, nil},
		{"missing_file", []string{"--populations", filepath.Join(dir, "none.txt")}, true, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fs := flag.NewFlagSet("scan", flag.ContinueOnError)
			fs.SetOutput(io.Discard)
			f := addStatsFlags(fs)
			if err := fs.Parse(tc.args); err != nil {
				t.Fatal(err)
			}
			var o vcfscan.Options
			err := f.prepare(&o)
			var c *stats.Config
			if err == nil {
				c, err = f.config([]string{"cow_1", "cow_2", "cow_3"})
			}
			var ue *usageError
			if tc.usage {
				if !errors.As(err, &ue) {
					t.Fatalf("want usage error, got %v", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			tc.check(t, c, &o, f)
		})
	}
}
