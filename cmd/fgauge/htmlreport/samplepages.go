package htmlreport

import (
	"bytes"
	"encoding/json"
	"fmt"
	"html/template"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"

	"golang.org/x/sync/errgroup"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
)

// maxLongestRuns is how many of a sample's longest runs its page lists.
const maxLongestRuns = 12

// cautionText is the short caution carried in each per-sample JSON file.
const cautionText = "Genomic F estimates depend on marker density, the allele-frequency reference and genotyping quality. They are not a diagnosis. Mating, keeping or culling decisions follow the breeding programme's rules and local regulations; any reading of human consanguinity or clinical consequence is for licensed genetic counselling or medical practice only."

type estView struct {
	Col, Label      string
	Value           cell
	Cohort, PopPctl string
}

type runView struct {
	Chrom                 string
	Start, End            int64
	LengthMb, LengthCM    string
	NSites, NHet, GenBack string
}

type flagView struct{ Flag, Text string }

type sampleView struct {
	Name, Pop, Stem string
	Basics          []namedCell
	Ests            []estView
	Classes         []namedCell
	Ages            []ageView // autozygosity by age band; nil without age classes
	Pedigree        *pedigreeView
	Flags           []flagView
	Runs            []runView
	NRuns           int
	Painting        *figure
	Position        *figure
	CohortN, PopN   int
	Info            *runInfo
}

type namedCell struct {
	Col, Label string
	Value      cell
}

type pedigreeView struct{ Pedigree, Genomic, Diff cell }

type indexEntry struct {
	Name, Stem, Pop, FROH string
	Flags                 []string
}

// basicCols are shown on each page in this order when present.
var basicCols = []struct{ col, label string }{
	{"sites_called", "sites called"}, {"call_rate", "call rate"}, {"het_rate", "heterozygous share of calls"},
	{"n_hom_ref", "homozygous reference"}, {"n_het", "heterozygous"}, {"n_hom_alt", "homozygous alternative"},
	{"n_missing", "missing"}, {"n_haploid", "haploid calls"},
	{"polymorphic_sites_called", "polymorphic sites called (behind the F estimates)"},
	{"homozygous_share", "homozygous share at those sites"},
	{"homozygous_share_under_hwe", "homozygous share expected under Hardy-Weinberg"},
	{"n_runs", "runs of homozygosity"}, {"roh_total_bp", "total length of runs (bp)"},
}

// writeSamplePages writes samples/<stem>.html and .json plus
// samples/index.html; it returns the stem of each sample written.
func writeSamplePages(outDir string, c *cohort, tpl *template.Template, opt Options) (map[int]string, error) {
	dir := filepath.Join(outDir, "samples")
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	st := stems(c.raw)
	which := make([]int, 0, len(c.names))
	for i := range c.names {
		if len(c.highlight) == 0 || c.highlight[i] {
			which = append(which, i)
		}
	}
	// rankers for percentiles: cohort-wide and per population
	cohortRank := map[string]ranker{}
	popRank := map[string]map[string]ranker{}
	popSize := map[string]int{}
	for _, e := range c.ests {
		cohortRank[e] = newRanker(c.col(e))
		if c.pops != nil {
			byPop := map[string][]float64{}
			for i, p := range c.pops {
				byPop[p] = append(byPop[p], c.col(e)[i])
			}
			popRank[e] = map[string]ranker{}
			for p, xs := range byPop {
				popRank[e][p] = newRanker(xs)
			}
		}
	}
	if c.pops != nil {
		for _, p := range c.pops {
			popSize[p]++
		}
	}
	lay := c.layout()
	dist := c.distribution()
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	var eg errgroup.Group
	eg.SetLimit(workers)
	index := make([]indexEntry, len(which))
	for k, i := range which {
		eg.Go(func() error {
			v, js := c.sampleView(i, st[i], lay, cohortRank, popRank, popSize)
			if dist != nil {
				f := dist.place(c, i)
				v.Position = &f
			}
			var buf bytes.Buffer
			if err := tpl.ExecuteTemplate(&buf, "sample", v); err != nil {
				return fmt.Errorf("report: sample page %q: %w", c.names[i], err)
			}
			path := filepath.Join(dir, st[i]+".html")
			if filepath.Dir(path) != filepath.Clean(dir) {
				return fmt.Errorf("report: sample %q: file name escapes the samples folder", c.names[i])
			}
			if err := writeFileAtomic(path, buf.Bytes()); err != nil {
				return err
			}
			jb, err := json.MarshalIndent(js, "", "  ")
			if err != nil {
				return fmt.Errorf("report: sample %q: %w", c.names[i], err)
			}
			if err := writeFileAtomic(filepath.Join(dir, st[i]+".json"), append(jb, '\n')); err != nil {
				return err
			}
			e := indexEntry{Name: c.names[i], Stem: st[i], FROH: fmtG(c.col("f_roh")[i]), Flags: c.flags[i]}
			if c.pops != nil {
				e.Pop = c.pops[i]
			}
			index[k] = e
			return nil
		})
	}
	if err := eg.Wait(); err != nil {
		return nil, err
	}
	pages := make(map[int]string, len(which))
	for _, i := range which {
		pages[i] = st[i]
	}
	var buf bytes.Buffer
	if err := tpl.ExecuteTemplate(&buf, "index", struct {
		Entries []indexEntry
		HasPop  bool
		Total   int
	}{index, c.pops != nil, len(c.names)}); err != nil {
		return nil, fmt.Errorf("report: samples index: %w", err)
	}
	if err := writeFileAtomic(filepath.Join(dir, "index.html"), buf.Bytes()); err != nil {
		return nil, err
	}
	if err := replaceManifest(dir, which, st); err != nil {
		return nil, err
	}
	return pages, nil
}

// manifestName lists the pages the last run wrote, so the next run can
// remove those it no longer writes (a sample dropped from the cohort or
// from --highlight) and the folder always matches its index.
const manifestName = ".pages"

// replaceManifest removes the pages listed by the previous run that this
// run did not write, then records this run's pages. Only plain file names
// ending in .html or .json are ever removed, and only inside dir.
func replaceManifest(dir string, which []int, st []string) error {
	now := map[string]bool{}
	var list []string
	for _, i := range which {
		for _, ext := range []string{".html", ".json"} {
			now[st[i]+ext] = true
			list = append(list, st[i]+ext)
		}
	}
	old, err := os.ReadFile(filepath.Join(dir, manifestName))
	if err == nil {
		for _, name := range strings.Split(string(old), "\n") {
			if name == "" || now[name] || name != filepath.Base(name) || strings.HasPrefix(name, ".") ||
				!(strings.HasSuffix(name, ".html") || strings.HasSuffix(name, ".json")) {
				continue
			}
			if err := os.Remove(filepath.Join(dir, name)); err != nil && !os.IsNotExist(err) {
				return fmt.Errorf("report: removing an old page: %w", err)
			}
		}
	}
	return writeFileAtomic(filepath.Join(dir, manifestName), []byte(strings.Join(list, "\n")+"\n"))
}

// jsonNum is a number that marshals NaN as null.
type jsonNum float64

func (n jsonNum) MarshalJSON() ([]byte, error) {
	if math.IsNaN(float64(n)) || math.IsInf(float64(n), 0) {
		return []byte("null"), nil
	}
	return []byte(fmtExact(float64(n))), nil
}

type sampleJSON struct {
	Sample         string             `json:"sample"`
	Population     *string            `json:"population,omitempty"`
	Page           string             `json:"page"`
	Values         map[string]jsonNum `json:"values"`
	PctCohort      map[string]jsonNum `json:"percentile_in_cohort"`
	PctPopulation  map[string]jsonNum `json:"percentile_in_population,omitempty"`
	Flags          []flagJSON         `json:"flags"`
	LongestRuns    []runJSON          `json:"longest_runs"`
	Cautions       string             `json:"cautions"`
	CohortSize     int                `json:"cohort_size"`
	PopulationSize int                `json:"population_size,omitempty"`
}

type flagJSON struct {
	Flag    string `json:"flag"`
	Meaning string `json:"meaning"`
}

type runJSON struct {
	Chrom           string  `json:"chrom"`
	Start           int64   `json:"start"`
	End             int64   `json:"end"`
	LengthBP        jsonNum `json:"length_bp"`
	LengthCM        jsonNum `json:"length_cm"`
	NSites          jsonNum `json:"n_sites"`
	GenerationsBack jsonNum `json:"generations_back"`
}

func (c *cohort) sampleView(i int, stem string, g genomeLayout, cr map[string]ranker, pr map[string]map[string]ranker, popSize map[string]int) (*sampleView, *sampleJSON) {
	t := c.d.samples
	v := &sampleView{Name: c.names[i], Stem: stem, CohortN: len(c.names), Info: &c.d.info}
	js := &sampleJSON{Sample: c.raw[i], Page: stem + ".html", Values: map[string]jsonNum{}, PctCohort: map[string]jsonNum{},
		Cautions: cautionText, CohortSize: len(c.names), Flags: []flagJSON{}, LongestRuns: []runJSON{}}
	if c.pops != nil {
		v.Pop = c.pops[i]
		v.PopN = popSize[v.Pop]
		p := v.Pop
		js.Population = &p
		js.PopulationSize = v.PopN
		js.PctPopulation = map[string]jsonNum{}
	}
	for _, h := range t.header {
		if h == "sample" || h == "population" || h == "flags" {
			continue
		}
		js.Values[h] = jsonNum(c.col(h)[i])
	}
	for _, b := range basicCols {
		if t.has(b.col) {
			v.Basics = append(v.Basics, namedCell{b.col, b.label, newCell(c.col(b.col)[i])})
		}
	}
	for _, e := range c.ests {
		x := c.col(e)[i]
		ev := estView{Col: e, Label: estimatorLabel(e), Value: newCell(x)}
		pc := cr[e].percentile(x)
		ev.Cohort = fmtPctl(pc)
		js.PctCohort[e] = jsonNum(pc)
		if c.pops != nil {
			pp := pr[e][v.Pop].percentile(x)
			ev.PopPctl = fmtPctl(pp)
			js.PctPopulation[e] = jsonNum(pp)
		}
		v.Ests = append(v.Ests, ev)
	}
	for _, cl := range c.classes {
		v.Classes = append(v.Classes, namedCell{cl.Col, "runs of at least " + fmtMb(cl.MinMb), newCell(c.col(cl.Col)[i])})
	}
	v.Ages = c.sampleAges(i)
	if _, ok := c.cols["f_pedigree"]; ok {
		ped := c.col("f_pedigree")[i]
		gen := c.col("f_roh")[i]
		if _, ok := c.cols["f_roh"]; !ok {
			gen = c.col("f_hom")[i]
		}
		v.Pedigree = &pedigreeView{newCell(ped), newCell(gen), newCell(gen - ped)}
	}
	for _, f := range c.flags[i] {
		txt, ok := flagText[f]
		if !ok {
			txt = "A flag this version of the report does not know; see `fgauge columns`."
		}
		v.Flags = append(v.Flags, flagView{f, txt})
		js.Flags = append(js.Flags, flagJSON{f, txt})
	}
	runs := append([]rohRun(nil), c.d.runs[c.raw[i]]...)
	v.NRuns = len(runs)
	sort.SliceStable(runs, func(a, b int) bool { return runs[a].lengthBP > runs[b].lengthBP })
	for k, r := range runs {
		if k == maxLongestRuns {
			break
		}
		v.Runs = append(v.Runs, runView{Chrom: visible(r.chrom), Start: r.start, End: r.end, LengthMb: fmtG(r.lengthBP / 1e6),
			LengthCM: fmtG(r.lengthCM), NSites: fmtG(r.nSites), NHet: fmtG(r.nHet), GenBack: fmtG(r.genBack)})
		js.LongestRuns = append(js.LongestRuns, runJSON{r.chrom, r.start, r.end, jsonNum(r.lengthBP), jsonNum(r.lengthCM), jsonNum(r.nSites), jsonNum(r.genBack)})
	}
	if c.d.runsPresent {
		f := c.samplePainting(c.raw[i], g)
		v.Painting = &f
	}
	return v, js
}

func fmtPctl(p float64) string {
	if math.IsNaN(p) {
		return "NA"
	}
	return fmt.Sprintf("%.0f", p)
}

// samplePainting draws one sample's chromosomes, one row each, with its
// runs.
func (c *cohort) samplePainting(name string, g genomeLayout) figure {
	f := figure{ID: "fig_sample_painting", Kind: "painting", Title: "Runs along this sample's chromosomes"}
	if g.total == 0 {
		f.Empty = "No chromosome extents known."
		return f
	}
	pt := &painting{nClass: len(c.classes) + 1}
	row := map[string]int{}
	var ylab []string
	for j := len(g.names) - 1; j >= 0; j-- {
		k := g.names[j]
		row[k] = len(pt.rows)
		pt.rows = append(pt.rows, paintRow{label: clip(k, 10), bands: []span{{start: 0, end: g.length[k]}}})
		ylab = append(ylab, clip(k, 10))
		pt.xmax = math.Max(pt.xmax, g.length[k])
	}
	for _, r := range c.d.runs[name] {
		f.Total++
		j, ok := row[visible(r.chrom)]
		if !ok {
			continue
		}
		pt.rows[j].segs = append(pt.rows[j].segs, span{start: float64(r.start) / 1e6, end: float64(r.end) / 1e6, class: c.classOf(r.lengthBP)})
		f.Points++
	}
	pt.xmax *= legendRoom
	p := newPlot("", "position (Mb)", "")
	p.Add(pt)
	yat := make([]float64, len(ylab))
	for i := range yat {
		yat[i] = float64(i)
	}
	p.Y.Tick.Marker = tickNames{at: yat, names: ylab}
	p.Y.Tick.Length = 0
	p.Y.LineStyle.Width = 0
	legendBands(p, bandLabels(c.classes))
	f.Caption = fmt.Sprintf("%d runs; each block is one run, coloured by length.", f.Total)
	if f.Points < f.Total {
		f.Note = fmt.Sprintf("%d runs on chromosomes outside the painted set are not drawn.", f.Total-f.Points)
	}
	h := vg.Length(len(pt.rows))*0.42*vg.Centimeter + 3*vg.Centimeter
	svg, err := renderPlot(p, plotW, h)
	if err != nil {
		f.Empty = "The painting could not be drawn: " + err.Error()
		return f
	}
	f.SVG = svg
	return f
}

// cohortDist is the cohort's histogram of one estimator, computed once and
// drawn on every sample page with that sample marked.
type cohortDist struct {
	col  string
	bins []plotter.HistogramBin
	top  float64
}

// distribution bins F_ROH (or F_hom without runs) over the cohort; nil
// when no sample has a value.
func (c *cohort) distribution() *cohortDist {
	col := "f_roh"
	if _, ok := c.cols[col]; !ok {
		col = "f_hom"
	}
	xs := c.col(col)
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, x := range xs {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
	}
	if math.IsInf(lo, 1) {
		return nil
	}
	if hi-lo < 1e-9 {
		lo, hi = lo-0.05, hi+0.05
	}
	const nbins = 30
	w := (hi - lo) / nbins
	d := &cohortDist{col: col, bins: make([]plotter.HistogramBin, nbins)}
	for i := range d.bins {
		d.bins[i] = plotter.HistogramBin{Min: lo + float64(i)*w, Max: lo + float64(i+1)*w}
	}
	for _, x := range xs {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			k := min(nbins-1, max(0, int((x-lo)/w)))
			d.bins[k].Weight++
			d.top = math.Max(d.top, d.bins[k].Weight)
		}
	}
	return d
}

// place draws the cohort histogram with sample i marked by a vertical line.
func (d *cohortDist) place(c *cohort, i int) figure {
	f := figure{ID: "fig_sample_position", Kind: "histogram", Title: "Where this sample sits in the cohort (" + d.col + ")"}
	x := c.col(d.col)[i]
	p := newPlot("", d.col, "samples")
	p.Y.Tick.Marker = countTicks{}
	p.Add(histFromCounts(d.bins, colFaint))
	f.Points, f.Total = len(d.bins), len(c.names)
	if !math.IsNaN(x) {
		l, _ := plotter.NewLine(plotter.XYs{{X: x, Y: 0}, {X: x, Y: d.top * 1.05}})
		l.Color = colBrick
		l.Width = vg.Points(2)
		p.Add(l)
		f.Caption = fmt.Sprintf("Grey: the %d samples of the cohort; red line: this sample (%s = %s).", len(c.names), d.col, fmtG(x))
	} else {
		f.Caption = fmt.Sprintf("Grey: the %d samples of the cohort; this sample has no %s value.", len(c.names), d.col)
	}
	svg, err := renderPlot(p, plotW, plotH*0.5)
	if err != nil {
		f.Empty = "The plot could not be drawn: " + err.Error()
		return f
	}
	f.SVG = svg
	return f
}
