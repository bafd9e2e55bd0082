package htmlreport

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fgauge/stats"
)

// addSexColumns gives an invented output folder the sex columns and the
// run.json sex section a scan writes for data with X: every fifth sample
// given male, two mislabelled (sex_mismatch), one fitting neither sex.
func addSexColumns(t *testing.T, dir string) {
	t.Helper()
	p := filepath.Join(dir, "samples.tsv")
	b, err := os.ReadFile(p)
	must(t, err)
	lines := strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
	head := strings.Split(lines[0], "\t")
	fi := -1
	for i, h := range head {
		if h == "flags" {
			fi = i
		}
	}
	if fi < 0 {
		t.Fatal("fixture has no flags column")
	}
	add := []string{"sex_given", "sex_inferred", "sex_evidence", "x_sites_called", "x_f", "x_f_se", "y_call_ratio", "x_male_het_errors"}
	out := []string{strings.Join(append(append(append([]string{}, head[:fi]...), add...), head[fi:]...), "\t")}
	for r, l := range lines[1:] {
		f := strings.Split(l, "\t")
		given, inferred, ev, xf, yr := "female", "female", "x_diploid", fmt.Sprint(0.02*float64(r%7)), "0"
		if r%5 == 0 {
			given, inferred, ev, xf, yr = "male", "male", "x_hemizygous", "0.995", "1"
		}
		flags := f[fi]
		switch r {
		case 3, 10:
			given = "male"
			flags = strings.TrimPrefix(flags+",sex_mismatch", ".,")
		case 7:
			inferred, ev, xf = "unknown", "x_het_excess", "-0.6"
			flags = strings.TrimPrefix(flags+",sex_fits_neither", ".,")
		}
		f[fi] = flags
		cols := []string{given, inferred, ev, "800", xf, "0.04", yr, "NA"}
		out = append(out, strings.Join(append(append(append([]string{}, f[:fi]...), cols...), f[fi:]...), "\t"))
	}
	must(t, os.WriteFile(p, []byte(strings.Join(out, "\n")+"\n"), 0o644))

	jp := filepath.Join(dir, "run.json")
	jb, err := os.ReadFile(jp)
	must(t, err)
	var run map[string]any
	must(t, json.Unmarshal(jb, &run))
	run["sex"] = &stats.SexSummary{XSites: 900, XInformativeSites: 800, YSites: 20, Mismatches: 2, FitsNeither: 1,
		Inferred: map[string]int{"male": 6, "female": 23, "unknown": 1}, GivenSource: "--sex farms_sex.tsv", SamplesGiven: 30,
		PAR:        stats.PARSummary{Reason: "from --par X:1-2000000", Regions: []string{"X:1-2000000"}},
		Thresholds: stats.SexThresholdsDoc{MaleMinF: 0.9, FemaleMaxF: 0.5, Description: "thresholds <text>"},
		YUse:       stats.YUseSummary{Used: true, Reason: "20 non-PAR Y sites separate the sexes"}}
	jb, err = json.Marshal(run)
	must(t, err)
	must(t, os.WriteFile(jp, jb, 0o644))
}

// TestReportSexSection: with the sex columns, the report has the sex-check
// section with its plot (every sample drawn, valid SVG colours), the
// table of flagged samples and the caution; without them it has none.
func TestReportSexSection(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir, fixtureOpts{n: 30, runs: true, sitesPerChr: 40})
	must(t, Write(dir, Options{}))
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	must(t, err)
	if strings.Contains(string(b), `id="sex_check"`) {
		t.Errorf("sex-check section without sex columns")
	}
	addSexColumns(t, dir)
	must(t, Write(dir, Options{}))
	b, err = os.ReadFile(filepath.Join(dir, "report.html"))
	must(t, err)
	page := string(b)
	for _, want := range []string{`id="sex_check"`, `data-sex="mismatches">2<`, `data-sex="fits_neither">1<`,
		`id="fig_sex" data-plot="fig_sex" data-kind="scatter" data-points="30" data-total="30"`,
		"thresholds &lt;text&gt;", "licensed practitioners following local regulations"} {
		if !strings.Contains(page, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	i := strings.Index(page, `id="sex_table"`)
	if i < 0 {
		t.Fatal("no sex table")
	}
	tbl, _, _ := strings.Cut(page[i:], "</table>")
	if n := strings.Count(tbl, "<tr data-sample="); n != 3 {
		t.Errorf("sex table has %d rows, want 3", n)
	}
	if n := checkSVGs(t, "report.html", page); n < 3 {
		t.Errorf("only %d SVGs", n)
	}
}
