package htmlreport

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestDegenerateFolders: tiny or odd but valid folders still give a page.
func TestDegenerateFolders(t *testing.T) {
	head := "sample\tpopulation\tcall_rate\thet_rate\tf_hom\tf_grm\tflags\tn_runs\tf_roh\tf_roh_gt_1mb\n"
	for _, tc := range []struct {
		name  string
		files map[string]string
		want  string // text the report must contain
	}{
		{"header only", map[string]string{"samples.tsv": head}, `data-headline="samples" data-value="0"`},
		{"one sample", map[string]string{"samples.tsv": head + "HILL-001\tHILL\t1\t0.3\t0.01\t0.02\t.\t0\t0\t0\n"}, `data-headline="median_f_roh" data-value="0"`},
		{"all NA", map[string]string{"samples.tsv": head + "HILL-001\tHILL\tNA\tNA\tNA\tNA\tno_calls\tNA\tNA\tNA\n" +
			"HILL-002\tHILL\tNA\tNA\tNA\tNA\tno_calls\tNA\tNA\tNA\n"}, `data-headline="median_f_roh" data-value="NA"`},
		{"runs of a sample not in samples.tsv, zero-length run", map[string]string{
			"samples.tsv": head + "HILL-001\tHILL\t1\t0.3\t0.01\t0.02\t.\t1\t0.1\t0.1\n",
			"runs.tsv":    "sample\tchrom\tstart\tend\tlength_bp\nGHOST-1\t1\t10\t5000000\t4999991\nHILL-001\t1\t5\t5\t0\n",
		}, `id="fig_painting"`},
		{"one population pair", map[string]string{
			"samples.tsv":              head + "HILL-001\tHILL\t1\t0.3\t0.01\t0.02\t.\t0\t0\t0\nMOOR-001\tMOOR\t1\t0.3\t0.01\t0.02\t.\t0\t0\t0\n",
			"populations.tsv":          "population\tn_samples\tf_is\nHILL\t1\tNA\nMOOR\t1\t0.1\n",
			"populations_pairwise.tsv": "population_a\tpopulation_b\tf_st\tf_st_se\tn_sites\nHILL\tMOOR\tNA\tNA\t0\n",
		}, `data-plot="fig_pop_fst"`},
		{"hostile population and contig names", map[string]string{
			"samples.tsv":              head + "HILL-001\t<svg onload=alert(1)>\t1\t0.3\t0.01\t0.02\t.\t1\t0.1\t0.1\nMOOR-001\tMOOR\t1\t0.3\t0.01\t0.02\t.\t0\t0\t0\n",
			"runs.tsv":                 "sample\tchrom\tstart\tend\tlength_bp\nHILL-001\t<b>chr1\t10\t5000000\t4999991\n",
			"populations.tsv":          "population\tn_samples\tf_is\n<svg onload=alert(1)>\t1\t0.2\nMOOR\t1\t0.1\n",
			"populations_pairwise.tsv": "population_a\tpopulation_b\tf_st\tf_st_se\tn_sites\n<svg onload=alert(1)>\tMOOR\t0.1\tNA\t9\n",
		}, `&lt;svg onload=alert(1)&gt;`},
		{"run.json with nulls and strings", map[string]string{
			"samples.tsv": head + "HILL-001\tHILL\t1\t0.3\t0.01\t0.02\t.\t0\t0\t0\n",
			"run.json":    `{"sites":{"lambda":null,"mean_f_site":"NA","qq":[]},"roh":{"covered_bp":null},"samples":{"excluded":[{"sample":"X","reason":"duplicate"}]},"extra":{"a":1}}`,
		}, `{&#34;sample&#34;:&#34;X&#34;,&#34;reason&#34;:&#34;duplicate&#34;}`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			for name, text := range tc.files {
				must(t, os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644))
			}
			if err := Write(dir, Options{PerSample: true}); err != nil {
				t.Fatal(err)
			}
			b, err := os.ReadFile(filepath.Join(dir, "report.html"))
			must(t, err)
			if !strings.Contains(string(b), tc.want) {
				t.Errorf("report lacks %s", tc.want)
			}
			pages, _ := filepath.Glob(filepath.Join(dir, "samples", "*"))
			for _, p := range append(pages, filepath.Join(dir, "report.html")) {
				pb, err := os.ReadFile(p)
				must(t, err)
				for _, bad := range []string{"<svg onload", "<b>chr1"} {
					if strings.Contains(string(pb), bad) {
						t.Errorf("%s holds raw %q", filepath.Base(p), bad)
					}
				}
			}
		})
	}
}
