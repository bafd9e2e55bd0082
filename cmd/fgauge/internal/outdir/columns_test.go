package outdir

import (
	"strings"
	"testing"

	"fgauge/roh"
	"fgauge/stats"
	"fgauge/stats/sexcheck"
)

// TestColumnsDeclareHeaders: the header lines the tables are written with
// are exactly the declared columns of each file, so no column lacks its
// explanation and no explanation names a column that is not written.
func TestColumnsDeclareHeaders(t *testing.T) {
	byFile := map[string][]string{}
	for _, c := range Columns() {
		if c.Doc == "" {
			t.Errorf("%s %s has no explanation", c.File, c.Name)
		}
		byFile[c.File] = append(byFile[c.File], c.Name)
	}
	for file, header := range map[string]string{
		"sites.tsv.gz":               stats.SitesHeaderFor(&stats.Config{Sex: stats.SexConfig{XColumns: true}}),
		"sites_by_population.tsv.gz": stats.PopSitesHeader(),
		"populations.tsv":            stats.PopulationsHeader(),
		"populations_pairwise.tsv":   stats.PairwiseHeader(),
	} {
		if got := strings.Join(byFile[file], "\t"); got != header {
			t.Errorf("%s: declared %q, written %q", file, got, header)
		}
	}
	// With every optional column: populations, a given sex and X sites.
	tot := stats.NewTotals(&stats.Config{Samples: []string{"a"}, PopOf: []int{0}, PopNames: []string{"herd"},
		Sex: stats.SexConfig{Given: []sexcheck.Sex{sexcheck.Male}}})
	tot.Sex.Sites.X = 1
	h, _ := tot.SampleTable()
	rr := &roh.Result{Classes: roh.DefaultConfig().Classes, Samples: []string{"a"}}
	h2, _ := rr.SampleTable()
	h = append(append(h, h2...), PedigreeColumn.Name)
	if got, want := strings.Join(byFile["samples.tsv"], "\t"), strings.Join(h, "\t"); got != want {
		t.Errorf("samples.tsv: declared %q, written %q", got, want)
	}
	if d := ColumnDoc("samples.tsv", "f_roh_gt_0p5mb"); !strings.Contains(d, "at least 0.5 Mb") {
		t.Errorf("doc of a non-default class: %q", d)
	}
	if d := ColumnDoc("samples.tsv", "no_such_column"); d != "" {
		t.Errorf("doc of an unknown column: %q", d)
	}
}
