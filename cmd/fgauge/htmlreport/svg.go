package htmlreport

import (
	"bytes"
	"fmt"
	"html/template"
	"regexp"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// figure is one rendered plot with the counts a reader (or a test) can
// check against the data: Points is the number of data marks drawn
// (points, bars, bins, cells or painted runs), Total how many the data had.
type figure struct {
	ID      string
	Title   string
	Caption string
	Note    string // what was aggregated or left out, empty when nothing
	Kind    string // scatter, bars, histogram, painting, heatmap
	Points  int
	Total   int
	SVG     template.HTML
	Empty   string // why the plot is absent, when it is
	Rows    []int  // samples drawn as named rows (paintings), for links
	Links   []pageLink
}

// pageLink points from a figure to a sample's own page.
type pageLink struct{ Name, Href string }

var (
	reXmlns = regexp.MustCompile(`\s+xmlns(:\w+)?="[^"]*"`)
	reSize  = regexp.MustCompile(`\A(<svg)\s+width="[^"]*"\s+height="[^"]*"`)
)

// sanitizeSVG turns the standalone SVG document written by vgsvg into an
// element that can sit inside HTML: no XML prolog or comments, no namespace
// URLs (inline SVG in HTML needs none), no fixed size (CSS sizes it).
// vgsvg already escapes text with html.EscapeString, so names drawn as tick
// labels or point labels arrive escaped.
func sanitizeSVG(b []byte) (template.HTML, error) {
	// the prolog and vgsvg's comment come before the root element; only
	// the root's opening tag needs rewriting
	i := bytes.Index(b, []byte("<svg"))
	if i < 0 {
		return "", fmt.Errorf("report: plot did not render to SVG")
	}
	b = b[i:]
	j := bytes.IndexByte(b, '>')
	if j < 0 {
		return "", fmt.Errorf("report: plot SVG has no root tag")
	}
	tag := reXmlns.ReplaceAll(b[:j], nil)
	tag = reSize.ReplaceAll(tag, []byte(`$1 class="plot" role="img"`))
	out := make([]byte, 0, len(tag)+len(b)-j)
	out = append(append(out, tag...), b[j:]...)
	// Names drawn as text are escaped by vgsvg, so these can only come
	// from markup the plot itself wrote; we draw no images and no links.
	for _, bad := range []string{"href=", "url(", "<script", "<foreignObject", "<image", "<a ", "@import", "<!--", "<?"} {
		if bytes.Contains(out, []byte(bad)) {
			return "", fmt.Errorf("report: plot SVG holds %q", bad)
		}
	}
	return template.HTML(out), nil // safe: produced by vgsvg from escaped text, checked above
}

// renderPlot draws p on a w×h SVG canvas.
func renderPlot(p *plot.Plot, w, h vg.Length) (template.HTML, error) {
	c := vgsvg.New(w, h)
	p.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return "", err
	}
	return sanitizeSVG(buf.Bytes())
}

// renderGrid draws plots in a grid of rows×cols panels on one canvas.
func renderGrid(plots [][]*plot.Plot, w, h vg.Length) (template.HTML, error) {
	c := vgsvg.New(w, h)
	dc := draw.New(c)
	rows, cols := len(plots), 0
	for _, r := range plots {
		cols = max(cols, len(r))
	}
	t := draw.Tiles{Rows: rows, Cols: cols, PadX: vg.Millimeter * 3, PadY: vg.Millimeter * 3,
		PadTop: vg.Millimeter, PadBottom: vg.Millimeter, PadLeft: vg.Millimeter, PadRight: vg.Millimeter}
	canvases := plot.Align(plots, t, dc)
	for i := range plots {
		for j := range plots[i] {
			if plots[i][j] != nil {
				plots[i][j].Draw(canvases[i][j])
			}
		}
	}
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return "", err
	}
	return sanitizeSVG(buf.Bytes())
}
