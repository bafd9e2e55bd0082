package htmlreport

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"fgauge/stats"
)

// sexView is the report's sex-check section, present when samples.tsv
// has the sex columns and run.json the sex section.
type sexView struct {
	S        *stats.SexSummary
	Fig      *figure
	HasGiven bool
	Rows     []sexRow // samples flagged sex_mismatch or sex_fits_neither
}

type sexRow struct {
	Name, Given, Inferred, Evidence string
	XF, YRatio                      cell
	Flags                           []string
}

// Colours of the sex-check plot by given sex (ours).
var (
	colMale    = colTeal
	colFemale  = colOchre
	colNoGiven = color.RGBA{0x7a, 0x84, 0x8c, 0xff}
)

func (c *cohort) sexSection() (*sexView, error) {
	t := c.d.samples
	s := c.d.info.Sex
	if s == nil || !t.has("sex_inferred") || !t.has("x_f") {
		return nil, nil
	}
	v := &sexView{S: s, HasGiven: t.has("sex_given")}
	for r := range t.rows {
		var fl []string
		for _, f := range c.flags[r] {
			if f == "sex_mismatch" || f == "sex_fits_neither" {
				fl = append(fl, f)
			}
		}
		if fl == nil {
			continue
		}
		v.Rows = append(v.Rows, sexRow{Name: c.names[r], Given: visible(t.str(r, "sex_given")), Inferred: t.str(r, "sex_inferred"),
			Evidence: t.str(r, "sex_evidence"), XF: newCell(t.num(r, "x_f")), YRatio: newCell(t.num(r, "y_call_ratio")), Flags: fl})
	}
	f, err := c.figSex(v)
	if err != nil {
		return nil, err
	}
	v.Fig = &f
	return v, nil
}

// figSex: F_X against the call rate, coloured by given sex, with the
// thresholds of the sex check.
func (c *cohort) figSex(v *sexView) (figure, error) {
	f := figure{ID: "fig_sex", Kind: "scatter", Title: "Sex check: X inbreeding coefficient F_X against call rate"}
	t := c.d.samples
	xs, ys := c.col("call_rate"), c.col("x_f")
	groups := map[string][]int{}
	var flagged []int
	for r := range t.rows {
		if math.IsNaN(xs[r]) || math.IsNaN(ys[r]) {
			continue
		}
		f.Total++
		g := t.str(r, "sex_given")
		if g != "male" && g != "female" {
			g = "unknown"
		}
		isFlagged := false
		for _, fl := range c.flags[r] {
			if fl == "sex_mismatch" || fl == "sex_fits_neither" {
				isFlagged = true
			}
		}
		if isFlagged {
			// drawn last, in their colour, so that they are never hidden
			flagged = append(flagged, r)
			g = "flagged " + g
		}
		groups[g] = append(groups[g], r)
	}
	if f.Total == 0 {
		f.Empty = noData("sample with an X statistic")
		return f, nil
	}
	p := newPlot("", "call rate (autosomes)", "F_X (non-PAR X)")
	lo, hi := math.Inf(1), math.Inf(-1)
	for r := range t.rows {
		if !math.IsNaN(xs[r]) && !math.IsNaN(ys[r]) {
			lo, hi = math.Min(lo, xs[r]), math.Max(hi, xs[r])
		}
	}
	if hi <= lo {
		lo, hi = lo-0.01, hi+0.01
	}
	for _, y := range []float64{v.S.Thresholds.MaleMinF, v.S.Thresholds.FemaleMaxF} {
		l, _ := plotter.NewLine(plotter.XYs{{X: lo, Y: y}, {X: hi, Y: y}})
		l.Color = colFaint
		l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		p.Add(l)
	}
	add := func(rows []int, g draw.GlyphStyle, label string) {
		keep := subsample(len(rows), maxScatterPoints, nil)
		pts := make(plotter.XYs, 0, len(keep))
		for _, k := range keep {
			pts = append(pts, plotter.XY{X: xs[rows[k]], Y: ys[rows[k]]})
		}
		if len(pts) == 0 {
			return
		}
		s, _ := plotter.NewScatter(pts)
		s.GlyphStyle = g
		p.Add(s)
		if label != "" {
			p.Legend.Add(label, s)
		}
		f.Points += len(pts)
	}
	glyph := func(col color.Color) draw.GlyphStyle {
		return draw.GlyphStyle{Color: col, Radius: vg.Points(2.4), Shape: draw.CircleGlyph{}}
	}
	given := "given sex"
	if !v.HasGiven {
		given = "no sex given"
	}
	add(groups["unknown"], glyph(colNoGiven), given)
	add(groups["female"], glyph(colFemale), "given female")
	add(groups["male"], glyph(colMale), "given male")
	add(groups["flagged unknown"], glyph(colNoGiven), "")
	add(groups["flagged female"], glyph(colFemale), "")
	add(groups["flagged male"], glyph(colMale), "")
	if len(flagged) > 0 {
		ring := draw.GlyphStyle{Color: colBrick, Radius: vg.Points(4.2), Shape: draw.RingGlyph{}}
		pts := make(plotter.XYs, 0, len(flagged))
		for _, r := range flagged {
			pts = append(pts, plotter.XY{X: xs[r], Y: ys[r]})
		}
		s, _ := plotter.NewScatter(pts)
		s.GlyphStyle = ring
		p.Add(s)
		p.Legend.Add("sex flag", s)
		lab := flagged
		if len(lab) > maxLabels {
			lab = lab[:maxLabels]
		}
		addLabels(p, xs, ys, lab, c.names)
	}
	// The legend sits between the two bands (0.5 < F_X < 0.9), where few
	// samples fall.
	p.Legend.Top = true
	p.Legend.YOffs = -0.2 * plotH
	p.Y.Min = math.Min(-0.3, p.Y.Min)
	p.Y.Max = math.Max(1.05, p.Y.Max)
	f.Caption = fmt.Sprintf("One point per sample, coloured by the sex given (--sex or the pedigree). Males, hemizygous on X, sit near F_X = 1 above the dashed line at %g; females at their X inbreeding, below the dashed line at %g. Rings mark the %d samples flagged sex_mismatch or sex_fits_neither.",
		v.S.Thresholds.MaleMinF, v.S.Thresholds.FemaleMaxF, len(flagged))
	if f.Points < f.Total {
		f.Note = fmt.Sprintf("%d of %d samples drawn (an even subsample of each group); every flagged sample is ringed.", f.Points, f.Total)
	}
	var err error
	f.SVG, err = renderPlot(p, plotW, plotH)
	return f, err
}
