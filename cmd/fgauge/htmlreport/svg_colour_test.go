package htmlreport

import (
	"encoding/xml"
	"errors"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// colourProps are the SVG presentation attributes and style properties
// that take a colour (SVG 1.1, section 11.2 and 13.2).
var colourProps = map[string]bool{"fill": true, "stroke": true, "color": true, "stop-color": true,
	"flood-color": true, "lighting-color": true}

// cssNamedColours are the keywords accepted besides numeric colours: the
// paint keywords of SVG 1.1 (none, currentColor) and the CSS colour
// keywords the report could plausibly use (CSS Color Module Level 4,
// section 6.1; a subset, written from the specification's list).
var cssNamedColours = map[string]bool{"none": true, "currentcolor": true, "transparent": true,
	"black": true, "white": true, "red": true, "green": true, "blue": true, "gray": true, "grey": true,
	"silver": true, "maroon": true, "navy": true, "teal": true, "olive": true, "purple": true,
	"orange": true, "yellow": true, "lime": true, "aqua": true, "fuchsia": true}

var (
	reHexColour = regexp.MustCompile(`^#(?:[0-9a-fA-F]{3}|[0-9a-fA-F]{4}|[0-9a-fA-F]{6}|[0-9a-fA-F]{8})$`)
	reRGB       = regexp.MustCompile(`^rgba?\(\s*([^)]*)\)$`)
)

// validCSSColour reports whether v is a CSS colour value (CSS Color
// Module Level 4: hex notation, rgb()/rgba() with 0-255 or percentage
// channels and an optional alpha, or a keyword).
func validCSSColour(v string) bool {
	v = strings.TrimSpace(v)
	if reHexColour.MatchString(v) || cssNamedColours[strings.ToLower(v)] {
		return true
	}
	m := reRGB.FindStringSubmatch(v)
	if m == nil {
		return false
	}
	parts := strings.FieldsFunc(m[1], func(r rune) bool { return r == ',' || r == ' ' || r == '/' })
	if len(parts) != 3 && len(parts) != 4 {
		return false
	}
	for i, p := range parts {
		pct := strings.HasSuffix(p, "%")
		x, err := strconv.ParseFloat(strings.TrimSuffix(p, "%"), 64)
		if err != nil || x < 0 || (pct && x > 100) || (!pct && i < 3 && x > 255) || (!pct && i == 3 && x > 1) {
			return false
		}
	}
	return true
}

func TestValidCSSColour(t *testing.T) {
	for v, want := range map[string]bool{
		"#2A7D86": true, "#fff": true, "#2a7d86a0": true, "none": true, "rgb(42, 125, 134)": true,
		"rgba(0,0,0,0.5)": true, "#-8000000000000000-8000000000000000-8000000000000000": false,
		"#12345": false, "": false, "rgb(300,0,0)": false, "bluish": false,
	} {
		if got := validCSSColour(v); got != want {
			t.Errorf("validCSSColour(%q) = %v, want %v", v, got, want)
		}
	}
}

// checkSVGs parses every inline <svg> element of page as XML and checks
// each colour it sets; it returns the number of SVG elements seen.
func checkSVGs(t *testing.T, name, page string) int {
	t.Helper()
	n := 0
	for rest := page; ; {
		i := strings.Index(rest, "<svg")
		if i < 0 {
			break
		}
		j := strings.Index(rest[i:], "</svg>")
		if j < 0 {
			t.Errorf("%s: <svg> without </svg>", name)
			break
		}
		doc := rest[i : i+j+len("</svg>")]
		rest = rest[i+j+len("</svg>"):]
		n++
		dec := xml.NewDecoder(strings.NewReader(doc))
		for {
			tok, err := dec.Token()
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				t.Errorf("%s: SVG %d does not parse as XML: %v", name, n, err)
				break
			}
			el, ok := tok.(xml.StartElement)
			if !ok {
				continue
			}
			for _, a := range el.Attr {
				switch {
				case colourProps[a.Name.Local]:
					if !validCSSColour(a.Value) {
						t.Errorf("%s: SVG %d <%s %s=%q>: not a CSS colour", name, n, el.Name.Local, a.Name.Local, a.Value)
					}
				case a.Name.Local == "style":
					for _, decl := range strings.Split(a.Value, ";") {
						k, v, ok := strings.Cut(decl, ":")
						if ok && colourProps[strings.TrimSpace(k)] && !validCSSColour(v) {
							t.Errorf("%s: SVG %d <%s style %s:%s>: not a CSS colour", name, n, el.Name.Local, strings.TrimSpace(k), v)
						}
					}
				}
			}
		}
	}
	return n
}

// TestReportSVGsParseAndColoursValid: every SVG of the cohort report and
// of the per-sample pages is well-formed XML (encoding/xml) and sets only
// valid CSS colours; the plot backgrounds once carried
// "fill:#-8000000000000000-...".
func TestReportSVGsParseAndColoursValid(t *testing.T) {
	dir, _ := writeReport(t, fixtureOpts{n: 30, runs: true, populations: true, pedigree: true, sitesPerChr: 80}, Options{PerSample: true, Workers: 2})
	pages, err := filepath.Glob(filepath.Join(dir, "samples", "*.html"))
	must(t, err)
	pages = append(pages, filepath.Join(dir, "report.html"))
	total := 0
	for _, p := range pages {
		b, err := os.ReadFile(p)
		must(t, err)
		total += checkSVGs(t, filepath.Base(p), string(b))
	}
	if total < 10 {
		t.Errorf("only %d SVG elements in %d pages; the check saw too little", total, len(pages))
	}
}
