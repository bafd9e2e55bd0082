package main

import (
	"bytes"
	"context"
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
