package main

import (
	"errors"
	"flag"
	"io"
	"os"
	"path/filepath"
	"testing"

	"fgauge/cmd/fgauge/internal/scanrun"
)

// TestStatsFlags checks the options-to-settings step; the settings-to-
// statistics step is tested in scanrun.
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
		check func(*testing.T, scanrun.StatsSettings)
	}{
		{"defaults", nil, false, func(t *testing.T, s scanrun.StatsSettings) {
			if s.HWEMethod != "exact" || s.MinCallRate != 0.9 || s.JackknifeBlockMB != 5 || s.Populations != nil || s.Panel != nil || s.InfoKey != "" {
				t.Errorf("%+v", s)
			}
		}},
		{"populations", []string{"--populations", pops, "--jackknife-block-mb", "0.5"}, false, func(t *testing.T, s scanrun.StatsSettings) {
			if s.Populations == nil || len(s.Populations.Names) != 2 || s.JackknifeBlockMB != 0.5 || s.PopulationsFile != pops {
				t.Errorf("%+v", s)
			}
		}},
		{"info", []string{"--freqs-from-info", "AF", "--hwe-method", "chisq"}, false, func(t *testing.T, s scanrun.StatsSettings) {
			if s.InfoKey != "AF" || s.HWEMethod != "chisq" {
				t.Errorf("%+v", s)
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
			s, err := f.settings()
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
			tc.check(t, s)
		})
	}
}
