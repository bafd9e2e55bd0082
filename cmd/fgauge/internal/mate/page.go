package mate

import (
	"bytes"
	_ "embed"
	"fmt"
	"html/template"
	"image/color"
	"math"
	"regexp"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

	"fgauge/cmd/fgauge/internal/outdir"
)

//go:embed assets/mate.tmpl
var pageTemplate string

// Heat-map size caps: larger sets are subsampled evenly and the page says so.
const (
	maxMapSires = 40
	maxMapDams  = 160
	histBins    = 40
	maxSireRows = 60
)

type tile struct {
	Key, Show, Exact, Note string
}

type sireRow struct {
	Sire       string
	Dams       int
	Limit      string
	MeanF, Max string
}

type pageFigure struct {
	ID, Title, Caption, Note string
	Points, Total            int
	SVG                      template.HTML
}

type pageData struct {
	Title      string
	Tiles      []tile
	Figures    []pageFigure
	Sires      []sireRow
	SiresNote  string
	Info       *RunInfo
	Cautions   []string
	PlanOnText string
}

// writePage writes mate.html: headline numbers, the pair heat map with the
// chosen pairs marked, the distribution of progeny F (all pairs and the
// plan's), the use of each sire and the cautions. Self-contained: inline
// SVG drawn with gonum/plot, html/template escaping, and a
// Content-Security-Policy that forbids scripts and outside loads.
func writePage(sd *outdir.Dir, res *Result, ri *RunInfo) error {
	pd := pageData{Title: "Mating plan", Info: ri, Cautions: cautions, PlanOnText: planOnText(ri)}
	add := func(key string, x float64, note string) {
		pd.Tiles = append(pd.Tiles, tile{key, fmtG(x), fmtExact(x), note})
	}
	add("mean progeny F of the plan", ri.Plan.MeanProgenyF, "")
	add("highest progeny F in the plan", deref(ri.Plan.MaxProgenyF), "")
	add("random allocation (expected mean)", ri.Random.MeanProgenyF, "")
	if pp := ri.PedigreePlan; pp != nil && pp.MeanCoancestryGenomic != nil {
		add("pedigree-only plan, genomic mean", *pp.MeanCoancestryGenomic, "the plan chosen on pedigree coancestry, measured genomically")
		add("this plan, genomic mean", ri.Plan.MeanCoancestryGenomic, "")
	}
	if m := ri.Plan.MeanCoancestrySegments; m != nil {
		add("this plan, shared-segment mean", *m, "coancestry_segments: probability scale, recent ancestry only")
	}
	hm, err := heatMap(res)
	if err != nil {
		return err
	}
	hist, err := histogram(res)
	if err != nil {
		return err
	}
	pd.Figures = []pageFigure{hm, hist}
	pd.Sires, pd.SiresNote = sireTable(res, ri)

	t, err := template.New("page").Funcs(template.FuncMap{"g": fmtG}).Parse(pageTemplate)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := t.Execute(&buf, &pd); err != nil {
		return err
	}
	f, err := sd.Create("mate.html")
	if err != nil {
		return err
	}
	if _, err := f.Write(buf.Bytes()); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func planOnText(ri *RunInfo) string {
	switch ri.PlanOn {
	case PlanPedigree:
		return "pedigree coancestry"
	case PlanSegments:
		return "shared-segment coancestry"
	case PlanBlend:
		return fmt.Sprintf("a blend: %g x genomic + %g x pedigree coancestry", deref(ri.BlendWeight), 1-deref(ri.BlendWeight))
	}
	return "genomic coancestry"
}

// evenly picks k of n indices spread evenly (all when n <= k).
func evenly(n, k int) []int {
	if n <= k {
		out := make([]int, n)
		for i := range out {
			out[i] = i
		}
		return out
	}
	out := make([]int, k)
	for i := range out {
		out[i] = int(float64(i) * float64(n) / float64(k))
	}
	return out
}

// grid is the heat map's GridXYZ: column c is a dam, row r a sire.
type grid struct {
	cols, rows int
	v          []float64
}

func (g grid) Dims() (c, r int)   { return g.cols, g.rows }
func (g grid) Z(c, r int) float64 { return g.v[r*g.cols+c] }
func (g grid) X(c int) float64    { return float64(c) }
func (g grid) Y(r int) float64    { return float64(r) }

// palette runs from pale sand (low progeny F) to deep brick (high).
type palette struct{ n int }

func (p palette) Colors() []color.Color {
	lo := [3]float64{0xf4, 0xf1, 0xe4}
	mid := [3]float64{0xd9, 0xa4, 0x4c}
	hi := [3]float64{0x7a, 0x22, 0x1c}
	out := make([]color.Color, p.n)
	for i := range out {
		t := float64(i) / float64(p.n-1)
		a, b, u := lo, mid, 2*t
		if t > 0.5 {
			a, b, u = mid, hi, 2*t-1
		}
		c := func(k int) uint8 { return uint8(a[k] + u*(b[k]-a[k])) }
		out[i] = color.RGBA{c(0), c(1), c(2), 0xff}
	}
	return out
}

func heatMap(res *Result) (pageFigure, error) {
	nS, nD := len(res.Sires), len(res.Dams)
	rows := evenly(nS, maxMapSires)
	rowOf := map[int]int{}
	for r, s := range rows {
		rowOf[s] = r
	}
	// Dams of the shown sires, ordered by their sire's row, so each chosen
	// pair sits on a staircase.
	var cand []int
	for d, s := range res.Allocation.SireOf {
		if _, ok := rowOf[s]; ok {
			cand = append(cand, d)
		}
	}
	sort.SliceStable(cand, func(i, j int) bool {
		return rowOf[res.Allocation.SireOf[cand[i]]] < rowOf[res.Allocation.SireOf[cand[j]]]
	})
	pick := evenly(len(cand), maxMapDams)
	cols := make([]int, len(pick))
	for i, k := range pick {
		cols[i] = cand[k]
	}
	g := grid{cols: len(cols), rows: len(rows), v: make([]float64, len(cols)*len(rows))}
	lo, hi := math.Inf(1), math.Inf(-1)
	var marks plotter.XYs
	for r, s := range rows {
		for c, d := range cols {
			v := res.ProgenyF.At(s, d)
			g.v[r*g.cols+c] = v
			if !math.IsNaN(v) {
				lo, hi = min(lo, v), max(hi, v)
			}
			if res.Allocation.SireOf[d] == s {
				marks = append(marks, plotter.XY{X: float64(c), Y: float64(r)})
			}
		}
	}
	fig := pageFigure{ID: "pair_map", Title: "Progeny F of candidate pairs, chosen pairs marked",
		Points: len(rows) * len(cols), Total: nS * nD,
		Caption: "Each cell is a sire (row) and dam (column) pair, coloured from pale (low progeny F) to dark (high); rings mark the pairs the plan uses. Dams are ordered by the sire they are given."}
	if len(cols) == 0 {
		fig.Caption = "No dam of the shown sires."
		return fig, nil
	}
	if nS > len(rows) || len(cand) > len(cols) {
		fig.Note = fmt.Sprintf("%d of %d sires shown (evenly spaced in list order) and %d of the %d dams given to them (evenly spaced); %d of %d pairs drawn.",
			len(rows), nS, len(cols), len(cand), fig.Points, fig.Total)
	}
	if !(hi > lo) {
		hi = lo + 1e-6
	}
	p := plot.New()
	p.X.Label.Text = "dam"
	p.Y.Label.Text = "sire"
	h := plotter.NewHeatMap(g, palette{n: 48})
	h.Min, h.Max = lo, hi
	p.Add(h)
	sc, err := plotter.NewScatter(marks)
	if err != nil {
		return fig, err
	}
	sc.GlyphStyle.Shape = draw.CircleGlyph{}
	sc.GlyphStyle.Color = color.RGBA{0x1d, 0x4e, 0x59, 0xff}
	sc.GlyphStyle.Radius = vg.Points(2.2)
	p.Add(sc)
	p.Y.Tick.Marker = names(rows, res.Sires, 20)
	p.X.Tick.Marker = plot.TickerFunc(func(min, max float64) []plot.Tick { return nil })
	p.Title.Text = fmt.Sprintf("progeny F from %s to %s", fmtG(lo), fmtG(hi))
	fig.SVG, err = render(p, 26*vg.Centimeter, vg.Length(8+0.35*float64(len(rows)))*vg.Centimeter)
	return fig, err
}

// names labels up to k of the rows with their ids.
func names(rows []int, ids []string, k int) plot.Ticker {
	return plot.TickerFunc(func(min, max float64) []plot.Tick {
		var t []plot.Tick
		step := max1(len(rows) / k)
		for r := 0; r < len(rows); r += step {
			id := ids[rows[r]]
			if len(id) > 16 {
				id = id[:15] + "…"
			}
			t = append(t, plot.Tick{Value: float64(r), Label: id})
		}
		return t
	})
}

func max1(n int) int {
	if n < 1 {
		return 1
	}
	return n
}

func histogram(res *Result) (pageFigure, error) {
	all := res.ProgenyF.V
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range all {
		if !math.IsNaN(v) {
			lo, hi = min(lo, v), max(hi, v)
		}
	}
	fig := pageFigure{ID: "progeny_f", Title: "Distribution of progeny F",
		Caption: "Share of pairs in each bin: every candidate pair (outline) and the pairs of the plan (filled).",
		Points:  histBins, Total: histBins}
	if !(hi > lo) {
		hi = lo + 1e-6
	}
	w := (hi - lo) / histBins
	bin := func(v float64) int { return min(histBins-1, max(0, int((v-lo)/w))) }
	var cAll, cPlan [histBins]float64
	n := 0
	for _, v := range all {
		if !math.IsNaN(v) {
			cAll[bin(v)]++
			n++
		}
	}
	for d, s := range res.Allocation.SireOf {
		cPlan[bin(res.ProgenyF.At(s, d))]++
	}
	mk := func(c *[histBins]float64, total float64, fill color.Color) *plotter.Histogram {
		bins := make([]plotter.HistogramBin, histBins)
		for i := range bins {
			bins[i] = plotter.HistogramBin{Min: lo + float64(i)*w, Max: lo + float64(i+1)*w, Weight: c[i] / total}
		}
		h := &plotter.Histogram{Bins: bins, Width: w, FillColor: fill, LineStyle: plotter.DefaultLineStyle}
		return h
	}
	p := plot.New()
	p.X.Label.Text = "progeny F"
	p.Y.Label.Text = "share of pairs"
	// NRGBA: the teal at 69% opacity (color.RGBA is alpha-premultiplied,
	// and 0x2a7d86 under alpha 0xb0 would be drawn as a paler #3CB5C2).
	hp := mk(&cPlan, float64(len(res.Allocation.SireOf)), color.NRGBA{0x2a, 0x7d, 0x86, 0xb0})
	ha := mk(&cAll, float64(n), nil)
	ha.LineStyle.Color = color.RGBA{0xa9, 0x43, 0x3a, 0xff}
	p.Add(hp, ha)
	p.Legend.Add("plan", hp)
	p.Legend.Add("all pairs", ha)
	p.Legend.Top = true
	var err error
	fig.SVG, err = render(p, 20*vg.Centimeter, 9*vg.Centimeter)
	return fig, err
}

func sireTable(res *Result, ri *RunInfo) ([]sireRow, string) {
	nS := len(res.Sires)
	cnt := make([]int, nS)
	sum := make([]float64, nS)
	mx := make([]float64, nS)
	for s := range mx {
		mx[s] = math.NaN()
	}
	for d, s := range res.Allocation.SireOf {
		v := res.ProgenyF.At(s, d)
		cnt[s]++
		sum[s] += v
		if cnt[s] == 1 || v > mx[s] {
			mx[s] = v
		}
	}
	var rows []sireRow
	for _, s := range evenly(nS, maxSireRows) {
		r := sireRow{Sire: res.Sires[s], Dams: cnt[s], Limit: "none", MeanF: "–", Max: "–"}
		if ri.SireLimit > 0 {
			r.Limit = strconv.Itoa(ri.SireLimit)
		}
		if cnt[s] > 0 {
			r.MeanF, r.Max = fmtG(sum[s]/float64(cnt[s])), fmtG(mx[s])
		}
		rows = append(rows, r)
	}
	note := ""
	if nS > maxSireRows {
		note = fmt.Sprintf("%d of %d sires listed (evenly spaced in list order); allocation.tsv has every dam.", maxSireRows, nS)
	}
	if ri.SireLimitsFile != "" {
		note += " Per-sire limits from " + ri.SireLimitsFile + " are not repeated here."
	}
	return rows, note
}

var (
	reXmlns = regexp.MustCompile(`\s+xmlns(:\w+)?="[^"]*"`)
	reSize  = regexp.MustCompile(`\A(<svg)\s+width="[^"]*"\s+height="[^"]*"`)
)

// render draws p to an inline SVG element (no prolog, namespaces or fixed
// size), as the scan report does.
func render(p *plot.Plot, w, h vg.Length) (template.HTML, error) {
	c := vgsvg.New(w, h)
	p.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return "", err
	}
	b := buf.Bytes()
	i := bytes.Index(b, []byte("<svg"))
	if i < 0 {
		return "", fmt.Errorf("mate: plot did not render to SVG")
	}
	b = b[i:]
	j := bytes.IndexByte(b, '>')
	tag := reXmlns.ReplaceAll(b[:j], nil)
	tag = reSize.ReplaceAll(tag, []byte(`$1 class="plot" role="img"`))
	out := append(append([]byte{}, tag...), b[j:]...)
	for _, bad := range []string{"href=", "url(", "<script", "<foreignObject", "<image", "<a ", "<!--", "<?"} {
		if bytes.Contains(out, []byte(bad)) {
			return "", fmt.Errorf("mate: plot SVG holds %q", bad)
		}
	}
	return template.HTML(out), nil // safe: vgsvg escapes text (ids in tick labels); checked above
}

func fmtG(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "NA"
	}
	return strconv.FormatFloat(x, 'g', 4, 64)
}

func fmtExact(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "NA"
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}
