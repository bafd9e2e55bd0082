package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestSimulateCommand(t *testing.T) {
	dir := t.TempDir()
	args := func(out string) []string {
		return []string{"simulate", "-o", out, "--seed", "5", "--design", "full_sib,half_sib", "--design", "selfing:2",
			"--chromosomes", "a:20e6:20,b:10e6", "--site-spacing", "20000", "--missing-rate", "0.01"}
	}
	for _, sub := range []string{"one", "two"} {
		if code, _, errText := runCmdline(t, args(filepath.Join(dir, sub))...); code != exitOK {
			t.Fatalf("exit %d: %s", code, errText)
		}
	}
	for _, name := range []string{"simulated.vcf.gz", "simulated.vcf.gz.tbi", "truth_samples.tsv", "truth_segments.tsv", "pedigree.tsv"} {
		a, err1 := os.ReadFile(filepath.Join(dir, "one", name))
		b, err2 := os.ReadFile(filepath.Join(dir, "two", name))
		if err1 != nil || err2 != nil {
			t.Fatalf("%s: %v %v", name, err1, err2)
		}
		if !bytes.Equal(a, b) {
			t.Errorf("%s differs between two runs with the same seed", name)
		}
	}
	truth, _ := os.ReadFile(filepath.Join(dir, "one", "truth_samples.tsv"))
	// Selfing twice gives F = 3/4 (common practice).
	if !strings.Contains(string(truth), "selfing_r1_s2\t1\tselfing:2\tfocal\t0.75\t") {
		t.Errorf("truth_samples.tsv lacks the selfed focal line:\n%s", truth)
	}
}

func TestSimulateCommandUsage(t *testing.T) {
	for _, args := range [][]string{
		{"simulate"},
		{"simulate", "--design", "no_such_design"},
		{"simulate", "--design", "full_sib", "--chromosomes", "1:x"},
		{"simulate", "--design", "full_sib", "--spectrum", "flat"},
	} {
		if code, _, _ := runCmdline(t, args...); code != exitBadInput {
			t.Errorf("%v: exit %d, want %d", args, code, exitBadInput)
		}
	}
}

func TestSimulateTruthOnly(t *testing.T) {
	out := filepath.Join(t.TempDir(), "truth")
	code, _, errText := runCmdline(t, "simulate", "-o", out, "--design", "parent_offspring", "--replicates", "4", "--truth-only")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errText)
	}
	if _, err := os.Stat(filepath.Join(out, "simulated.vcf.gz")); err == nil {
		t.Error("--truth-only wrote a VCF")
	}
	seg, err := os.ReadFile(filepath.Join(out, "truth_segments.tsv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(seg)), "\n")
	if lines[0] != "sample\tchrom\tstart\tend\tlength_bp\tstart_cm\tend_cm\tn_sites" || len(lines) < 2 {
		t.Fatalf("segments table:\n%s", seg)
	}
	if !strings.HasSuffix(lines[1], "\tNA") {
		t.Errorf("n_sites should be NA without sites: %q", lines[1])
	}
}
