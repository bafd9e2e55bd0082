package main

import (
	"bytes"
	"context"
	"fgauge/cmd/fgauge/internal/outdir"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// reportRun runs one fgauge command line in-process.
func reportRun(args ...string) (int, string) {
	var out, errb bytes.Buffer
	env := &runEnv{stdout: &out, stderr: &errb, stdin: strings.NewReader(""), argv: append([]string{"fgauge"}, args...)}
	code := run(context.Background(), env, args)
	return code, errb.String()
}

func TestReportCommand(t *testing.T) {
	dir := t.TempDir()
	samples := "sample\tcall_rate\thet_rate\tf_hom\tf_roh\tflags\n" +
		"HILL-001\t0.99\t0.31\t0.02\t0.03\t.\n" +
		"HILL-002#b\t0.97\t0.27\t0.09\t0.11\tlow_call_rate\n" +
		"MOOR-001\t0.98\t0.30\t0.01\t0.02\t.\n"
	if err := os.WriteFile(filepath.Join(dir, "samples.tsv"), []byte(samples), 0o644); err != nil {
		t.Fatal(err)
	}
	hl := filepath.Join(t.TempDir(), "highlight.txt")
	if err := os.WriteFile(hl, []byte("# animals to look at\nHILL-002#b\n\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name  string
		args  []string
		code  int
		files []string
	}{
		{"report only", []string{"report", dir}, exitOK, []string{"report.html"}},
		{"flags after folder", []string{"report", dir, "--per-sample", "--highlight", hl}, exitOK,
			[]string{"samples/HILL-002_b.html", "samples/HILL-002_b.json", "samples/index.html"}},
		{"help", []string{"report", "--help"}, exitOK, nil},
		{"no folder", []string{"report"}, exitBadInput, nil},
		{"two folders", []string{"report", dir, dir}, exitBadInput, nil},
		{"not a scan folder", []string{"report", t.TempDir()}, exitBadInput, nil},
		{"missing highlight file", []string{"report", dir, "--highlight", filepath.Join(dir, "nope")}, exitBadInput, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, stderr := reportRun(tc.args...)
			if code != tc.code {
				t.Fatalf("exit %d, want %d; stderr:\n%s", code, tc.code, stderr)
			}
			for _, f := range tc.files {
				if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
					t.Errorf("%s not written: %v", f, err)
				}
			}
		})
	}
	// only the highlighted sample got a page
	if _, err := os.Stat(filepath.Join(dir, "samples", "HILL-001.html")); err == nil {
		t.Error("page written for a sample not in --highlight")
	}
}

// TestReportROHClasses: the report's length classes are those the scan
// used (run.json roh.classes_mb), so a 0.5 Mb class shows in the legend of
// the cohort report and in the table of every sample page (it used to be
// dropped, the legend starting at "< 1 Mb").
func TestReportROHClasses(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	code, msg := reportRun("scan", "../../testdata/cohort189.vcf.gz", "-o", out, "--no-progress", "--roh-classes", "0.5,1,2", "--report")
	if code != exitOK {
		t.Fatalf("scan: exit %d: %s", code, msg)
	}
	html, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"&lt; 0.5 Mb", "0.5 Mb–1 Mb", "1 Mb–2 Mb", "&gt; 2 Mb"} {
		if !bytes.Contains(html, []byte(want)) {
			t.Errorf("report.html lacks the band %q", want)
		}
	}
	if bytes.Contains(html, []byte("&lt; 1 Mb")) {
		t.Error("report.html still starts the bands at 1 Mb")
	}
	// The sample table explains its columns with their declarations.
	if want := `<th title="` + outdir.ColumnDoc("samples.tsv", "call_rate") + `">call_rate</th>`; !bytes.Contains(html, []byte(want)) {
		t.Errorf("report.html lacks %s", want)
	}
	if code, msg := reportRun("report", out, "--per-sample"); code != exitOK {
		t.Fatalf("report: exit %d: %s", code, msg)
	}
	pages, _ := filepath.Glob(filepath.Join(out, "samples", "*.html"))
	n := 0
	for _, p := range pages {
		if filepath.Base(p) == "index.html" {
			continue
		}
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		n++
		if !bytes.Contains(b, []byte("<code>f_roh_gt_0p5mb</code>")) || !bytes.Contains(b, []byte("runs of at least 0.5 Mb")) {
			t.Errorf("%s lacks the 0.5 Mb class row", p)
			break
		}
	}
	if n != 189 {
		t.Errorf("%d sample pages, want 189", n)
	}
}
