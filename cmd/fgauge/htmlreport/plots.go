package htmlreport

import (
	"fmt"
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Palette of the report (ours): deep ink, a slate teal, warm ochre, brick.
var (
	colInk    = color.RGBA{0x24, 0x2f, 0x3a, 0xff}
	colTeal   = color.RGBA{0x2a, 0x7d, 0x86, 0xff}
	colOchre  = color.RGBA{0xc8, 0x8a, 0x2e, 0xff}
	colBrick  = color.RGBA{0xa9, 0x43, 0x3a, 0xff}
	colFaint  = color.RGBA{0xb8, 0xc0, 0xc6, 0xff}
	colShadeA = color.RGBA{0xee, 0xec, 0xe6, 0xff}
	colShadeB = color.RGBA{0xf8, 0xf6, 0xf1, 0xff}
	colPoint  = color.NRGBA{0x2a, 0x7d, 0x86, 0xa0} // the teal, translucent (NRGBA: not alpha-premultiplied)
)

// bandColor gives the colour of length band i of n, light (short runs) to
// dark (long runs).
func bandColor(i, n int) color.Color {
	light := [3]float64{0xe3, 0xd3, 0xa8}
	dark := [3]float64{0x5a, 0x1f, 0x3c}
	t := 0.0
	if n > 1 {
		t = float64(i) / float64(n-1)
	}
	c := func(k int) uint8 { return uint8(light[k] + t*(dark[k]-light[k])) }
	return color.RGBA{c(0), c(1), c(2), 0xff}
}

// Font sizes in points on a plotW-wide canvas (shown about 1.9 times
// larger on a wide screen).
const (
	fontTitle = vg.Length(9)
	fontLabel = vg.Length(8)
	fontTick  = vg.Length(7)
	fontMark  = vg.Length(6.5)
)

// Plot sizes.
const (
	plotW = 17 * vg.Centimeter
	plotH = 9 * vg.Centimeter
)

// newPlot makes a plot styled the report's way.
func newPlot(title, x, y string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = x
	p.Y.Label.Text = y
	p.Title.TextStyle.Color = colInk
	p.Title.TextStyle.Font.Size = fontTitle
	// No background rectangle at all (the page shows through): the SVG
	// canvas writes a fully transparent colour as an invalid CSS colour
	// (its alpha-divided channels overflow), so nil, not Transparent.
	p.BackgroundColor = nil
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Color = colInk
		a.Label.TextStyle.Color = colInk
		a.Label.TextStyle.Font.Size = fontLabel
		a.Tick.Label.Color = colInk
		a.Tick.Label.Font.Size = fontTick
		a.Tick.Color = colInk
		a.Tick.Length = vg.Points(3)
	}
	p.Legend.TextStyle.Font.Size = fontTick
	p.Legend.ThumbnailWidth = vg.Points(10)
	return p
}

// limits for large cohorts.
const (
	maxScatterPoints = 2000 // points per scatter panel before subsampling
	maxLabels        = 5    // point labels per panel
	maxBars          = 300  // stacked bars before samples are grouped
	maxPaintRows     = 30   // samples in the cohort painting
	maxNamedTicks    = 40   // bars named on the axis
)

// subsample returns the row indices to draw out of n: all when n <= limit,
// otherwise every k-th row plus the rows in keep (deterministic).
func subsample(n, limit int, keep map[int]bool) []int {
	out := make([]int, 0, min(n, limit+len(keep)))
	if n <= limit {
		for i := 0; i < n; i++ {
			out = append(out, i)
		}
		return out
	}
	step := float64(n) / float64(limit)
	next := 0.0
	for i := 0; i < n; i++ {
		if keep[i] || float64(i) >= next {
			out = append(out, i)
			if float64(i) >= next {
				next += step
			}
		}
	}
	return out
}

// diagonal returns a dashed y = x line over [lo, hi].
func diagonal(lo, hi float64) *plotter.Line {
	l, _ := plotter.NewLine(plotter.XYs{{X: lo, Y: lo}, {X: hi, Y: hi}})
	l.Color = colFaint
	l.Width = vg.Points(1)
	l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	return l
}

// labelTop returns the indices of the k largest scores (NaN skipped),
// ties broken by index.
func labelTop(score []float64, k int) []int {
	idx := make([]int, 0, len(score))
	for i, s := range score {
		if !math.IsNaN(s) {
			idx = append(idx, i)
		}
	}
	sort.SliceStable(idx, func(a, b int) bool { return score[idx[a]] > score[idx[b]] })
	if len(idx) > k {
		idx = idx[:k]
	}
	return idx
}

// scatterPanel draws y against x for the given rows with a diagonal and
// labels on the rows in label; rows in hl are drawn as larger ochre
// diamonds on top. It returns the plot and the number of points drawn.
func scatterPanel(title, xl, yl string, xs, ys []float64, rows []int, names []string, label []int, hl map[int]bool, diag bool) (*plot.Plot, int) {
	p := newPlot(title, xl, yl)
	pts := make(plotter.XYs, 0, len(rows))
	var hpts plotter.XYs
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, r := range rows {
		x, y := xs[r], ys[r]
		if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
			continue
		}
		if hl[r] {
			hpts = append(hpts, plotter.XY{X: x, Y: y})
		} else {
			pts = append(pts, plotter.XY{X: x, Y: y})
		}
		lo, hi = math.Min(lo, math.Min(x, y)), math.Max(hi, math.Max(x, y))
	}
	n := len(pts) + len(hpts)
	if n == 0 {
		return p, 0
	}
	if diag {
		p.Add(diagonal(lo, hi))
	}
	if len(pts) > 0 {
		s, _ := plotter.NewScatter(pts)
		s.GlyphStyle = draw.GlyphStyle{Color: colPoint, Radius: vg.Points(2.2), Shape: draw.CircleGlyph{}}
		p.Add(s)
	}
	if len(hpts) > 0 {
		s, _ := plotter.NewScatter(hpts)
		s.GlyphStyle = draw.GlyphStyle{Color: colOchre, Radius: vg.Points(3.4), Shape: draw.PyramidGlyph{}}
		p.Add(s)
	}
	addLabels(p, xs, ys, label, names)
	return p, n
}

// addLabels puts sample names beside the given rows: to the right of
// points in the left two thirds of the x range, to the left of the others,
// so labels stay inside the plot.
func addLabels(p *plot.Plot, xs, ys []float64, rows []int, names []string) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := range xs {
		if !math.IsNaN(xs[i]) && !math.IsNaN(ys[i]) {
			lo, hi = math.Min(lo, xs[i]), math.Max(hi, xs[i])
		}
	}
	var right, left plotter.XYLabels
	for _, r := range rows {
		if math.IsNaN(xs[r]) || math.IsNaN(ys[r]) {
			continue
		}
		l := &right
		if hi > lo && xs[r] > lo+(hi-lo)*2/3 {
			l = &left
		}
		l.XYs = append(l.XYs, plotter.XY{X: xs[r], Y: ys[r]})
		l.Labels = append(l.Labels, clip(names[r], 16))
	}
	for k, l := range []plotter.XYLabels{right, left} {
		if len(l.XYs) == 0 {
			continue
		}
		lab, err := plotter.NewLabels(l)
		if err != nil {
			continue
		}
		for i := range lab.TextStyle {
			lab.TextStyle[i].Color = colBrick
			lab.TextStyle[i].Font.Size = fontMark
			lab.TextStyle[i].XAlign = draw.XLeft
			if k == 1 {
				lab.TextStyle[i].XAlign = draw.XRight
			}
		}
		lab.Offset = vg.Point{X: vg.Points(3), Y: vg.Points(2)}
		if k == 1 {
			lab.Offset.X = -vg.Points(3)
		}
		p.Add(lab)
	}
}

// clip shortens s to at most n runes, marking the cut with an ellipsis.
func clip(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}

// histFromCounts builds a histogram plotter from precomputed bins.
func histFromCounts(bins []plotter.HistogramBin, fill color.Color) *plotter.Histogram {
	w := 0.0
	if len(bins) > 0 {
		w = bins[0].Max - bins[0].Min
	}
	h := &plotter.Histogram{Bins: bins, Width: w, FillColor: fill, LineStyle: plotter.DefaultLineStyle}
	h.LineStyle.Color = color.White
	h.LineStyle.Width = vg.Points(0.5)
	return h
}

// tickNames is a Ticker putting fixed names at fixed values.
type tickNames struct {
	at    []float64
	names []string
}

func (t tickNames) Ticks(min, max float64) []plot.Tick {
	out := make([]plot.Tick, 0, len(t.at))
	for i, v := range t.at {
		if v >= min && v <= max {
			out = append(out, plot.Tick{Value: v, Label: t.names[i]})
		}
	}
	return out
}

// paintRow is one horizontal track of a chromosome painting.
type paintRow struct {
	label string
	bands []span // background bands (contigs), shaded alternately
	segs  []span // runs, coloured by length band
}

// span is an interval on the track's x axis (Mb) with a colour index.
type span struct {
	start, end float64
	class      int
}

// painting is a gonum plot.Plotter drawing tracks of runs: row i sits at
// y = i, each run a filled rectangle.
type painting struct {
	rows   []paintRow
	xmax   float64
	nClass int
}

func (pt *painting) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	rect := func(x0, x1, y0, y1 float64, col color.Color) {
		a, b := trX(x0), trX(x1)
		if b-a < vg.Points(0.6) {
			b = a + vg.Points(0.6) // keep very short runs visible
		}
		poly := []vg.Point{{X: a, Y: trY(y0)}, {X: b, Y: trY(y0)}, {X: b, Y: trY(y1)}, {X: a, Y: trY(y1)}}
		c.FillPolygon(col, c.ClipPolygonXY(poly))
	}
	for i, r := range pt.rows {
		y := float64(i)
		for k, b := range r.bands {
			col := colShadeA
			if k%2 == 1 {
				col = colShadeB
			}
			rect(b.start, b.end, y-0.42, y+0.42, col)
		}
		for _, s := range r.segs {
			rect(s.start, s.end, y-0.36, y+0.36, bandColor(s.class, pt.nClass))
		}
	}
}

func (pt *painting) DataRange() (xmin, xmax, ymin, ymax float64) {
	return 0, pt.xmax, -0.6, float64(len(pt.rows)) - 0.4
}

// legendBands adds a legend entry per length band.
func legendBands(p *plot.Plot, labels []string) {
	for i, l := range labels {
		col := bandColor(i, len(labels))
		p.Legend.Add(l, legendBox{col})
	}
	p.Legend.Top = true
	p.Legend.TextStyle.Color = colInk
	p.Legend.TextStyle.Font.Size = fontTick
}

// legendBox is a legend thumbnail filled with one colour.
type legendBox struct{ c color.Color }

func (b legendBox) Thumbnail(c *draw.Canvas) {
	pts := []vg.Point{{X: c.Min.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Max.Y}, {X: c.Min.X, Y: c.Max.Y}}
	c.FillPolygon(b.c, pts)
}

// paletteSeq is a sequential palette (ours) from pale sand to deep teal,
// for the F_ST heat map.
type paletteSeq struct{ n int }

func (p paletteSeq) Colors() []color.Color {
	lo := [3]float64{0xf7, 0xf1, 0xe1}
	hi := [3]float64{0x1d, 0x4e, 0x59}
	out := make([]color.Color, p.n)
	for i := range out {
		t := float64(i) / float64(p.n-1)
		c := func(k int) uint8 { return uint8(lo[k] + t*(hi[k]-lo[k])) }
		out[i] = color.RGBA{c(0), c(1), c(2), 0xff}
	}
	return out
}

// matrix is a square GridXYZ for the heat map: cell (c, r) is value
// between populations c and r.
type matrix struct {
	n int
	v []float64
}

func (m matrix) Dims() (c, r int)   { return m.n, m.n }
func (m matrix) Z(c, r int) float64 { return m.v[r*m.n+c] }
func (m matrix) X(c int) float64    { return float64(c) }
func (m matrix) Y(r int) float64    { return float64(r) }

// noData is the text shown in place of a plot whose input is absent.
func noData(what string) string { return fmt.Sprintf("No %s in this output folder.", what) }

// legendRoom widens a painting's x range so the legend sits beside the
// tracks, not on them.
const legendRoom = 1.2

// byDistance orders rows (all rows when nil) by their distance from the
// median of the whole cloud, each axis scaled by its median absolute
// deviation (a robust distance, common practice), furthest first; rows
// with a NaN coordinate are dropped.
func byDistance(xs, ys []float64, rows []int) []int {
	var vx, vy []float64
	for i := range xs {
		if !math.IsNaN(xs[i]) && !math.IsNaN(ys[i]) {
			vx, vy = append(vx, xs[i]), append(vy, ys[i])
		}
	}
	if len(vx) == 0 {
		return nil
	}
	mx, my := median(vx), median(vy)
	sx, sy := mad(vx, mx), mad(vy, my)
	if rows == nil {
		rows = make([]int, len(xs))
		for i := range rows {
			rows[i] = i
		}
	}
	score := make([]float64, len(rows))
	for j, i := range rows {
		if math.IsNaN(xs[i]) || math.IsNaN(ys[i]) {
			score[j] = math.NaN()
			continue
		}
		dx, dy := (xs[i]-mx)/sx, (ys[i]-my)/sy
		score[j] = dx*dx + dy*dy
	}
	top := labelTop(score, len(score))
	out := make([]int, len(top))
	for j, t := range top {
		out[j] = rows[t]
	}
	return out
}

// mad is the median absolute deviation around m, never zero.
func mad(v []float64, m float64) float64 {
	d := make([]float64, len(v))
	for i, x := range v {
		d[i] = math.Abs(x - m)
	}
	s := median(d)
	if s <= 0 || math.IsNaN(s) {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, x := range v {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
		s = (hi - lo) / 4
	}
	if s <= 0 {
		s = 1
	}
	return s
}

// declutter keeps, in order, up to k of the candidate rows whose labels
// would not overlap those kept before: points closer than 8% of the y
// range and 40% of the x range (a label's rough box) are skipped.
func declutter(xs, ys []float64, cand []int, k int) []int {
	lox, hix, loy, hiy := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for i := range xs {
		if !math.IsNaN(xs[i]) && !math.IsNaN(ys[i]) {
			lox, hix = math.Min(lox, xs[i]), math.Max(hix, xs[i])
			loy, hiy = math.Min(loy, ys[i]), math.Max(hiy, ys[i])
		}
	}
	rx, ry := math.Max(hix-lox, 1e-12), math.Max(hiy-loy, 1e-12)
	var out []int
	for _, i := range cand {
		if len(out) == k {
			break
		}
		if math.IsNaN(xs[i]) || math.IsNaN(ys[i]) {
			continue
		}
		ok := true
		for _, j := range out {
			// a label is a wide, low box to the right of its point
			dx, dy := math.Abs(xs[i]-xs[j])/rx, math.Abs(ys[i]-ys[j])/ry
			if dy < 0.08 && dx < 0.4 {
				ok = false
				break
			}
		}
		if ok {
			out = append(out, i)
		}
	}
	return out
}

// countTicks labels a count axis with whole numbers.
type countTicks struct{}

func (countTicks) Ticks(min, max float64) []plot.Tick {
	ticks := plot.DefaultTicks{}.Ticks(min, max)
	for i := range ticks {
		if ticks[i].Label != "" {
			ticks[i].Label = fmtInt(int64(math.Round(ticks[i].Value)))
		}
	}
	return ticks
}
