package htmlreport

import (
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
)

// TestLargeCohort renders a simulated 10,000-sample folder: the report
// must stay under 10 MB, say what it aggregated, cap labels and keep the
// headline numbers exact.
func TestLargeCohort(t *testing.T) {
	const n = 10000
	dir := t.TempDir()
	writeFixture(t, dir, fixtureOpts{n: n, runs: true, populations: true, pedigree: true, sitesPerChr: 2000})
	start := time.Now()
	if err := Write(dir, Options{}); err != nil {
		t.Fatal(err)
	}
	elapsed := time.Since(start)
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	must(t, err)
	s := string(b)
	t.Logf("10,000 samples: report.html %d bytes in %v", len(b), elapsed)
	if len(b) >= 10<<20 {
		t.Errorf("report.html is %d bytes, want < 10 MB", len(b))
	}
	checkHeadlines(t, dir, s)
	if !strings.Contains(s, `id="aggregation"`) || strings.Count(s, `data-aggregated="1"`) < 2 {
		t.Error("large cohort: the page does not say what was aggregated")
	}
	if rows := strings.Count(s, "<tr data-sample="); rows > maxTableRows {
		t.Errorf("sample table has %d rows, cap is %d", rows, maxTableRows)
	}
	for _, m := range regexp.MustCompile(`data-plot="(\w+)" data-kind="\w+" data-points="(\d+)"`).FindAllStringSubmatch(s, -1) {
		k, _ := strconv.Atoi(m[2])
		if k > 6*maxScatterPoints+maxPaintRows*40 {
			t.Errorf("%s draws %d marks", m[1], k)
		}
	}
	// pages for two highlighted samples of the 10,000: percentiles are
	// ranks in the whole cohort
	must(t, Write(dir, Options{PerSample: true, Highlight: []string{"HILL-001", "VALE-2500"}}))
	for _, name := range []string{"HILL-001", "VALE-2500"} {
		page, err := os.ReadFile(filepath.Join(dir, "samples", name+".html"))
		must(t, err)
		if !strings.Contains(string(page), "one of 10000 samples") {
			t.Errorf("%s page does not place the sample in the 10,000", name)
		}
	}
	if m := regexp.MustCompile(`data-plot="fig_roh_classes" data-kind="bars" data-points="(\d+)" data-total="(\d+)"`).FindStringSubmatch(s); m == nil || m[1] == m[2] {
		t.Errorf("stacked bars not grouped at 10,000 samples: %v", m)
	}
}
