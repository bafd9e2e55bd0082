package htmlreport

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestDemoScanSnapshot renders the report for a snapshot of a real
// `fgauge demo` scan folder (testdata/demo_scan, see testdata/SOURCES.md):
// every plot is drawn, the headline numbers and every sample page's
// numbers equal the tables.
func TestDemoScanSnapshot(t *testing.T) {
	dir := t.TempDir()
	src := filepath.Join("testdata", "demo_scan")
	entries, err := os.ReadDir(src)
	must(t, err)
	for _, e := range entries {
		b, err := os.ReadFile(filepath.Join(src, e.Name()))
		must(t, err)
		must(t, os.WriteFile(filepath.Join(dir, e.Name()), b, 0o644))
	}
	must(t, Write(dir, Options{PerSample: true}))
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	must(t, err)
	s := string(b)
	checkHeadlines(t, dir, s)
	figs := reFigure.FindAllStringSubmatch(s, -1)
	if len(figs) != 10 {
		t.Errorf("%d figures, want 10", len(figs))
	}
	for _, m := range figs {
		if strings.Contains(m[5], `data-empty="1"`) || m[3] == "0" {
			t.Errorf("figure %s is empty on the demo scan", m[1])
		}
	}
	rows := rowsOf(t, filepath.Join(dir, "samples.tsv"))
	var names []string
	for _, r := range rows {
		names = append(names, r["sample"])
	}
	st := stems(names)
	for i, r := range rows {
		page, err := os.ReadFile(filepath.Join(dir, "samples", st[i]+".html"))
		must(t, err)
		ms := reDataCol.FindAllStringSubmatch(string(page), -1)
		if len(ms) < 20 {
			t.Fatalf("%s: %d numbers on its page", names[i], len(ms))
		}
		for _, m := range ms {
			col := strings.TrimSuffix(m[1], "_compare")
			if !sameNumber(strings.ReplaceAll(m[2], "&#43;", "+"), r[col]) {
				t.Errorf("%s: %s = %q on page, %q in samples.tsv", names[i], col, m[2], r[col])
			}
		}
	}
}

// TestDemoScanAgainstR checks the summaries the report computes against R
// 4.2.2 on testdata/demo_scan/samples.tsv:
//
//	x <- read.delim("samples.tsv")
//	median(x$f_roh, na.rm=TRUE); mean(x$f_roh > 0.0625); mean(x$f_roh > 0.125)
//	100*(rank(v, ties.method="average") - 0.5)/length(v)   # mid-rank percentile
//
// (the percentile within STONE uses the STONE rows only).
func TestDemoScanAgainstR(t *testing.T) {
	dir := t.TempDir()
	for _, f := range []string{"samples.tsv", "run.json"} {
		b, err := os.ReadFile(filepath.Join("testdata", "demo_scan", f))
		must(t, err)
		must(t, os.WriteFile(filepath.Join(dir, f), b, 0o644))
	}
	must(t, Write(dir, Options{PerSample: true, Highlight: []string{"STONE-020", "HILL-001", "BROOK-021"}}))
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	must(t, err)
	h := headlines(string(b))
	for k, want := range map[string]float64{ // R 4.2.2
		"median_f_roh":             0.016891224522292993,
		"share_f_roh_above_0.0625": 0.013698630136986301,
		"share_f_roh_above_0.125":  0.013698630136986301,
	} {
		got, _ := strconv.ParseFloat(h[k], 64)
		if math.Abs(got-want) > 1e-15 {
			t.Errorf("%s = %v, R gives %v", k, got, want)
		}
	}
	for _, tc := range []struct {
		sample, col string
		cohort      float64
	}{ // R 4.2.2, rank(ties.method="average")
		{"STONE-020", "f_roh", 99.657534246575338}, {"HILL-001", "f_roh", 42.808219178082190}, {"BROOK-021", "f_roh", 90.753424657534254},
		{"STONE-020", "f_grm", 46.232876712328768}, {"HILL-001", "f_grm", 62.671232876712331}, {"BROOK-021", "f_grm", 32.534246575342465},
		{"STONE-020", "f_vanraden", 78.424657534246577}, {"HILL-001", "f_vanraden", 65.410958904109592}, {"BROOK-021", "f_vanraden", 40.753424657534246},
	} {
		jb, err := os.ReadFile(filepath.Join(dir, "samples", tc.sample+".json"))
		must(t, err)
		var js struct {
			Cohort map[string]float64 `json:"percentile_in_cohort"`
			Pop    map[string]float64 `json:"percentile_in_population"`
		}
		must(t, json.Unmarshal(jb, &js))
		if math.Abs(js.Cohort[tc.col]-tc.cohort) > 1e-9 {
			t.Errorf("%s %s percentile %v, R gives %v", tc.sample, tc.col, js.Cohort[tc.col], tc.cohort)
		}
		if tc.sample == "STONE-020" && tc.col == "f_grm" && math.Abs(js.Pop["f_grm"]-43.055555555555557) > 1e-9 {
			t.Errorf("STONE-020 f_grm percentile in STONE %v, R gives 43.0556", js.Pop["f_grm"])
		}
	}
}
