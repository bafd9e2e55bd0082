package mate

import (
	"bytes"
	"context"
	"encoding/xml"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// cssColor is the colour syntax the page may use: hex notation with 3, 4,
// 6 or 8 digits (W3C CSS Color Module Level 4, section 5.2), none,
// currentColor and var() references to the page's own custom properties.
var cssColor = regexp.MustCompile(`^(#([0-9a-fA-F]{3,4}|[0-9a-fA-F]{6}|[0-9a-fA-F]{8})|none|currentColor|transparent|var\(--[a-z0-9-]+\))$`)

// TestPageSVGAndColours: every inline SVG of mate.html parses as XML
// (encoding/xml in strict mode), every fill/stroke colour in it and in the
// page's style sheet is valid CSS, and every opacity lies in [0, 1].
func TestPageSVGAndColours(t *testing.T) {
	dir := t.TempDir()
	cfg := baseConfig(t, dir)
	if _, err := Run(context.Background(), cfg); err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(cfg.OutDir, "mate.html"))
	if err != nil {
		t.Fatal(err)
	}
	svgs := regexp.MustCompile(`(?s)<svg.*?</svg>`).FindAll(page, -1)
	if len(svgs) != 2 {
		t.Fatalf("%d inline SVGs, want the pair map and the histogram", len(svgs))
	}
	checkColour := func(where, prop, v string) {
		v = strings.TrimSpace(v)
		switch {
		case strings.HasSuffix(prop, "opacity"):
			if x, err := strconv.ParseFloat(v, 64); err != nil || x < 0 || x > 1 {
				t.Errorf("%s: %s:%s is not an opacity in [0, 1]", where, prop, v)
			}
		case prop == "fill" || prop == "stroke" || prop == "color" || prop == "background" || prop == "background-color" || prop == "border-color" || prop == "stop-color":
			if !cssColor.MatchString(v) {
				t.Errorf("%s: %s:%s is not a valid CSS colour", where, prop, v)
			}
		}
	}
	colours := 0
	for k, svg := range svgs {
		d := xml.NewDecoder(bytes.NewReader(svg))
		d.Strict = true
		for {
			tok, err := d.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("SVG %d does not parse as XML: %v", k, err)
			}
			se, ok := tok.(xml.StartElement)
			if !ok {
				continue
			}
			for _, a := range se.Attr {
				switch a.Name.Local {
				case "style":
					for _, decl := range strings.Split(a.Value, ";") {
						if p, v, ok := strings.Cut(decl, ":"); ok {
							checkColour("SVG "+se.Name.Local, strings.TrimSpace(p), v)
							colours++
						}
					}
				case "fill", "stroke", "fill-opacity", "stroke-opacity", "opacity":
					checkColour("SVG "+se.Name.Local, a.Name.Local, a.Value)
					colours++
				}
			}
		}
	}
	// The plan's bars are the page's teal #2A7D86, translucent, within the
	// rounding of the premultiplied round trip (a colour built as
	// premultiplied by mistake came out as a paler #3CB5C2).
	bar := regexp.MustCompile(`fill:#([0-9A-F]{2})([0-9A-F]{2})([0-9A-F]{2});fill-opacity:0\.69`).FindSubmatch(svgs[1])
	if bar == nil {
		t.Error("no translucent bars in the histogram")
	} else {
		for i, want := range []int64{0x2a, 0x7d, 0x86} {
			if got, _ := strconv.ParseInt(string(bar[i+1]), 16, 0); got < want-2 || got > want+2 {
				t.Errorf("plan bars %s: not the teal #2A7D86", bar[0])
				break
			}
		}
	}
	if colours < 50 {
		t.Errorf("only %d style declarations checked in the SVGs", colours)
	}
	// The page's own style sheet.
	css := regexp.MustCompile(`(?s)<style>(.*?)</style>`).FindSubmatch(page)
	if css == nil {
		t.Fatal("mate.html has no style sheet")
	}
	for _, m := range regexp.MustCompile(`(?:^|[;{\s])(fill|stroke|color|background|background-color|border-color)\s*:\s*([^;}]+)`).FindAllSubmatch(css[1], -1) {
		v := string(m[2])
		if strings.Contains(v, " ") { // shorthand (background: ...): check its hex parts
			for _, h := range regexp.MustCompile(`#[0-9a-zA-Z]+`).FindAllString(v, -1) {
				checkColour("style sheet", "color", h)
			}
			continue
		}
		checkColour("style sheet", string(m[1]), v)
	}
	for _, h := range regexp.MustCompile(`#[0-9a-zA-Z]+\b`).FindAllString(string(css[1]), -1) {
		checkColour("style sheet", "color", h)
	}
}
