package scanrun

import (
	"errors"
	"strings"
	"testing"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/stats"
)

func TestStatsSettingsConfig(t *testing.T) {
	pops, err := stats.ReadPopulations(strings.NewReader("sample population\ncow_1 herd_a\ncow_2 herd_b\n"), "herds.txt")
	if err != nil {
		t.Fatal(err)
	}
	samples := []string{"cow_1", "cow_2", "cow_3"}
	base := StatsSettings{HWEMethod: "exact", MinCallRate: 0.9, JackknifeBlockMB: 5}
	for _, tc := range []struct {
		name  string
		edit  func(*StatsSettings)
		usage bool
		check func(*testing.T, *stats.Config, []string)
	}{
		{"defaults", func(*StatsSettings) {}, false, func(t *testing.T, c *stats.Config, unlisted []string) {
			if c.HWEMethod != "exact" || c.Freqs != stats.FreqCohort || c.MinCallRate != 0.9 || c.JackknifeBlockBP != 5_000_000 || c.PopOf != nil || unlisted != nil {
				t.Errorf("%+v %v", c, unlisted)
			}
		}},
		{"populations", func(s *StatsSettings) { s.Populations, s.JackknifeBlockMB = pops, 0.5 }, false, func(t *testing.T, c *stats.Config, unlisted []string) {
			if c.Freqs != stats.FreqPopulation || len(c.PopNames) != 2 || c.PopOf[2] != -1 || c.JackknifeBlockBP != 500_000 || len(unlisted) != 1 || unlisted[0] != "cow_3" {
				t.Errorf("%+v unlisted %v", c, unlisted)
			}
		}},
		{"info", func(s *StatsSettings) { s.InfoKey, s.HWEMethod = "AF", "chisq" }, false, func(t *testing.T, c *stats.Config, _ []string) {
			if c.Freqs != stats.FreqInfo || c.HWEMethod != "chisq" {
				t.Errorf("%+v", c)
			}
		}},
		{"bad_method", func(s *StatsSettings) { s.HWEMethod = "fisher" }, true, nil},
		{"bad_rate", func(s *StatsSettings) { s.MinCallRate = 2 }, true, nil},
		{"bad_block", func(s *StatsSettings) { s.JackknifeBlockMB = 0 }, true, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := base
			tc.edit(&s)
			c, unlisted, err := s.config(samples)
			var be *badinput.Error
			if tc.usage {
				if !errors.As(err, &be) {
					t.Fatalf("want a bad-input error, got %v", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			tc.check(t, c, unlisted)
		})
	}
}
