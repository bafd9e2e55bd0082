package stats

import (
	"errors"
	"math"
	"strings"
	"testing"

	"fgauge/vcfscan"
)

func TestReadPopulations(t *testing.T) {
	for _, tc := range []struct {
		name, in string
		names    []string
		errLine  string // "" means no error
	}{
		{"header", "sample population\ncow_1 herd_a\ncow_2 herd_b\ncow_3 herd_a\n", []string{"herd_a", "herd_b"}, ""},
		{"no_header_tabs", "# invented herds\ncow_1\therd_b\n\ncow_2\therd_b\n", []string{"herd_b"}, ""},
		{"three_cols", "cow_1 herd_a extra\n", nil, "pops.txt:1:"},
		{"duplicate", "cow_1 herd_a\ncow_1 herd_b\n", nil, "pops.txt:2:"},
		{"empty", "# nothing\n", nil, "pops.txt:1:"},
	} {
		p, err := ReadPopulations(strings.NewReader(tc.in), "pops.txt")
		if tc.errLine != "" {
			if err == nil || !strings.HasPrefix(err.Error(), tc.errLine) || !errors.Is(err, ErrBadTable) {
				t.Errorf("%s: error %v, want %s... wrapping ErrBadTable", tc.name, err, tc.errLine)
			}
			continue
		}
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if strings.Join(p.Names, ",") != strings.Join(tc.names, ",") {
			t.Errorf("%s: names %v", tc.name, p.Names)
		}
	}
	p, _ := ReadPopulations(strings.NewReader("cow_1 herd_a\ncow_3 herd_b\n"), "p")
	popOf, unl := p.Assign([]string{"cow_1", "cow_2", "cow_3"})
	if popOf[0] != 0 || popOf[1] != -1 || popOf[2] != 1 || len(unl) != 1 || unl[0] != "cow_2" {
		t.Errorf("assign %v %v", popOf, unl)
	}
}

func TestReadPanel(t *testing.T) {
	in := "chrom pos ref alt alt_freq\n1 100 A G 0.25\n1 200 c t 0.5\n1 300 AT A 0.1\n"
	p, skipped, err := ReadPanel(strings.NewReader(in), "panel.tsv")
	if err != nil || p.Len() != 2 || skipped != 1 {
		t.Fatalf("panel %v skipped %d err %v", p, skipped, err)
	}
	if _, _, m := p.lookup("chr1", 100, 'A', 'G'); m != panelFound {
		t.Errorf("chr prefix: %v", m)
	}
	if f, _, m := p.lookup("1", 100, 'G', 'A'); m != panelFound || f != 0.75 {
		t.Errorf("swapped alleles: %v %v", f, m)
	}
	if _, _, m := p.lookup("1", 200, 'C', 'G'); m != panelMismatch {
		t.Errorf("mismatch: %v", m)
	}
	for _, bad := range []string{"1 100 A G 1.5\n", "1 x A G 0.5\n", "1 100 A G\n", "1 5 A G 0.1\n1 5 A C 0.2\n"} {
		if _, _, err := ReadPanel(strings.NewReader(bad), "panel.tsv"); err == nil || !errors.Is(err, ErrBadTable) || !strings.HasPrefix(err.Error(), "panel.tsv:") {
			t.Errorf("%q: error %v", bad, err)
		}
	}
}

func FuzzReadPanel(f *testing.F) {
	f.Add("chrom pos ref alt alt_freq\n1 100 A G 0.25\n")
	f.Add("1 5 A G 0.1\n1 5 A C 0.2\n")
	f.Fuzz(func(t *testing.T, s string) {
		p, _, err := ReadPanel(strings.NewReader(s), "f")
		if err == nil {
			for _, q := range p.Freq {
				if !(q >= 0 && q <= 1) {
					t.Fatalf("frequency %v accepted", q)
				}
			}
		}
	})
}

func FuzzReadPopulations(f *testing.F) {
	f.Add("sample population\ncow_1 herd_a\n")
	f.Fuzz(func(t *testing.T, s string) {
		p, err := ReadPopulations(strings.NewReader(s), "f")
		if err == nil {
			for _, i := range p.Of {
				if i < 0 || i >= len(p.Names) {
					t.Fatalf("index %d of %d", i, len(p.Names))
				}
			}
		}
	})
}

// TestPanelFrequencies: data sites absent from the panel are left out of
// the estimators and counted; panel sites never met are counted.
func TestPanelFrequencies(t *testing.T) {
	panel, _, err := ReadPanel(strings.NewReader("chr1 1000 A G 0.5\nchr1 2000 A G 0.5\nchr1 9999 A G 0.5\n"), "p")
	if err != nil {
		t.Fatal(err)
	}
	calls := [][]vcfscan.Geno{{vcfscan.HomRef}, {vcfscan.HomAlt}, {vcfscan.Heterozygous}} // at 1000, 2000, 3000
	cfg := &Config{Samples: []string{"goat_1"}, Freqs: FreqPanel, Panel: panel, MinCallRate: 0.9}
	tot, cols := runCalls(t, cfg, calls, nil)
	if cols["polymorphic_sites_called"][0] != 2 || math.Abs(cols["f_uniting_gametes"][0]-1) > 1e-9 {
		t.Errorf("polymorphic sites called %v, f_uniting %v (want 2, 1)", cols["polymorphic_sites_called"], cols["f_uniting_gametes"])
	}
	fr := tot.Summary().Frequencies
	if fr.PanelAbsent == nil || *fr.PanelAbsent != 1 || fr.PanelNeverMet == nil || *fr.PanelNeverMet != 1 || fr.InfoMissing != nil {
		t.Errorf("frequencies summary %+v", fr)
	}
}

func TestConfigValidate(t *testing.T) {
	for _, c := range []Config{
		{Samples: []string{"a"}, HWEMethod: "fisher"},
		{Samples: []string{"a"}, PopOf: []int{0, 1}, PopNames: []string{"x"}},
		{Samples: []string{"a"}, PopOf: []int{3}, PopNames: []string{"x"}},
		{Samples: []string{"a"}, Freqs: FreqPanel},
	} {
		if err := c.Validate(); err == nil {
			t.Errorf("%+v: no error", c)
		}
	}
}

// TestLambdaNull: under Hardy-Weinberg proportions the inflation factor
// of the HWE chi-square statistics is about 1 and the share of p < 1e-3 is
// about 1e-3 (common practice).
func TestLambdaNull(t *testing.T) {
	names := make([]string, 300)
	for i := range names {
		names[i] = "hen_" + itoa(int64(i))
	}
	calls := simulateCohort(5, make([]float64, len(names)), 4000)
	tot, _ := runCalls(t, &Config{Samples: names, MinCallRate: 0.9}, calls, nil)
	s := tot.Summary()
	lam := float64(s.Lambda)
	below := float64(s.Below1e3) / float64(s.Tested)
	qq := s.QQ
	t.Logf("lambda %.4f, share p<1e-3 %.4g, %d QQ points", lam, below, len(qq))
	if math.Abs(lam-1) > 0.08 || below > 0.004 || len(qq) < 100 {
		t.Errorf("lambda %v share %v qq %d", lam, below, len(qq))
	}
	// The bulk of the QQ plot lies on the diagonal.
	mid := qq[len(qq)/2]
	if math.Abs(mid[0]-mid[1]) > 0.15 {
		t.Errorf("QQ midpoint %v off the diagonal", mid)
	}
}

func TestColumnDocsCover(t *testing.T) {
	doc := map[string]bool{}
	for _, d := range ColumnDocs() {
		doc[d.File+"/"+d.Column] = true
		if d.Meaning == "" {
			t.Errorf("%s %s: empty", d.File, d.Column)
		}
	}
	check := func(file, header string) {
		for _, c := range strings.Split(header, "\t") {
			if !doc[file+"/"+c] {
				t.Errorf("%s column %s undocumented", file, c)
			}
		}
	}
	check("sites.tsv.gz", SitesHeader())
	check("sites_by_population.tsv.gz", PopSitesHeader())
	check("populations.tsv", PopulationsHeader())
	check("populations_pairwise.tsv", PairwiseHeader())
	h, _ := NewTotals(&Config{Samples: []string{"x"}, PopOf: []int{0}, PopNames: []string{"p"}}).SampleTable()
	check("samples.tsv", strings.Join(h, "\t"))
}
