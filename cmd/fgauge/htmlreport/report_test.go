package htmlreport

import (
	"bytes"
	"encoding/json"
	"errors"
	"fgauge/roh"
	"html"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"
)

// Hostile and colliding names used across the tests.
var hostileNames = []string{"<img src=x onerror=alert(1)>", "../../escape", "a/b", "a_b", "..", "index", "tab\x01ctl"}

// rowsOf reads a TSV file written by the fixture into header→value maps,
// independently of the package's own reader.
func rowsOf(t *testing.T, path string) []map[string]string {
	t.Helper()
	b, err := os.ReadFile(path)
	must(t, err)
	lines := strings.Split(strings.TrimRight(string(b), "\n"), "\n")
	head := strings.Split(lines[0], "\t")
	var out []map[string]string
	for _, l := range lines[1:] {
		f := strings.Split(l, "\t")
		m := map[string]string{}
		for i, h := range head {
			m[h] = f[i]
		}
		out = append(out, m)
	}
	return out
}

func writeReport(t *testing.T, o fixtureOpts, opt Options) (string, []string) {
	t.Helper()
	dir := t.TempDir()
	names := writeFixture(t, dir, o)
	if err := Write(dir, opt); err != nil {
		t.Fatalf("Write: %v", err)
	}
	return dir, names
}

var reHeadline = regexp.MustCompile(`data-headline="([^"]+)" data-value="([^"]*)"`)

// headlines extracts the headline numbers (exact values) from a page.
func headlines(page string) map[string]string {
	out := map[string]string{}
	for _, m := range reHeadline.FindAllStringSubmatch(page, -1) {
		out[m[1]] = html.UnescapeString(m[2])
	}
	return out
}

// expectedHeadlines recomputes the headline numbers from samples.tsv and
// run.json with the definitions written in the report (median; share of
// samples with f_roh strictly above 1/16 and 1/8, common practice
// thresholds; HWE count copied from run.json).
func expectedHeadlines(t *testing.T, dir string) map[string]float64 {
	rows := rowsOf(t, filepath.Join(dir, "samples.tsv"))
	var f []float64
	flagged := 0
	for _, r := range rows {
		if v, err := strconv.ParseFloat(r["f_roh"], 64); err == nil {
			f = append(f, v)
		}
		if r["flags"] != "." {
			flagged++
		}
	}
	sort.Float64s(f)
	med := f[len(f)/2]
	if len(f)%2 == 0 {
		med = (f[len(f)/2-1] + f[len(f)/2]) / 2
	}
	a1, a2 := 0.0, 0.0
	for _, v := range f {
		if v > 0.0625 {
			a1++
		}
		if v > 0.125 {
			a2++
		}
	}
	var run struct {
		Records struct{ Kept float64 }
		Sites   struct {
			Below1e6 float64 `json:"hwe_p_below_1e6"`
		}
	}
	b, err := os.ReadFile(filepath.Join(dir, "run.json"))
	must(t, err)
	must(t, json.Unmarshal(b, &run))
	return map[string]float64{
		"samples": float64(len(rows)), "sites_kept": run.Records.Kept, "median_f_roh": med,
		"share_f_roh_above_0.0625": a1 / float64(len(f)), "share_f_roh_above_0.125": a2 / float64(len(f)),
		"hwe_p_below_1e6": run.Sites.Below1e6, "flagged": float64(flagged),
	}
}

func checkHeadlines(t *testing.T, dir, page string) {
	t.Helper()
	got := headlines(page)
	want := expectedHeadlines(t, dir)
	if len(got) != len(want) {
		t.Errorf("headline keys: got %v, want %d of them", got, len(want))
	}
	for k, w := range want {
		g, err := strconv.ParseFloat(got[k], 64)
		if err != nil || g != w {
			t.Errorf("headline %s = %q, want %v", k, got[k], w)
		}
	}
}

func TestHeadlineMatchesTables(t *testing.T) {
	for _, tc := range []struct {
		name string
		o    fixtureOpts
	}{
		{"even cohort", fixtureOpts{n: 40, runs: true, populations: true, pedigree: true, sitesPerChr: 100}},
		{"odd cohort", fixtureOpts{n: 41, runs: true, sitesPerChr: 50}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir, _ := writeReport(t, tc.o, Options{})
			b, err := os.ReadFile(filepath.Join(dir, "report.html"))
			must(t, err)
			checkHeadlines(t, dir, string(b))
			if !strings.Contains(html.UnescapeString(string(b)), `>fgauge scan 'herds it'\''s.vcf.gz' -o out --populations farms.tsv</pre>`) {
				t.Errorf("command line to reproduce missing or not shell-quoted")
			}
			if strings.Contains(string(b), "go-build") {
				t.Errorf("the report shows the temporary build path of go run")
			}
			for _, k := range []string{`data-skip="multiallelic">90<`, `data-skip="not_snp">40<`} {
				if !strings.Contains(string(b), k) {
					t.Errorf("skipped reason %s missing", k)
				}
			}
		})
	}
}

// TestSelfContainedAndEscaped checks every written page: no external
// reference, no script, hostile names only as escaped text.
func TestSelfContainedAndEscaped(t *testing.T) {
	dir, _ := writeReport(t, fixtureOpts{n: 30, runs: true, populations: true, pedigree: true, sitesPerChr: 50, extraNames: hostileNames},
		Options{PerSample: true, Highlight: hostileNames})
	var pages int
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() || !(strings.HasSuffix(p, ".html") || strings.HasSuffix(p, ".json")) {
			return err
		}
		pages++
		b, err := os.ReadFile(p)
		must(t, err)
		s := string(b)
		for _, bad := range []string{"http://", "https://", "<script", "<img", "\x01", "onerror=alert(1)>"} {
			if strings.Contains(s, bad) {
				t.Errorf("%s contains %q", p, bad)
			}
		}
		if strings.HasSuffix(p, ".html") && !strings.Contains(s, `http-equiv="Content-Security-Policy" content="default-src 'none';`) {
			t.Errorf("%s has no content security policy", p)
		}
		return nil
	})
	must(t, err)
	if pages < 2*len(hostileNames)+2 {
		t.Errorf("only %d pages written", pages)
	}
	rep, err := os.ReadFile(filepath.Join(dir, "report.html"))
	must(t, err)
	if !strings.Contains(string(rep), "&lt;img src=x onerror=alert(1)&gt;") {
		t.Error("hostile sample name is not shown as escaped text in report.html")
	}
	// the same name drawn inside an SVG plot (the painting of highlighted
	// samples) is escaped by vgsvg
	inSVG := false
	for _, svg := range regexp.MustCompile(`(?s)<svg.*?</svg>`).FindAllString(string(rep), -1) {
		if strings.Contains(svg, "&lt;img src=x") {
			inSVG = true
		}
	}
	if !inSVG {
		t.Error("hostile name not found escaped inside a plot")
	}
}

func TestSafeStem(t *testing.T) {
	// Expected stems follow the rule in safeStem's doc comment.
	for _, tc := range []struct{ in, want string }{
		{"HILL-017", "HILL-017"},
		{"../../escape", "____escape"},
		{"a/b", "a_b"},
		{`a\b`, "a_b"},
		{"..", "sample"[:0] + "_"},
		{".", "sample"},
		{"", "sample"},
		{".hidden", "hidden"},
		{"index", "index_"},
		{"INDEX", "INDEX_"},
		{"tab\x01ctl", "tab_ctl"},
		{"émile", "_mile"},
		{strings.Repeat("x", 200), strings.Repeat("x", maxFileStem)},
	} {
		got := safeStem(tc.in)
		if got != tc.want {
			t.Errorf("safeStem(%q) = %q, want %q", tc.in, got, tc.want)
		}
		if strings.ContainsAny(got, `/\`) || strings.Contains(got, "..") || strings.HasPrefix(got, ".") || got == "" {
			t.Errorf("safeStem(%q) = %q is not a safe file name", tc.in, got)
		}
	}
	got := stems([]string{"a/b", "a_b", "A_B", "a_b-2", "x"})
	want := []string{"a_b", "a_b-2", "A_B-3", "a_b-2-2", "x"}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("stems: got %q, want %q", got, want)
			break
		}
	}
}

// TestSamplePagesInsideFolder: every page lands in OUTDIR/samples, one per
// sample, and nothing else is written outside the report files.
func TestSamplePagesInsideFolder(t *testing.T) {
	dir, names := writeReport(t, fixtureOpts{n: 20, runs: true, sitesPerChr: 20, extraNames: hostileNames}, Options{PerSample: true})
	var outside []string
	filepath.WalkDir(filepath.Dir(dir), func(p string, d fs.DirEntry, err error) error {
		if !d.IsDir() && !strings.HasPrefix(p, dir+string(filepath.Separator)) {
			outside = append(outside, p)
		}
		return nil
	})
	if len(outside) > 0 {
		t.Errorf("files outside OUTDIR: %v", outside)
	}
	entries, err := os.ReadDir(filepath.Join(dir, "samples"))
	must(t, err)
	if len(entries) != 2*len(names)+2 { // pages, index.html, .pages
		t.Errorf("%d files in samples/, want %d", len(entries), 2*len(names)+2)
	}
	idx, err := os.ReadFile(filepath.Join(dir, "samples", "index.html"))
	must(t, err)
	for _, n := range names {
		if !strings.Contains(string(idx), ">"+html.EscapeString(visible(n))+"</a>") {
			t.Errorf("index has no link for %q", n)
		}
	}
}

var reDataCol = regexp.MustCompile(`data-col="([a-z0-9_]+)" data-value="([^"]*)"`)

// TestSamplePageNumbersEqualRow: the exact values on each page and in its
// JSON twin equal the sample's row in samples.tsv.
func TestSamplePageNumbersEqualRow(t *testing.T) {
	dir, names := writeReport(t, fixtureOpts{n: 25, runs: true, populations: true, pedigree: true, sitesPerChr: 20, extraNames: hostileNames[:3]},
		Options{PerSample: true})
	rows := rowsOf(t, filepath.Join(dir, "samples.tsv"))
	st := stems(names)
	for i, r := range rows {
		b, err := os.ReadFile(filepath.Join(dir, "samples", st[i]+".html"))
		must(t, err)
		ms := reDataCol.FindAllStringSubmatch(string(b), -1)
		if len(ms) < 20 {
			t.Fatalf("%s: only %d numbers on the page", st[i], len(ms))
		}
		if fr, err := strconv.ParseFloat(r["f_roh"], 64); err == nil &&
			!strings.Contains(string(b), "red line: this sample (f_roh = "+fmtG(fr)+")") {
			t.Errorf("%s: cohort position plot does not mark f_roh %s", st[i], r["f_roh"])
		}
		for _, m := range ms {
			col, got := m[1], html.UnescapeString(m[2])
			if col == "f_pedigree_compare" {
				col = "f_pedigree"
			}
			if !sameNumber(got, r[col]) {
				t.Errorf("%s: %s = %q on page, %q in samples.tsv", st[i], col, got, r[col])
			}
		}
		jb, err := os.ReadFile(filepath.Join(dir, "samples", st[i]+".json"))
		must(t, err)
		var js struct {
			Sample string              `json:"sample"`
			Values map[string]*float64 `json:"values"`
			Flags  []struct{ Flag string }
		}
		must(t, json.Unmarshal(jb, &js))
		if js.Sample != names[i] {
			t.Errorf("json sample %q, want %q", js.Sample, names[i])
		}
		for col, v := range js.Values {
			want := r[col]
			if v == nil {
				if want != "NA" && col != "unknown_extra_column" {
					t.Errorf("%s json %s = null, row has %q", st[i], col, want)
				}
				continue
			}
			if !sameNumber(strconv.FormatFloat(*v, 'g', -1, 64), want) {
				t.Errorf("%s json %s = %v, row has %q", st[i], col, *v, want)
			}
		}
		if (r["flags"] == ".") != (len(js.Flags) == 0) {
			t.Errorf("%s: flags %q in row, %v in json", st[i], r["flags"], js.Flags)
		}
	}
}

func sameNumber(a, b string) bool {
	if a == "NA" || b == "NA" {
		return a == b
	}
	x, err1 := strconv.ParseFloat(a, 64)
	y, err2 := strconv.ParseFloat(b, 64)
	return err1 == nil && err2 == nil && x == y
}

// TestOptionalFilesAbsent: no runs, no populations, no pedigree, no
// run.json: the report still renders and says what is missing.
func TestOptionalFilesAbsent(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir, fixtureOpts{n: 12, sitesPerChr: 10})
	must(t, os.Remove(filepath.Join(dir, "run.json")))
	must(t, os.Remove(filepath.Join(dir, "sites.tsv.gz")))
	if err := Write(dir, Options{PerSample: true}); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	must(t, err)
	s := string(b)
	if strings.Contains(s, `id="populations"`) {
		t.Error("populations section shown without populations.tsv")
	}
	if got := headlines(s)["median_f_roh"]; got != "NA" {
		t.Errorf("median f_roh without runs = %q, want NA", got)
	}
	for _, id := range []string{"fig_roh_classes", "fig_painting", "fig_hwe_qq", "fig_f_site"} {
		if !regexp.MustCompile(`id="` + id + `"[^>]*>\s*<h3[^>]*>[^<]*</h3>\s*<p class="muted" data-empty="1">`).MatchString(s) {
			t.Errorf("%s: no 'absent' note", id)
		}
	}
}

func TestMalformedInput(t *testing.T) {
	dir := t.TempDir()
	must(t, os.WriteFile(filepath.Join(dir, "samples.tsv"), []byte("sample\tf_roh\nHILL-001\t0.1\nHILL-002\n"), 0o644))
	err := Write(dir, Options{})
	if !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), "samples.tsv:3:") {
		t.Errorf("got %v, want ErrMalformed at samples.tsv:3", err)
	}
	must(t, os.WriteFile(filepath.Join(dir, "samples.tsv"), []byte("sample\tf_roh\nHILL-001\t0.1\n"), 0o644))
	must(t, os.WriteFile(filepath.Join(dir, "run.json"), []byte("{\n\"version\": \"1\",\n oops}"), 0o644))
	err = Write(dir, Options{})
	if !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), "run.json:3:") {
		t.Errorf("got %v, want ErrMalformed at run.json:3", err)
	}
	must(t, os.Remove(filepath.Join(dir, "samples.tsv")))
	if err := Write(dir, Options{}); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("missing samples.tsv: got %v", err)
	}
}

func TestPercentile(t *testing.T) {
	// Mid-rank percentile (ties count half), common practice.
	r := newRanker([]float64{1, 2, 2, 3, math.NaN()})
	for _, tc := range []struct{ x, want float64 }{{1, 12.5}, {2, 50}, {3, 87.5}, {0, 0}, {9, 100}} {
		if got := r.percentile(tc.x); got != tc.want {
			t.Errorf("percentile(%v) = %v, want %v", tc.x, got, tc.want)
		}
	}
	if !math.IsNaN(r.percentile(math.NaN())) || !math.IsNaN(newRanker(nil).percentile(1)) {
		t.Error("NaN or empty set should give NaN")
	}
}

func TestBandsAndClasses(t *testing.T) {
	// The classes are those run.json lists whose column samples.tsv has
	// (4 Mb is listed but its column is missing; f_roh_gt_x is no class).
	info := &runInfo{}
	info.ROH = &roh.Summary{ClassesMB: []float64{2, 0.5, 16, 4}}
	cl := parseClasses([]string{"sample", "f_roh", "f_roh_gt_2mb", "f_roh_gt_0p5mb", "f_roh_gt_16mb", "f_roh_gt_x"}, info)
	if len(cl) != 3 || cl[0].Col != "f_roh_gt_0p5mb" || cl[0].MinMb != 0.5 || cl[1].MinMb != 2 || cl[2].MinMb != 16 {
		t.Fatalf("parseClasses = %+v", cl)
	}
	if got := bandLabels(cl); strings.Join(got, "|") != "< 0.5 Mb|0.5 Mb–2 Mb|2 Mb–16 Mb|> 16 Mb" {
		t.Errorf("bandLabels = %q", got)
	}
	// cumulative shares 0.3 total, 0.2 > 0.5 Mb, 0.15 > 2 Mb, 0.05 > 16 Mb
	got := bands(0.3, []float64{0.2, 0.15, 0.05})
	want := []float64{0.1, 0.05, 0.1, 0.05}
	for i := range want {
		if math.Abs(got[i]-want[i]) > 1e-12 {
			t.Errorf("bands = %v, want %v", got, want)
		}
	}
	if s := bands(0.1, []float64{0.12}); s[0] != 0 || s[1] != 0.12 {
		t.Errorf("negative band not clamped: %v", s)
	}
}

func TestMedianAndFormats(t *testing.T) {
	for _, tc := range []struct {
		in   []float64
		want float64
	}{{[]float64{3, 1, 2}, 2}, {[]float64{4, 1, 3, 2}, 2.5}, {[]float64{7}, 7}} {
		if got := median(tc.in); got != tc.want {
			t.Errorf("median(%v) = %v", tc.in, got)
		}
	}
	for _, tc := range []struct {
		x    float64
		want string
	}{{49680, "49680"}, {0.0123456, "0.01235"}, {1234.56, "1234.6"}, {math.NaN(), "NA"}, {-0.001065, "-0.001065"}} {
		if got := fmtG(tc.x); got != tc.want {
			t.Errorf("fmtG(%v) = %q, want %q", tc.x, got, tc.want)
		}
	}
	if got := shellJoin([]string{"fgauge", "scan", "a b.vcf", "it's"}); got != `fgauge scan 'a b.vcf' 'it'\''s'` {
		t.Errorf("shellJoin = %s", got)
	}
}

func TestPooledAndHighlight(t *testing.T) {
	dir, names := writeReport(t, fixtureOpts{n: 30, runs: true, populations: true, sitesPerChr: 20},
		Options{PerSample: true, Highlight: []string{"MOOR-002", "HILL-003", "not-in-cohort"}})
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	must(t, err)
	s := string(b)
	// values of the all_pooled row written by the fixture
	for k, v := range map[string]string{"f_st": "0.05", "f_is": "0.03", "f_it": "0.08"} {
		if !strings.Contains(s, `data-pooled="`+k+`" data-value="`+v+`"`) {
			t.Errorf("pooled %s not shown as %s", k, v)
		}
	}
	if !strings.Contains(s, "Named with --highlight but not in samples.tsv: <code>not-in-cohort</code>.") {
		t.Error("unknown --highlight name not reported")
	}
	if !strings.Contains(s, "Shown: the samples listed with --highlight") {
		t.Error("painting does not say it shows the highlighted samples")
	}
	m := regexp.MustCompile(`data-plot="fig_painting" data-kind="painting" data-points="(\d+)"`).FindStringSubmatch(s)
	runs := 0
	for _, r := range rowsOf(t, filepath.Join(dir, "runs.tsv")) {
		if r["sample"] == "MOOR-002" || r["sample"] == "HILL-003" {
			runs++
		}
	}
	if m == nil || m[1] != strconv.Itoa(runs) {
		t.Errorf("painting draws %v runs, the two highlighted samples have %d", m, runs)
	}
	entries, err := os.ReadDir(filepath.Join(dir, "samples"))
	must(t, err)
	if len(entries) != 6 { // 2 pages, 2 json, index, .pages
		t.Errorf("%d files in samples/ with two highlighted samples (of %d)", len(entries), len(names))
	}
}

// TestDeterministic: the same folder gives byte-identical pages, so
// reports can be compared and cached.
func TestDeterministic(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir, fixtureOpts{n: 50, runs: true, populations: true, pedigree: true, sitesPerChr: 40})
	var pages [2][]byte
	var json0 [2][]byte
	for k := range pages {
		must(t, Write(dir, Options{PerSample: true, Workers: k + 1}))
		var err error
		pages[k], err = os.ReadFile(filepath.Join(dir, "report.html"))
		must(t, err)
		json0[k], err = os.ReadFile(filepath.Join(dir, "samples", "HILL-001.json"))
		must(t, err)
	}
	if !bytes.Equal(pages[0], pages[1]) || !bytes.Equal(json0[0], json0[1]) {
		t.Error("two runs over the same folder differ")
	}
}

func BenchmarkWrite1000(b *testing.B) {
	dir := b.TempDir()
	writeFixture(b, dir, fixtureOpts{n: 1000, runs: true, populations: true, pedigree: true, sitesPerChr: 2000})
	for b.Loop() {
		if err := Write(dir, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

func TestOutlierLabels(t *testing.T) {
	// a tight cloud, one far point, one point right beside it, one NaN
	xs := []float64{0, 0.01, -0.01, 0.02, 0, 1, 1.01, math.NaN(), 0.5}
	ys := []float64{0, 0.01, 0.01, -0.01, 0.02, 1, 1.001, 3, 0}
	got := declutter(xs, ys, byDistance(xs, ys, nil), 3)
	// 6 (1.01, 1.001) and 5 are furthest; 5 overlaps 6's label box and is
	// skipped; 8 comes next
	if len(got) != 3 || got[0] != 6 || got[1] != 8 {
		t.Errorf("labels = %v, want [6 8 ...]", got)
	}
	for _, i := range got {
		if i == 5 || i == 7 {
			t.Errorf("labels = %v: overlapping or NaN point labelled", got)
		}
	}
	if got := byDistance(xs, ys, []int{0, 5, 7}); len(got) != 2 || got[0] != 5 {
		t.Errorf("byDistance over a subset = %v, want [5 0]", got)
	}
}

func TestPaintingLinksToPages(t *testing.T) {
	dir, _ := writeReport(t, fixtureOpts{n: 12, runs: true, sitesPerChr: 10, extraNames: hostileNames[:2]},
		Options{PerSample: true, Highlight: hostileNames[:2]})
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	must(t, err)
	for _, want := range []string{`<a href="samples/_img_src_x_onerror_alert_1__.html">&lt;img src=x onerror=alert(1)&gt;</a>`,
		`<a href="samples/____escape.html">../../escape</a>`} {
		if !strings.Contains(string(b), want) {
			t.Errorf("report lacks link %s", want)
		}
	}
}

func TestSanitizeSVG(t *testing.T) {
	in := `<?xml version="1.0"?>
<!-- Generated by SVGo and Plotinum VG -->
<svg width="100pt" height="50pt" viewBox="0 0 100 50"
	xmlns="http://www.w3.org/2000/svg"
	xmlns:xlink="http://www.w3.org/1999/xlink">
<g><text>&lt;img src=x&gt;</text></g></svg>`
	got, err := sanitizeSVG([]byte(in))
	if err != nil {
		t.Fatal(err)
	}
	want := `<svg class="plot" role="img" viewBox="0 0 100 50">
<g><text>&lt;img src=x&gt;</text></g></svg>`
	if string(got) != want {
		t.Errorf("sanitizeSVG =\n%s\nwant\n%s", got, want)
	}
	for _, bad := range []string{`<svg><a href="x">`, `<svg><image xlink:href="data:,"/>`, `<svg><script>`, `no svg here`} {
		if _, err := sanitizeSVG([]byte(bad)); err == nil {
			t.Errorf("sanitizeSVG accepted %q", bad)
		}
	}
}

// TestOldPagesRemoved: a second run with fewer pages removes the pages it
// wrote before and no longer writes, and leaves other files alone.
func TestOldPagesRemoved(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir, fixtureOpts{n: 8, runs: true, sitesPerChr: 10})
	must(t, Write(dir, Options{PerSample: true}))
	mine := filepath.Join(dir, "samples", "notes.txt")
	must(t, os.WriteFile(mine, []byte("kept"), 0o644))
	must(t, Write(dir, Options{PerSample: true, Highlight: []string{"HILL-001"}}))
	entries, err := os.ReadDir(filepath.Join(dir, "samples"))
	must(t, err)
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	want := ".pages HILL-001.html HILL-001.json index.html notes.txt"
	if got := strings.Join(names, " "); got != want {
		t.Errorf("samples/ holds %s, want %s", got, want)
	}
}
