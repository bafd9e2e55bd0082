package main

import (
	"crypto/sha256"
	"encoding/hex"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Without --ages, --ancestral-epochs, --pairs and --herd-candidates the
// files are byte for byte those of the simulator before these options
// existed: SHA-256 of each file written by main at fc7a514 with the same
// arguments.
func TestSimulateDefaultOutputsUnchanged(t *testing.T) {
	dir := t.TempDir()
	runs := []struct {
		args  []string
		files map[string]string
	}{
		{[]string{"--seed", "7", "--design", "full_sib,first_cousin,closed_herd:3:10:2", "--replicates", "2",
			"--chromosomes", "a:20e6:25,b:10e6", "--site-spacing", "20000", "--depth", "4"},
			map[string]string{
				"pedigree.tsv":         "da261ed258575024d42767db01abf1242311fb81f2bb6faf3fc5aaacbab4230b",
				"simulated.vcf.gz":     "889f3a2b751de4f2ae358773e738fcda379278cd686339221cc907c9be77f066",
				"simulated.vcf.gz.tbi": "737af19233512eb0e880b4b985e4bfad7e6c974e02968edda4c1053a08d93f51",
				"truth_samples.tsv":    "5123bd61e5567b3e2964a49d78698b228b5d0d29e7a157e28bc787fd010fa16d",
				"truth_segments.tsv":   "ee5e51c55e9a99ab2b269ccf39159e01adfca2eabffc17bf59156b4d32294edc",
			}},
		{[]string{"--seed", "7", "--design", "selfing:3,parent_offspring", "--replicates", "3", "--truth-only"},
			map[string]string{
				"pedigree.tsv":       "84020ce331f4604bd8be3508c8e034d887885d3a0763b0e86c5f8b2560ec3b61",
				"truth_samples.tsv":  "833ec3df496eaddc0ecaf42e25123973c880cb3a59dc27ee8d4791fa08fb7192",
				"truth_segments.tsv": "1ca8bd61d1e48a7f03379f788a22e3ac82b78c0e5ab5d316251942a6b1a6e1a7",
			}},
	}
	for k, r := range runs {
		out := filepath.Join(dir, string(rune('a'+k)))
		if code, _, errText := runCmdline(t, append([]string{"simulate", "-o", out}, r.args...)...); code != exitOK {
			t.Fatalf("exit %d: %s", code, errText)
		}
		for name, want := range r.files {
			b, err := os.ReadFile(filepath.Join(out, name))
			if err != nil {
				t.Fatal(err)
			}
			sum := sha256.Sum256(b)
			if got := hex.EncodeToString(sum[:]); got != want {
				t.Errorf("%v: %s changed (sha256 %s)", r.args, name, got)
			}
		}
	}
}

func TestSimulateAgesAndPairs(t *testing.T) {
	dir := t.TempDir()
	pairs := filepath.Join(dir, "pairs.txt")
	os.WriteFile(pairs, []byte("sire\tdam\nfull_sib_r1_g1_buck full_sib_r1_g1_doe\nfull_sib_r1_sire\tfull_sib_r1_dam\n"), 0o644)
	out := filepath.Join(dir, "out")
	code, _, errText := runCmdline(t, "simulate", "-o", out, "--truth-only", "--seed", "3",
		"--design", "full_sib,closed_herd:3:12:2", "--ancestral-epochs", "8:10:0.3,64:4:0.3",
		"--pairs", pairs, "--herd-candidates")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errText)
	}
	read := func(name string) []string {
		b, err := os.ReadFile(filepath.Join(out, name))
		if err != nil {
			t.Fatal(err)
		}
		return strings.Split(strings.TrimSpace(string(b)), "\n")
	}
	seg := read("truth_segments.tsv")
	if want := "sample\tchrom\tstart\tend\tlength_bp\tstart_cm\tend_cm\tn_sites\tsource\tancestor\tancestral_epoch\tmeioses_sire_side\tmeioses_dam_side\tancestor_generations"; seg[0] != want {
		t.Fatalf("segments header %q", seg[0])
	}
	sawFocal := false
	for _, l := range seg[1:] {
		f := strings.Split(l, "\t")
		if f[0] == "full_sib_r1_focal" && f[8] == "pedigree" {
			sawFocal = true
			// full-sib mating: the common ancestor is a grandparent (common practice)
			if f[13] != "2" || (f[9] != "full_sib_r1_sire" && f[9] != "full_sib_r1_dam") {
				t.Errorf("full-sib focal segment: %q", l)
			}
		}
	}
	if !sawFocal {
		t.Error("no pedigree segment in the full-sib focal animal")
	}
	samples := read("truth_samples.tsv")
	if !strings.HasSuffix(samples[0], "\ttrue_f_within_256g\ttrue_f_ancestral\ttrue_f_total") || !strings.Contains(samples[0], "n_segments\ttrue_f_within_2g\t") {
		t.Errorf("samples header %q", samples[0])
	}
	pr := read("truth_pairs.tsv")
	sires, dams := read("candidate_sires.txt"), read("candidate_dams.txt")
	if len(sires) != 6 || len(dams) != 6 || len(pr) != 1+2+36 {
		t.Fatalf("%d sires, %d dams, %d pair lines", len(sires), len(dams), len(pr))
	}
	if !strings.HasPrefix(pr[1], "full_sib_r1_g1_buck\tfull_sib_r1_g1_doe\t0.25\t") {
		t.Errorf("pair line %q", pr[1])
	}
}

// A pairs file naming an animal the simulation lacks is an input error
// naming file and line, and nothing is written.
func TestSimulateBadPairs(t *testing.T) {
	dir := t.TempDir()
	pairs := filepath.Join(dir, "pairs.txt")
	os.WriteFile(pairs, []byte("full_sib_r1_sire full_sib_r1_dam\nfull_sib_r1_sire nobody\n"), 0o644)
	out := filepath.Join(dir, "out")
	code, _, errText := runCmdline(t, "simulate", "-o", out, "--truth-only", "--design", "full_sib", "--pairs", pairs)
	if code != exitBadInput || !strings.Contains(errText, "pairs.txt:2") {
		t.Errorf("exit %d, %q", code, errText)
	}
	if _, err := os.Stat(filepath.Join(out, "truth_samples.tsv")); err == nil {
		t.Error("wrote output despite the bad pairs file")
	}
	for _, bad := range []string{"8:10", "0:10:0.3", "8:10:0.7,16:3:0.5"} {
		if code, _, _ := runCmdline(t, "simulate", "-o", out, "--design", "full_sib", "--ancestral-epochs", bad); code != exitBadInput {
			t.Errorf("--ancestral-epochs %s: exit %d", bad, code)
		}
	}
}
