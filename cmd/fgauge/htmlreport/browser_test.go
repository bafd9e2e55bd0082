package htmlreport

import (
	"bytes"
	"context"
	"html"
	"image"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
)

// The browser test renders the report in Debian's chromium (headless) and
// checks what a reader would see. It runs whenever chromium is installed
// (CI installs it) and -short is not given; FGAUGE_CHROMIUM overrides the
// binary path.

func chromiumPath(t *testing.T) string {
	t.Helper()
	if testing.Short() {
		t.Skip("browser test skipped with -short")
	}
	p := os.Getenv("FGAUGE_CHROMIUM")
	if p == "" {
		p = "/usr/bin/chromium"
	}
	if _, err := os.Stat(p); err != nil {
		t.Skipf("no chromium at %s", p)
	}
	return p
}

// chromiumFlags keeps the browser offline and away from any profile.
func chromiumFlags(t *testing.T) []string {
	return []string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync", "--hide-scrollbars",
		"--user-data-dir=" + t.TempDir()}
}

func runChromium(t *testing.T, bin string, args ...string) []byte {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 90*time.Second)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin, append(chromiumFlags(t), args...)...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("chromium %v: %v\n%s", args, err, stderr.Bytes())
	}
	return out
}

var reFigure = regexp.MustCompile(`(?s)<figure id="(\w+)" data-plot="\w+" data-kind="(\w+)" data-points="(\d+)" data-total="(\d+)"[^>]*>(.*?)</figure>`)

func TestBrowserRendersReport(t *testing.T) {
	bin := chromiumPath(t)
	dir, names := writeReport(t, fixtureOpts{n: 48, runs: true, populations: true, pedigree: true, sitesPerChr: 300, extraNames: hostileNames[:3]},
		Options{PerSample: true})
	url := "file://" + filepath.Join(dir, "report.html")
	dom := string(runChromium(t, bin, "--dump-dom", url))
	if !strings.Contains(dom, `id="summary"`) {
		t.Fatalf("DOM dump does not hold the report:\n%.500s", dom)
	}
	// headline numbers as the browser parsed them
	checkHeadlines(t, dir, dom)

	// every plot rendered, with at least one SVG path per data mark
	want := map[string]bool{"fig_estimators": true, "fig_roh_classes": true, "fig_age_classes": true, "fig_run_lengths": true, "fig_painting": true,
		"fig_hwe_qq": true, "fig_f_site": true, "fig_pop_fis": true, "fig_pop_fst": true, "fig_quality": true}
	for _, m := range reFigure.FindAllStringSubmatch(dom, -1) {
		id, body := m[1], m[5]
		pts, _ := strconv.Atoi(m[3])
		delete(want, id)
		if !strings.Contains(body, "<svg") || strings.Contains(body, `data-empty="1"`) {
			t.Errorf("%s: no SVG in the rendered page", id)
			continue
		}
		if pts == 0 {
			t.Errorf("%s: zero data marks", id)
		}
		if paths := strings.Count(body, "<path"); paths < pts {
			t.Errorf("%s: %d SVG paths for %d data marks", id, paths, pts)
		}
	}
	for id := range want {
		t.Errorf("figure %s missing from the rendered page", id)
	}
	// expected mark counts from the data: one bar per sample, one bin per
	// f_site bin, one cell per population pair
	for id, n := range map[string]int{"fig_roh_classes": len(names), "fig_f_site": fSiteBins, "fig_pop_fst": 16, "fig_pop_fis": 4, "fig_hwe_qq": 60} {
		if !regexp.MustCompile(`data-plot="` + id + `" data-kind="\w+" data-points="` + strconv.Itoa(n) + `"`).MatchString(dom) {
			t.Errorf("%s: expected %d marks", id, n)
		}
	}

	// the hostile name is text, not an element
	if !strings.Contains(dom, "&lt;img src=x onerror=alert(1)&gt;") {
		t.Error("hostile name not shown as text")
	}
	if strings.Contains(dom, "<img") {
		t.Error("an <img> element was created from a sample name")
	}

	// screenshot: right size and not blank
	shot := filepath.Join(t.TempDir(), "report.png")
	runChromium(t, bin, "--window-size=1200,2400", "--screenshot="+shot, url)
	f, err := os.Open(shot)
	must(t, err)
	defer f.Close()
	img, err := png.Decode(f)
	must(t, err)
	if b := img.Bounds(); b.Dx() != 1200 || b.Dy() != 2400 {
		t.Errorf("screenshot is %v", b)
	}
	if c := distinctColours(img); c < 50 {
		t.Errorf("screenshot has only %d distinct colours: blank page?", c)
	}

	// a sample page as the browser sees it: numbers equal the row
	rows := rowsOf(t, filepath.Join(dir, "samples.tsv"))
	st := stems(names)
	page := string(runChromium(t, bin, "--dump-dom", "file://"+filepath.Join(dir, "samples", st[0]+".html")))
	ms := reDataCol.FindAllStringSubmatch(page, -1)
	if len(ms) < 20 || !strings.Contains(page, "<h1>&lt;img src=x onerror=alert(1)&gt;</h1>") {
		t.Fatalf("sample page of %q not rendered as expected (%d numbers)", names[0], len(ms))
	}
	for _, m := range ms {
		col := strings.TrimSuffix(m[1], "_compare")
		if got := html.UnescapeString(m[2]); !sameNumber(got, rows[0][col]) {
			t.Errorf("sample page %s = %q, row has %q", col, got, rows[0][col])
		}
	}
	// the sample page prints (print CSS) to a short PDF
	pdf := filepath.Join(t.TempDir(), "sample.pdf")
	runChromium(t, bin, "--no-pdf-header-footer", "--print-to-pdf="+pdf, "file://"+filepath.Join(dir, "samples", st[0]+".html"))
	pb, err := os.ReadFile(pdf)
	must(t, err)
	pagesInPDF := len(regexp.MustCompile(`/Type\s*/Page[^s]`).FindAll(pb, -1))
	if !bytes.HasPrefix(pb, []byte("%PDF")) || pagesInPDF < 1 || pagesInPDF > 6 {
		t.Errorf("printed sample page: %d bytes, %d pages", len(pb), pagesInPDF)
	}
	t.Logf("sample page prints to %d PDF pages", pagesInPDF)
}

func distinctColours(img image.Image) int {
	seen := map[uint32]bool{}
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 3 {
		for x := b.Min.X; x < b.Max.X; x += 3 {
			r, g, bl, _ := img.At(x, y).RGBA()
			seen[(r>>8)<<16|(g>>8)<<8|bl>>8] = true
		}
	}
	return len(seen)
}
