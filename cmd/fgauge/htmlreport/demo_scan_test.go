package htmlreport

import (
	"os"
	"path/filepath"
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
	if len(figs) != 9 {
		t.Errorf("%d figures, want 9", len(figs))
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
