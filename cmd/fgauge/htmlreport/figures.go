package htmlreport

import (
	"fmt"
	"image/color"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// figEstimators: f_roh against each other estimator, one panel each.
func (c *cohort) figEstimators() (figure, error) {
	f := figure{ID: "fig_estimators", Kind: "scatter", Title: "Genomic F: runs of homozygosity against the other estimators"}
	yCol := "f_roh"
	if _, ok := c.cols[yCol]; !ok {
		yCol = "f_hom"
	}
	var others []string
	for _, e := range c.ests {
		if e != yCol {
			others = append(others, e)
		}
	}
	if _, ok := c.cols[yCol]; !ok || len(others) == 0 {
		f.Empty = noData("pair of F estimators")
		return f, nil
	}
	ys := c.col(yCol)
	n := len(c.names)
	var panels []*plot.Plot
	for _, e := range others {
		xs := c.col(e)
		// highlighted samples are labelled first, then the outliers
		var hl []int
		for i := range c.names {
			if c.highlight[i] {
				hl = append(hl, i)
			}
		}
		lab := declutter(xs, ys, append(hl, byDistance(xs, ys, nil)...), maxLabels)
		keep := map[int]bool{}
		for _, i := range lab {
			keep[i] = true
		}
		for i := range c.highlight {
			keep[i] = true
		}
		rows := subsample(n, maxScatterPoints, keep)
		p, k := scatterPanel("", e, yCol, xs, ys, rows, c.names, lab, c.highlight, true)
		f.Points += k
		for i := range xs {
			if !math.IsNaN(xs[i]) && !math.IsNaN(ys[i]) {
				f.Total++
			}
		}
		panels = append(panels, p)
	}
	cols := min(3, len(panels))
	rows := (len(panels) + cols - 1) / cols
	grid := make([][]*plot.Plot, rows)
	for i, p := range panels {
		grid[i/cols] = append(grid[i/cols], p)
	}
	for len(grid[rows-1]) < cols {
		grid[rows-1] = append(grid[rows-1], nil)
	}
	var err error
	f.SVG, err = renderGrid(grid, plotW, vg.Length(rows)*6.5*vg.Centimeter)
	f.Caption = fmt.Sprintf("Each point is one sample; the dashed line is where both estimators agree. Labelled: up to %d samples per panel that lie furthest from the bulk of the cohort (robust distance), skipping labels that would overlap.", maxLabels)
	if len(c.highlight) > 0 {
		f.Caption += " Samples named with --highlight are ochre triangles and are labelled first."
	}
	if f.Points < f.Total {
		f.Note = fmt.Sprintf("%d of %d sample-estimator pairs drawn: one sample in %d, evenly through the file, plus the labelled and highlighted ones.", f.Points, f.Total, max(1, n/maxScatterPoints))
	}
	return f, err
}

// figClasses: stacked F_ROH by length band, one bar per sample, sorted.
func (c *cohort) figClasses() (figure, error) {
	f := figure{ID: "fig_roh_classes", Kind: "bars", Title: "F_ROH by run length, samples sorted"}
	froh, ok := c.cols["f_roh"]
	if !ok {
		f.Empty = noData("f_roh column")
		return f, nil
	}
	var order []int
	for i, v := range froh {
		if !math.IsNaN(v) {
			order = append(order, i)
		}
	}
	if len(order) == 0 {
		f.Empty = "No sample has a defined F_ROH."
		return f, nil
	}
	sort.SliceStable(order, func(a, b int) bool { return froh[order[a]] < froh[order[b]] })
	labels := bandLabels(c.classes)
	cum := make([][]float64, len(c.classes))
	for k, cl := range c.classes {
		cum[k] = c.col(cl.Col)
	}
	per := func(i int) []float64 {
		v := make([]float64, len(c.classes))
		for k := range c.classes {
			v[k] = cum[k][i]
		}
		return bands(froh[i], v)
	}
	group := 1
	if len(order) > maxBars {
		group = (len(order) + maxBars - 1) / maxBars
	}
	nb := (len(order) + group - 1) / group
	vals := make([]plotter.Values, len(labels))
	for k := range vals {
		vals[k] = make(plotter.Values, nb)
	}
	var names []string
	for b := 0; b < nb; b++ {
		lo, hi := b*group, min(len(order), (b+1)*group)
		for _, i := range order[lo:hi] {
			for k, v := range per(i) {
				vals[k][b] += v / float64(hi-lo)
			}
		}
		names = append(names, clip(c.names[order[lo]], 18))
	}
	p := newPlot("", "samples, lowest to highest F_ROH", "F_ROH")
	if err := stackSampleBars(p, vals, names, group, func(k int) color.Color { return bandColor(k, len(labels)) }); err != nil {
		return f, err
	}
	legendBands(p, labels)
	f.Points, f.Total = nb, len(order)
	if group > 1 {
		f.Note = fmt.Sprintf("%d samples shown as %d bars: each bar is the mean of %d consecutive samples in F_ROH order.", len(order), nb, group)
	}
	f.Caption = "Height is the sample's F_ROH; colours split it by run length (short runs: old shared ancestry; long runs: recent common ancestors)."
	var err error
	f.SVG, err = renderPlot(p, plotW, plotH)
	return f, err
}

// figRunLengths: histogram of run lengths.
func (c *cohort) figRunLengths() (figure, error) {
	f := figure{ID: "fig_run_lengths", Kind: "histogram", Title: "Lengths of all runs of homozygosity"}
	if len(c.d.runLenMb) == 0 {
		f.Empty = noData("runs (runs.tsv)")
		return f, nil
	}
	// bins of equal width in log10(length), so short and long runs both
	// show; runs of zero length (malformed) are left out
	const nbins = 40
	lo, hi := math.Inf(1), math.Inf(-1)
	var logs []float64
	for _, v := range c.d.runLenMb {
		if v > 0 {
			l := math.Log10(v)
			logs = append(logs, l)
			lo, hi = math.Min(lo, l), math.Max(hi, l)
		}
	}
	if len(logs) == 0 {
		f.Empty = "No run has a positive length."
		return f, nil
	}
	if hi-lo < 1e-9 {
		lo, hi = lo-0.5, hi+0.5
	}
	bins := make([]plotter.HistogramBin, nbins)
	w := (hi - lo) / nbins
	for i := range bins {
		bins[i] = plotter.HistogramBin{Min: lo + float64(i)*w, Max: lo + float64(i+1)*w}
	}
	for _, l := range logs {
		bins[min(nbins-1, max(0, int((l-lo)/w)))].Weight++
	}
	p := newPlot("", "run length (Mb, logarithmic scale)", "number of runs")
	p.Y.Tick.Marker = countTicks{}
	var at []float64
	var names []string
	for _, mb := range []float64{0.01, 0.03, 0.1, 0.25, 0.5, 1, 2, 4, 8, 16, 32, 64, 128, 256} {
		at = append(at, math.Log10(mb))
		names = append(names, strconv.FormatFloat(mb, 'g', -1, 64))
	}
	p.X.Tick.Marker = tickNames{at: at, names: names}
	p.Add(histFromCounts(bins, colTeal))
	f.Points, f.Total = nbins, len(c.d.runLenMb)
	f.Caption = fmt.Sprintf("%d runs in %d bins of equal width on a logarithmic length axis (each bin spans a factor of %.3g).", len(logs), nbins, math.Pow(10, w))
	if mc := c.d.info.ROH.MinCountedBP; mc > 0 {
		top := 0.0
		for _, b := range bins {
			top = math.Max(top, b.Weight)
		}
		x := math.Log10(float64(mc) / 1e6)
		l, _ := plotter.NewLine(plotter.XYs{{X: x, Y: 0}, {X: x, Y: top}})
		l.Color = colBrick
		l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		p.Add(l)
		f.Caption += fmt.Sprintf(" Red dashed line: %s Mb; shorter runs are listed in runs.tsv but not counted in F_ROH.", fmtG(float64(mc)/1e6))
	}
	var err error
	f.SVG, err = renderPlot(p, plotW, plotH*0.6)
	return f, err
}

// paintedSamples picks the samples for the cohort painting: the
// highlighted ones, else those with the highest F_ROH.
func (c *cohort) paintedSamples() ([]int, string) {
	var out []int
	if len(c.highlight) > 0 {
		for i := range c.names {
			if c.highlight[i] {
				out = append(out, i)
			}
		}
		why := "the samples listed with --highlight"
		if len(out) > maxPaintRows {
			out = out[:maxPaintRows]
			why += fmt.Sprintf(" (first %d)", maxPaintRows)
		}
		return out, why
	}
	froh := c.col("f_roh")
	lab := labelTop(froh, maxPaintRows)
	sort.SliceStable(lab, func(a, b int) bool { return froh[lab[a]] > froh[lab[b]] })
	return lab, fmt.Sprintf("the %d samples with the highest F_ROH", len(lab))
}

// figPainting: runs of the most inbred (or highlighted) samples along the
// genome.
func (c *cohort) figPainting() (figure, error) {
	f := figure{ID: "fig_painting", Kind: "painting", Title: "Where the runs lie"}
	if !c.d.runsPresent {
		f.Empty = noData("runs (runs.tsv)")
		return f, nil
	}
	idx, why := c.paintedSamples()
	f.Rows = idx
	g := c.layout()
	if len(idx) == 0 || g.total == 0 {
		f.Empty = "No sample with runs to paint."
		return f, nil
	}
	pt := &painting{xmax: g.total * legendRoom, nClass: len(c.classes) + 1}
	var bandsBG []span
	for _, k := range g.names {
		bandsBG = append(bandsBG, span{start: g.offset[k], end: g.offset[k] + g.length[k]})
	}
	var ylab []string
	// top row = first sample: rows are drawn bottom-up, so reverse
	for j := len(idx) - 1; j >= 0; j-- {
		i := idx[j]
		row := paintRow{label: clip(c.names[i], 20), bands: bandsBG}
		for _, r := range c.d.runs[c.raw[i]] {
			off, ok := g.offset[visible(r.chrom)]
			if !ok {
				continue
			}
			row.segs = append(row.segs, span{start: off + float64(r.start)/1e6, end: off + float64(r.end)/1e6, class: c.classOf(r.lengthBP)})
			f.Points++
		}
		f.Total += len(c.d.runs[c.raw[i]])
		pt.rows = append(pt.rows, row)
		ylab = append(ylab, row.label)
	}
	p := newPlot("", "chromosome", "")
	p.Add(pt)
	var at []float64
	var nm []string
	for _, k := range g.names {
		at = append(at, g.offset[k]+g.length[k]/2)
		nm = append(nm, clip(k, 8))
	}
	p.X.Tick.Marker = tickNames{at: at, names: nm}
	p.X.Tick.Length = 0
	yat := make([]float64, len(ylab))
	for i := range yat {
		yat[i] = float64(i)
	}
	p.Y.Tick.Marker = tickNames{at: yat, names: ylab}
	p.Y.Tick.Length = 0
	p.Y.LineStyle.Width = 0
	p.X.LineStyle.Width = 0
	legendBands(p, bandLabels(c.classes))
	f.Caption = "Shown: " + why + ". Each row is one sample, each coloured block one run, coloured by length; grey bands alternate chromosomes."
	if f.Points < f.Total {
		f.Note = fmt.Sprintf("%d runs on chromosomes outside the painted set are not drawn.", f.Total-f.Points)
	}
	h := vg.Length(len(idx))*0.55*vg.Centimeter + 3*vg.Centimeter
	var err error
	f.SVG, err = renderPlot(p, plotW, h)
	return f, err
}

// figQQ: observed against expected -log10 p from run.json sites.qq.
func (c *cohort) figQQ() (figure, error) {
	f := figure{ID: "fig_hwe_qq", Kind: "scatter", Title: "Hardy-Weinberg tests: observed against expected p-values"}
	qq := c.d.info.Sites.QQ
	pts := make(plotter.XYs, 0, len(qq))
	hi := 0.0
	for _, q := range qq {
		if len(q) < 2 || math.IsNaN(float64(q[0])) || math.IsNaN(float64(q[1])) || math.IsInf(float64(q[1]), 0) {
			continue
		}
		pts = append(pts, plotter.XY{X: float64(q[0]), Y: float64(q[1])})
		hi = math.Max(hi, float64(q[0]))
	}
	if len(pts) == 0 {
		f.Empty = noData("QQ summary (run.json sites.qq)")
		return f, nil
	}
	lambda := fmtG(float64(c.d.info.Sites.Lambda))
	p := newPlot("λ = "+lambda, "expected −log10 p", "observed −log10 p")
	p.Add(diagonal(0, hi))
	s, _ := plotter.NewScatter(pts)
	s.GlyphStyle = draw.GlyphStyle{Color: colTeal, Radius: vg.Points(2), Shape: draw.CircleGlyph{}}
	p.Add(s)
	f.Points, f.Total = len(pts), len(qq)
	f.Caption = fmt.Sprintf("%d quantile points summarising %s tested sites; the dashed line is what tests on a population in equilibrium would give.", len(pts), fmtInt(c.d.info.Sites.Tested))
	var err error
	f.SVG, err = renderPlot(p, plotW*0.6, plotH)
	return f, err
}

// figFSite: distribution of per-site F.
func (c *cohort) figFSite() (figure, error) {
	f := figure{ID: "fig_f_site", Kind: "histogram", Title: "Per-site F (1 − observed/expected heterozygosity)"}
	s := c.d.sites
	if !s.present || s.fSiteN == 0 {
		f.Empty = noData("per-site F (sites.tsv.gz)")
		return f, nil
	}
	bins := make([]plotter.HistogramBin, fSiteBins)
	w := 2.0 / fSiteBins
	for i := range bins {
		bins[i] = plotter.HistogramBin{Min: -1 + float64(i)*w, Max: -1 + float64(i+1)*w, Weight: float64(s.fSite[i])}
	}
	p := newPlot("", "f_site", "number of sites")
	p.Y.Tick.Marker = countTicks{}
	p.Add(histFromCounts(bins, colOchre))
	f.Points, f.Total = fSiteBins, int(s.fSiteN)
	f.Caption = fmt.Sprintf("%s sites with a defined f_site (%s NA) in %d bins over [−1, 1].", fmtInt(s.fSiteN), fmtInt(s.fSiteNA), fSiteBins)
	var err error
	f.SVG, err = renderPlot(p, plotW*0.6, plotH)
	return f, err
}

// figPopFIS: F_IS per population.
func (c *cohort) figPopFIS() (figure, error) {
	f := figure{ID: "fig_pop_fis", Kind: "bars", Title: "F_IS per population"}
	t := c.d.pops
	if t == nil || !t.has("f_is") {
		f.Empty = noData("populations.tsv")
		return f, nil
	}
	var vals plotter.Values
	var names []string
	for r := range t.rows {
		name := t.str(r, "population")
		if name == "all_pooled" {
			continue
		}
		vals = append(vals, nz(t.num(r, "f_is")))
		names = append(names, clip(name, 16))
	}
	if len(vals) == 0 {
		f.Empty = noData("population rows")
		return f, nil
	}
	p := newPlot("", "", "F_IS")
	w := vg.Length(math.Min(40, float64(plotW*0.5)/float64(len(vals))*0.7))
	bc, err := plotter.NewBarChart(vals, w)
	if err != nil {
		return f, err
	}
	bc.Color = colTeal
	bc.LineStyle.Width = 0
	p.Add(bc)
	p.NominalX(names...)
	if len(names) > 6 {
		p.X.Tick.Label.Rotation = math.Pi / 4
		p.X.Tick.Label.XAlign = draw.XRight
	}
	f.Points, f.Total = len(vals), len(vals)
	f.Caption = "Positive: fewer heterozygotes than random mating within the population would give."
	f.SVG, err = renderPlot(p, plotW*0.5, plotH)
	return f, err
}

// figFST: pairwise F_ST heat map.
func (c *cohort) figFST() (figure, error) {
	f := figure{ID: "fig_pop_fst", Kind: "heatmap", Title: "Pairwise F_ST"}
	t := c.d.pairs
	if t == nil || len(t.rows) == 0 {
		f.Empty = noData("populations_pairwise.tsv")
		return f, nil
	}
	ix := map[string]int{}
	var names []string
	for r := range t.rows {
		for _, col := range []string{"population_a", "population_b"} {
			nm := t.str(r, col)
			if _, ok := ix[nm]; !ok {
				ix[nm] = len(names)
				names = append(names, nm)
			}
		}
	}
	n := len(names)
	m := matrix{n: n, v: make([]float64, n*n)}
	for i := range m.v {
		m.v[i] = math.NaN()
	}
	for i := 0; i < n; i++ {
		m.v[i*n+i] = 0
	}
	hi := 0.0
	for r := range t.rows {
		a, b := ix[t.str(r, "population_a")], ix[t.str(r, "population_b")]
		v := t.num(r, "f_st")
		m.v[a*n+b], m.v[b*n+a] = v, v
		if !math.IsNaN(v) {
			hi = math.Max(hi, v)
		}
	}
	if hi <= 0 {
		hi = 1e-3
	}
	hm := plotter.NewHeatMap(m, paletteSeq{n: 32})
	hm.Min, hm.Max = 0, hi
	hm.NaN = colShadeA
	hm.Underflow = paletteSeq{n: 2}.Colors()[0]
	p := newPlot("", "", "")
	p.Add(hm)
	at := make([]float64, n)
	lab := make([]string, n)
	for i := range at {
		at[i], lab[i] = float64(i), clip(names[i], 14)
	}
	p.X.Tick.Marker = tickNames{at: at, names: lab}
	p.Y.Tick.Marker = tickNames{at: at, names: lab}
	if n > 4 {
		p.X.Tick.Label.Rotation = math.Pi / 4
		p.X.Tick.Label.XAlign = draw.XRight
	}
	if n <= 12 {
		var l plotter.XYLabels
		for r := 0; r < n; r++ {
			for cc := 0; cc < n; cc++ {
				if cc == r || math.IsNaN(m.v[r*n+cc]) {
					continue
				}
				l.XYs = append(l.XYs, plotter.XY{X: float64(cc), Y: float64(r)})
				l.Labels = append(l.Labels, fmt.Sprintf("%.3f", m.v[r*n+cc]))
			}
		}
		if len(l.XYs) > 0 {
			lb, err := plotter.NewLabels(l)
			if err == nil {
				for i := range lb.TextStyle {
					lb.TextStyle[i].XAlign = draw.XCenter
					lb.TextStyle[i].YAlign = draw.YCenter
					lb.TextStyle[i].Font.Size = fontMark
					lb.TextStyle[i].Color = colInk
					xy := l.XYs[i]
					if m.v[int(xy.Y)*n+int(xy.X)] > hi/2 {
						lb.TextStyle[i].Color = color.White
					}
				}
				p.Add(lb)
			}
		}
	}
	f.Points, f.Total = n*n, n*n
	f.Caption = fmt.Sprintf("%d populations; darker cells are more differentiated pairs (scale 0 to %s).", n, fmtG(hi))
	side := vg.Length(math.Min(17, 8+0.5*float64(n))) * vg.Centimeter
	var err error
	f.SVG, err = renderPlot(p, side, side*0.85)
	return f, err
}

// figQuality: het rate against call rate, flagged samples marked.
func (c *cohort) figQuality() (figure, error) {
	f := figure{ID: "fig_quality", Kind: "scatter", Title: "Genotyping quality: heterozygosity against call rate"}
	xs, ys := c.col("call_rate"), c.col("het_rate")
	if _, ok := c.cols["call_rate"]; !ok {
		f.Empty = noData("call_rate column")
		return f, nil
	}
	n := len(c.names)
	var flagged, plain []int
	for i := 0; i < n; i++ {
		if c.isFlagged(i) {
			flagged = append(flagged, i)
		} else {
			plain = append(plain, i)
		}
	}
	keep := subsample(len(plain), maxScatterPoints, nil)
	p := newPlot("", "call rate", "heterozygous share of calls")
	add := func(rows []int, g draw.GlyphStyle) int {
		pts := make(plotter.XYs, 0, len(rows))
		for _, i := range rows {
			if math.IsNaN(xs[i]) || math.IsNaN(ys[i]) {
				continue
			}
			pts = append(pts, plotter.XY{X: xs[i], Y: ys[i]})
		}
		if len(pts) == 0 {
			return 0
		}
		s, _ := plotter.NewScatter(pts)
		s.GlyphStyle = g
		p.Add(s)
		return len(pts)
	}
	rows := make([]int, len(keep))
	for j, k := range keep {
		rows[j] = plain[k]
	}
	f.Points += add(rows, draw.GlyphStyle{Color: colPoint, Radius: vg.Points(2.2), Shape: draw.CircleGlyph{}})
	fl := flagged
	if len(fl) > maxScatterPoints {
		fl = fl[:maxScatterPoints]
	}
	f.Points += add(fl, draw.GlyphStyle{Color: colBrick, Radius: vg.Points(3.2), Shape: draw.TriangleGlyph{}})
	for i := 0; i < n; i++ {
		if !math.IsNaN(xs[i]) && !math.IsNaN(ys[i]) {
			f.Total++
		}
	}
	lab := fl
	if len(lab) > maxLabels {
		lab = lab[:maxLabels]
	}
	addLabels(p, xs, ys, lab, c.names)
	var band string
	// The band is the one the scan flagged by, as run.json publishes it.
	if b := c.d.info.Samples.HetRateBand; b != nil && b.SD > 0 {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, x := range xs {
			if !math.IsNaN(x) {
				lo, hi = math.Min(lo, x), math.Max(hi, x)
			}
		}
		for _, y := range []float64{float64(b.Low), float64(b.High)} {
			l, _ := plotter.NewLine(plotter.XYs{{X: lo, Y: y}, {X: hi, Y: y}})
			l.Color = colFaint
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
			p.Add(l)
		}
		band = fmt.Sprintf(" Dashed lines: cohort mean of the heterozygous share ± %g standard deviations, the band outside which the scan flags het_rate_outlier.", b.SDs)
	}
	f.Caption = fmt.Sprintf("Circles: samples without a flag; red triangles: the %d flagged samples (up to %d of the most unusual labelled). Low call rate sits to the left; contamination or mixed samples tend to sit high, samples from another population or truly inbred ones low.", len(flagged), maxLabels) + band
	if f.Points < f.Total {
		f.Note = fmt.Sprintf("%d of %d samples drawn: every flagged sample (up to %d) and an even subsample of the rest.", f.Points, f.Total, maxScatterPoints)
	}
	var err error
	f.SVG, err = renderPlot(p, plotW, plotH)
	return f, err
}

// stackSampleBars draws vals[0], vals[1], ... as bars stacked per sample
// (one bar per entry of names), coloured by colorOf, with the legend on
// the left and the sample names as ticks when there are few enough bars
// of single samples (group 1).
func stackSampleBars(p *plot.Plot, vals []plotter.Values, names []string, group int, colorOf func(k int) color.Color) error {
	nb := len(names)
	w := vg.Length(float64(plotW-2*vg.Centimeter) / float64(nb) * 0.85)
	var prev *plotter.BarChart
	for k := range vals {
		bc, err := plotter.NewBarChart(vals[k], w)
		if err != nil {
			return err
		}
		bc.Color = colorOf(k)
		bc.LineStyle.Width = 0
		if prev != nil {
			bc.StackOn(prev)
		}
		p.Add(bc)
		prev = bc
	}
	p.Legend.Left = true
	if nb <= maxNamedTicks && group == 1 {
		p.NominalX(names...)
		p.X.Tick.Label.Rotation = math.Pi / 3
		p.X.Tick.Label.XAlign = draw.XRight
		p.X.Tick.Label.YAlign = draw.YCenter
	} else {
		p.X.Tick.Marker = plot.ConstantTicks(nil)
	}
	return nil
}
