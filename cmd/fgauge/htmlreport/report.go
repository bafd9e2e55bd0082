package htmlreport

import (
	"bytes"
	"embed"
	"fgauge/cmd/fgauge/internal/outdir"
	"fmt"
	"html/template"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

//go:embed assets
var assets embed.FS

// Options controls what Write produces.
type Options struct {
	// Highlight names samples to paint in the cohort report and, with
	// PerSample, limits the per-sample pages to them.
	Highlight []string
	// PerSample writes samples/<name>.html and .json for every sample (or
	// for the Highlight samples when given) and samples/index.html.
	PerSample bool
	// Workers is how many per-sample pages are drawn at once; 0 means
	// one per CPU (runtime.GOMAXPROCS).
	Workers int
}

// maxTableRows is the number of samples listed in the report's table
// before it shows only the most inbred and the flagged.
const maxTableRows = 200

// maxExcludedShown caps the list of excluded samples in the summary.
const maxExcludedShown = 40

// pageTemplates parses the embedded templates once per Write.
func pageTemplates() (*template.Template, error) {
	css, err := assets.ReadFile("assets/style.css")
	if err != nil {
		return nil, err
	}
	funcs := template.FuncMap{
		"css":    func() template.CSS { return template.CSS(css) }, // our own embedded stylesheet
		"g":      fmtG,
		"exact":  fmtExact,
		"pct":    fmtPct,
		"fmtInt": func(v any) string { return fmtInt(toInt64(v)) },
		// coldoc is the explanation of a samples.tsv column, declared
		// beside the column by the package that writes it.
		"coldoc": func(col string) string { return outdir.ColumnDoc("samples.tsv", col) },
	}
	return template.New("pages").Funcs(funcs).ParseFS(assets, "assets/*.tmpl")
}

func toInt64(v any) int64 {
	switch x := v.(type) {
	case int:
		return int64(x)
	case int64:
		return x
	case float64:
		return int64(x)
	}
	return 0
}

// kv is a name with a count, for sorted tables.
type kv struct {
	Key string
	N   int64
}

func sortedKV(m map[string]int64) []kv {
	out := make([]kv, 0, len(m))
	for k, v := range m {
		out = append(out, kv{k, v})
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].N != out[j].N {
			return out[i].N > out[j].N
		}
		return out[i].Key < out[j].Key
	})
	return out
}

// nonZero drops reasons that never happened.
func nonZero(in []kv) []kv {
	out := in[:0]
	for _, e := range in {
		if e.N != 0 {
			out = append(out, e)
		}
	}
	return out
}

// cell is a number shown rounded with its exact value alongside.
type cell struct{ Show, Exact string }

func newCell(x float64) cell { return cell{fmtG(x), fmtExact(x)} }

type sampleRowView struct {
	Name, Pop, Link string
	Cells           []cell
	Flags           []string
}

type figures struct {
	Estimators, Classes, RunLengths, Painting, QQ, FSite, PopFIS, FST, Quality *figure
}

type strTable struct {
	Header []string
	Rows   [][]cell
}

// pooledView is the all_pooled row of populations.tsv: genome-wide Weir &
// Cockerham estimates with jackknife standard errors.
type pooledView struct{ FST, FSTSE, FIT, FITSE, FIS cell }

func pooled(t *table) *pooledView {
	for r := range t.rows {
		if t.str(r, "population") == "all_pooled" {
			return &pooledView{newCell(t.num(r, "f_st")), newCell(t.num(r, "f_st_se")), newCell(t.num(r, "f_it")),
				newCell(t.num(r, "f_it_se")), newCell(t.num(r, "f_is"))}
		}
	}
	return nil
}

// popTable shows populations.tsv with numbers rounded for reading (the
// exact value stays in data-value).
func popTable(t *table) *strTable {
	out := &strTable{Header: t.header}
	for _, r := range t.rows {
		row := make([]cell, len(r))
		for i, s := range r {
			if x := parseNum(s); !math.IsNaN(x) {
				row[i] = newCell(x)
			} else {
				row[i] = cell{Show: s, Exact: s}
			}
		}
		out.Rows = append(out.Rows, row)
	}
	return out
}

type reportView struct {
	DirName         string
	Info            *runInfo
	Head            headline
	Skipped         []kv
	Warnings        []kv
	ExcludedContigs []kv
	Excluded        []string
	CoveredBP       string
	WallSeconds     float64
	Command         string
	Aggregated      []string
	Fig             figures
	HasPops         bool
	PopTable        *strTable
	Pooled          *pooledView
	HasPopCol       bool
	TableCols       []string
	SampleRows      []sampleRowView
	SampleTableNote string
	PageDir         bool
	Unknown         []string
	Depth           *depthView // when run.json has a depth section
	Sex             *sexView   // nil without the sex columns
}

// depthView is run.json's depth section as the report shows it.
type depthView struct {
	Mean, Source, Threshold, OneAllele string
	Low, HasLikelihoods                bool
}

// Write reads the scan output folder outDir and writes outDir/report.html
// and, with opt.PerSample, the per-sample pages under outDir/samples/.
func Write(outDir string, opt Options) error {
	d, err := load(outDir)
	if err != nil {
		return err
	}
	tpl, err := pageTemplates()
	if err != nil {
		return fmt.Errorf("report: templates: %w", err)
	}
	c := newCohort(d, opt.Highlight)
	var pages map[int]string
	if opt.PerSample {
		pages, err = writeSamplePages(outDir, c, tpl, opt)
		if err != nil {
			return err
		}
	}
	v, err := buildReport(c, pages)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := tpl.ExecuteTemplate(&buf, "report", v); err != nil {
		return fmt.Errorf("report: render: %w", err)
	}
	return writeFileAtomic(filepath.Join(outDir, "report.html"), buf.Bytes())
}

func buildReport(c *cohort, pages map[int]string) (*reportView, error) {
	d := c.d
	v := &reportView{DirName: filepath.Base(d.dir), Info: &d.info, Head: computeHeadline(d), PageDir: pages != nil}
	v.Skipped = nonZero(sortedKV(d.info.Records.Skipped))
	v.Warnings = sortedKV(d.info.Warnings)
	v.ExcludedContigs = sortedKV(d.info.ROH.ExcludedContigs)
	v.Excluded = d.info.Samples.Excluded
	if len(v.Excluded) > maxExcludedShown {
		more := len(v.Excluded) - maxExcludedShown
		v.Excluded = append(v.Excluded[:maxExcludedShown:maxExcludedShown], fmt.Sprintf("… and %d more (see run.json)", more))
	}
	if d.info.ROH.CoveredBP > 0 {
		v.CoveredBP = fmtInt(d.info.ROH.CoveredBP)
	}
	if d.info.WallSeconds > 0 {
		v.WallSeconds = d.info.WallSeconds
	}
	if cl := d.info.CommandLine; len(cl) > 0 {
		// run.json keeps the program path as started (under go run a
		// temporary build); the reader is shown the command to type.
		v.Command = shellJoin(append([]string{"fgauge"}, cl[1:]...))
	}
	v.Unknown = c.unknown
	if dp := d.info.Depth; dp != nil {
		v.Depth = &depthView{Mean: fmtG(float64(dp.Mean)), Source: dp.Source, Threshold: fmtG(dp.LowThreshold),
			OneAllele: fmtPct(float64(dp.HetOneAlleleRate)), Low: dp.Low, HasLikelihoods: dp.RecordsWithLikelihoods > 0}
	}
	builders := []struct {
		dst   **figure
		build func() (figure, error)
	}{
		{&v.Fig.Estimators, c.figEstimators},
		{&v.Fig.Classes, c.figClasses},
		{&v.Fig.RunLengths, c.figRunLengths},
		{&v.Fig.Painting, c.figPainting},
		{&v.Fig.QQ, c.figQQ},
		{&v.Fig.FSite, c.figFSite},
		{&v.Fig.PopFIS, c.figPopFIS},
		{&v.Fig.FST, c.figFST},
		{&v.Fig.Quality, c.figQuality},
	}
	for _, b := range builders {
		f, err := b.build()
		if err != nil {
			return nil, fmt.Errorf("report: %s: %w", f.ID, err)
		}
		if f.Note != "" {
			v.Aggregated = append(v.Aggregated, f.Title+": "+f.Note)
		}
		for _, r := range f.Rows {
			if st, ok := pages[r]; ok {
				f.Links = append(f.Links, pageLink{c.names[r], "samples/" + st + ".html"})
			}
		}
		*b.dst = &f
	}
	sv, err := c.sexSection()
	if err != nil {
		return nil, fmt.Errorf("report: sex check: %w", err)
	}
	if sv != nil {
		v.Sex = sv
		if sv.Fig.Note != "" {
			v.Aggregated = append(v.Aggregated, sv.Fig.Title+": "+sv.Fig.Note)
		}
	}
	v.HasPops = d.pops != nil || d.pairs != nil
	if d.pops != nil {
		v.PopTable = popTable(d.pops)
		v.Pooled = pooled(d.pops)
	}
	v.HasPopCol = c.pops != nil
	v.TableCols = append([]string{"call_rate", "het_rate"}, c.ests...)
	rows, note := tableRows(c)
	if len(rows) < len(c.names) {
		v.Aggregated = append(v.Aggregated, "Sample table: "+note)
	}
	v.SampleTableNote = note
	for _, r := range rows {
		sv := sampleRowView{Name: c.names[r], Flags: c.flags[r]}
		if pages != nil && pages[r] != "" {
			sv.Link = "samples/" + pages[r] + ".html"
		}
		if c.pops != nil {
			sv.Pop = c.pops[r]
		}
		for _, col := range v.TableCols {
			sv.Cells = append(sv.Cells, newCell(c.col(col)[r]))
		}
		v.SampleRows = append(v.SampleRows, sv)
	}
	return v, nil
}

// tableRows picks the samples listed in the report table: all of them in
// small cohorts, otherwise the highest F_ROH plus flagged and highlighted.
func tableRows(c *cohort) ([]int, string) {
	n := len(c.names)
	if n <= maxTableRows {
		rows := make([]int, n)
		for i := range rows {
			rows[i] = i
		}
		return rows, fmt.Sprintf("All %d samples, in file order.", n)
	}
	key := c.col("f_roh")
	if _, ok := c.cols["f_roh"]; !ok {
		key = c.col("f_hom")
	}
	pick := map[int]bool{}
	for _, i := range labelTop(key, maxTableRows/2) {
		pick[i] = true
	}
	for i := 0; i < n && len(pick) < maxTableRows; i++ {
		if c.isFlagged(i) || c.highlight[i] {
			pick[i] = true
		}
	}
	rows := make([]int, 0, len(pick))
	for i := range pick {
		rows = append(rows, i)
	}
	sort.Ints(rows)
	return rows, fmt.Sprintf("%d of %d samples listed: the %d with the highest F and then flagged or highlighted ones, in file order; samples.tsv has them all.", len(rows), n, maxTableRows/2)
}

// shellJoin quotes a command line so it can be pasted into a POSIX shell.
func shellJoin(args []string) string {
	q := make([]string, len(args))
	for i, a := range args {
		if a != "" && strings.Trim(a, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789-_./=:,+@%") == "" {
			q[i] = a
			continue
		}
		q[i] = "'" + strings.ReplaceAll(a, "'", `'\''`) + "'"
	}
	return strings.Join(q, " ")
}

// writeFileAtomic writes b to path through a temporary file in the same
// folder, so a reader never sees half a page.
func writeFileAtomic(path string, b []byte) error {
	tmp, err := os.CreateTemp(filepath.Dir(path), ".report-*")
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	if _, err := tmp.Write(b); err != nil {
		tmp.Close()
		os.Remove(tmp.Name())
		return fmt.Errorf("report: %s: %w", path, err)
	}
	if err := tmp.Close(); err != nil {
		os.Remove(tmp.Name())
		return fmt.Errorf("report: %s: %w", path, err)
	}
	if err := os.Chmod(tmp.Name(), 0o644); err != nil {
		os.Remove(tmp.Name())
		return fmt.Errorf("report: %w", err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		os.Remove(tmp.Name())
		return fmt.Errorf("report: %w", err)
	}
	return nil
}
