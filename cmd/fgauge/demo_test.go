package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

func TestDemo(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "demo")
	start := time.Now()
	code, out, errText := runCmdline(t, "demo", "-o", dir)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errText)
	}
	if el := time.Since(start); el > time.Minute {
		t.Errorf("demo took %v, budget one minute", el)
	}
	// The planned matings and their textbook pedigree F (common practice).
	for _, want := range []string{
		"BROOK-021", "full-sib mating", "0.250",
		"sire STONE-002 mated to his own daughter",
		"half-sib mating: both parents by FERN-001", "0.125",
		"first-cousin mating", "0.062",
		"Caution:",
		"Mating plan for next season", "Caution: a mating plan is advice",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("summary lacks %q:\n%s", want, out)
		}
	}
	// A second run into the same folder replaces the scan and reads its
	// genomic F back.
	code, out, errText = runCmdline(t, "demo", "-o", dir)
	if code != exitOK || !strings.Contains(out, "Most inbred animals (by genomic ") {
		t.Errorf("second run: exit %d, stderr %q, summary:\n%s", code, errText, out)
	}
	for _, name := range []string{"scan/samples.tsv", "scan/runs.tsv", "cohort.vcf.gz", "cohort.vcf.gz.tbi", "pedigree.tsv", "herds.tsv", "truth_samples.tsv", "truth_segments.tsv",
		"mate/pairs.tsv", "mate/allocation.tsv", "mate/run.json", "mate/mate.html"} {
		if _, err := os.Stat(filepath.Join(dir, name)); err != nil {
			t.Error(err)
		}
	}
}
