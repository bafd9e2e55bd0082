package htmlreport

import (
	"fmt"
	"image/color"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"

	"fgauge/roh"
)

// ageBand is one band of the age partition: autozygosity from common
// ancestors between the previous bound and G generations back.
type ageBand struct {
	G     int
	Col   string // the cumulative f_within_<G>g column
	Label string
}

// ageBands lists the f_within_<G>g columns present in samples.tsv, in
// increasing G (the model's grid, roh.AgeGenerations).
func (c *cohort) ageBands() []ageBand {
	var out []ageBand
	prev := 0
	for _, g := range roh.AgeGenerations {
		col := roh.AgeColumn(g)
		if _, ok := c.cols[col]; !ok {
			continue
		}
		lab := "up to " + strconv.Itoa(g) + " generations"
		if prev > 0 {
			lab = strconv.Itoa(prev+1) + "–" + strconv.Itoa(g) + " generations"
		}
		out = append(out, ageBand{g, col, lab})
		prev = g
	}
	return out
}

// agePartition returns sample i's autozygosity by age band: the
// differences of the cumulative f_within columns (negative rounding
// leftovers clipped to 0), and the total (the oldest bound).
func (c *cohort) agePartition(bands []ageBand, i int) ([]float64, float64) {
	out := make([]float64, len(bands))
	prev := 0.0
	total := math.NaN()
	for k, b := range bands {
		v := c.cols[b.Col][i]
		if math.IsNaN(v) {
			return nil, math.NaN()
		}
		out[k] = max(v-prev, 0)
		prev = v
		total = v
	}
	return out, total
}

// ageMean is one row of the cohort table of the age partition.
type ageMean struct {
	Label string
	Col   string
	Mean  cell
}

// ageMeans returns the cohort mean of each age band (samples with the
// columns defined).
func (c *cohort) ageMeans() []ageMean {
	bands := c.ageBands()
	if len(bands) == 0 {
		return nil
	}
	sum := make([]float64, len(bands))
	n := 0
	for i := range c.names {
		p, _ := c.agePartition(bands, i)
		if p == nil {
			continue
		}
		n++
		for k, v := range p {
			sum[k] += v
		}
	}
	out := make([]ageMean, len(bands))
	for k, b := range bands {
		m := math.NaN()
		if n > 0 {
			m = sum[k] / float64(n)
		}
		out[k] = ageMean{b.Label, b.Col, newCell(m)}
	}
	return out
}

// figAges: each sample's autozygosity partitioned by the age of the
// common ancestors (stacked bars, samples sorted by the total).
func (c *cohort) figAges() (figure, error) {
	f := figure{ID: "fig_age_classes", Kind: "bars", Title: "Autozygosity by age of the common ancestors, samples sorted"}
	bands := c.ageBands()
	if len(bands) == 0 {
		f.Empty = noData("f_within_<G>g column (age classes off, or the rules detector)")
		return f, nil
	}
	type row struct {
		i     int
		parts []float64
		total float64
	}
	var rows []row
	for i := range c.names {
		p, t := c.agePartition(bands, i)
		if p != nil {
			rows = append(rows, row{i, p, t})
		}
	}
	if len(rows) == 0 {
		f.Empty = "No sample has defined age classes."
		return f, nil
	}
	sort.SliceStable(rows, func(a, b int) bool { return rows[a].total < rows[b].total })
	group := 1
	if len(rows) > maxBars {
		group = (len(rows) + maxBars - 1) / maxBars
	}
	nb := (len(rows) + group - 1) / group
	vals := make([]plotter.Values, len(bands))
	for k := range vals {
		vals[k] = make(plotter.Values, nb)
	}
	var names []string
	for b := 0; b < nb; b++ {
		lo, hi := b*group, min(len(rows), (b+1)*group)
		for _, r := range rows[lo:hi] {
			for k, v := range r.parts {
				vals[k][b] += v / float64(hi-lo)
			}
		}
		names = append(names, clip(c.names[rows[lo].i], 18))
	}
	p := newPlot("", "samples, lowest to highest autozygosity (up to "+strconv.Itoa(bands[len(bands)-1].G)+" generations)", "share of genome autozygous")
	labels := make([]string, len(bands))
	for k, b := range bands {
		labels[k] = b.Label
	}
	if err := stackSampleBars(p, vals, names, group, func(k int) color.Color { return bandColor(len(bands)-1-k, len(bands)) }); err != nil {
		return f, err
	}
	legendAges(p, labels)
	f.Points, f.Total = nb, len(rows)
	if group > 1 {
		f.Note = fmt.Sprintf("%d samples shown as %d bars: each bar is the mean of %d consecutive samples in order of total autozygosity.", len(rows), nb, group)
	}
	f.Caption = "Height is the expected share of the genome autozygous from common ancestors up to " + strconv.Itoa(bands[len(bands)-1].G) +
		" generations back (age-class model, Druet & Gautier 2017); colours split it by how many generations back the common ancestor lived. " +
		"Recent bands are what mating plans control; old bands are shared ancestry of the breed. Ages are model classes (segment length), not exact dates."
	var err error
	f.SVG, err = renderPlot(p, plotW, plotH)
	return f, err
}

// legendAges adds one legend entry per age band, in the bands' colours.
func legendAges(p *plot.Plot, labels []string) {
	for k := len(labels) - 1; k >= 0; k-- {
		p.Legend.Add(labels[k], legendBox{bandColor(len(labels)-1-k, len(labels))})
	}
	p.Legend.Top = true
	p.Legend.TextStyle.Color = colInk
	p.Legend.TextStyle.Font.Size = fontTick
}

// ageView is one age band on a sample's page: the band's share and the
// cumulative column it ends.
type ageView struct {
	Label string
	Col   string
	Band  cell
	Cum   cell
}

// sampleAges returns sample i's age partition, nil when samples.tsv has
// no f_within columns or the sample's are undefined.
func (c *cohort) sampleAges(i int) []ageView {
	bands := c.ageBands()
	p, _ := c.agePartition(bands, i)
	if p == nil {
		return nil
	}
	out := make([]ageView, len(bands))
	for k, b := range bands {
		out[k] = ageView{b.Label, b.Col, newCell(p[k]), newCell(c.cols[b.Col][i])}
	}
	return out
}
