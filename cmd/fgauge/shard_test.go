package main

import (
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"runtime"
	"slices"
	"strings"
	"testing"

	"fgauge/cmd/fgauge/internal/plan"
	"fgauge/cmd/fgauge/internal/shard"
	"fgauge/genedrop"
)

// shardSplit is one way of cutting an input into shards: the --region
// values of each shard.
type shardSplit struct {
	name   string
	shards [][]string
}

// scanShards scans each shard of sp with --state-out and merges the states
// (given in reverse order, to show that merge orders them), giving merge
// mergeOpts.
func scanShards(t *testing.T, dir, input string, opts []string, sp shardSplit, mergeOpts ...string) string {
	t.Helper()
	var states []string
	for i, regs := range sp.shards {
		out := filepath.Join(dir, fmt.Sprintf("%s_shard%d", sp.name, i+1))
		state := out + ".state"
		args := append([]string{"scan", input, "-o", out, "--state-out", state, "--no-progress", "--threads", "2"}, opts...)
		for _, r := range regs {
			args = append(args, "--region", r)
		}
		if code, _, errText := runCmdline(t, args...); code != exitOK {
			t.Fatalf("%s shard %d: exit %d: %s", sp.name, i+1, code, errText)
		}
		states = append([]string{state}, states...)
	}
	merged := filepath.Join(dir, sp.name+"_merged")
	args := append(append([]string{"merge", "-o", merged, "--threads", "2"}, mergeOpts...), states...)
	if code, _, errText := runCmdline(t, args...); code != exitOK {
		t.Fatalf("%s merge: exit %d: %s", sp.name, code, errText)
	}
	return merged
}

func scanSingle(t *testing.T, dir, input string, opts []string) string {
	t.Helper()
	out := filepath.Join(dir, "single")
	args := append([]string{"scan", input, "-o", out, "--no-progress", "--threads", "2"}, opts...)
	if code, _, errText := runCmdline(t, args...); code != exitOK {
		t.Fatalf("single pass: exit %d: %s", code, errText)
	}
	return out
}

func gunzipFile(t *testing.T, path string) []byte {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f) // reads every member of a BGZF file
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	b, err := io.ReadAll(zr)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return b
}

// summaryJSON reads run.json without the fields that legitimately differ
// between a single pass and a merge: wall time, command line and the
// merge's own "shards" section.
func summaryJSON(t *testing.T, path string) map[string]any {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(raw, &m); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	for _, k := range []string{"wall_seconds", "command_line", "shards", "memory"} {
		delete(m, k)
	}
	return m
}

// assertSameOutputs checks that the merged folder holds byte-identical
// tables, the same site rows and the same run.json summary as the single pass.
func assertSameOutputs(t *testing.T, single, merged string) {
	t.Helper()
	n := 0
	for _, name := range []string{"samples.tsv", "runs.tsv", "populations.tsv", "populations_pairwise.tsv"} {
		a, errA := os.ReadFile(filepath.Join(single, name))
		b, errB := os.ReadFile(filepath.Join(merged, name))
		if errA != nil && errB != nil {
			continue
		}
		if errA != nil || errB != nil {
			t.Errorf("%s: present in one output only (%v, %v)", name, errA, errB)
			continue
		}
		n++
		if !bytes.Equal(a, b) {
			t.Errorf("%s differs:\nsingle:\n%.600s\nmerged:\n%.600s", name, a, b)
		}
	}
	if n < 1 {
		t.Errorf("no table compared")
	}
	for _, name := range []string{"sites.tsv.gz", "sites_by_population.tsv.gz"} {
		if _, err := os.Stat(filepath.Join(single, name)); err != nil {
			continue
		}
		a := gunzipFile(t, filepath.Join(single, name))
		b := gunzipFile(t, filepath.Join(merged, name))
		if !bytes.Equal(a, b) {
			t.Errorf("%s: joined shard rows differ from the single pass (%d vs %d bytes)", name, len(a), len(b))
		}
		if bytes.Count(a, []byte("\n")) < 2 {
			t.Errorf("%s has no rows", name)
		}
	}
	// The merged table has its tabix index as the single pass's has (the
	// bytes differ with the BGZF blocks; vcfscan's tests check indexes).
	_, errA := os.Stat(filepath.Join(single, "sites.tsv.gz.tbi"))
	_, errB := os.Stat(filepath.Join(merged, "sites.tsv.gz.tbi"))
	if (errA == nil) != (errB == nil) {
		t.Errorf("sites.tsv.gz.tbi: single pass %v, merge %v", errA, errB)
	}
	a, b := summaryJSON(t, filepath.Join(single, "run.json")), summaryJSON(t, filepath.Join(merged, "run.json"))
	if !reflect.DeepEqual(a, b) {
		for k := range a {
			if !reflect.DeepEqual(a[k], b[k]) {
				t.Errorf("run.json %q differs:\nsingle %v\nmerged %v", k, a[k], b[k])
			}
		}
	}
}

// writePopulations assigns the samples of a VCF to three invented herds in turn.
func writePopulations(t *testing.T, dir, vcf string) string {
	t.Helper()
	zr, err := gzip.NewReader(mustOpen(t, vcf))
	if err != nil {
		t.Fatal(err)
	}
	raw, _ := io.ReadAll(io.LimitReader(zr, 1<<22))
	var samples []string
	for _, line := range strings.Split(string(raw), "\n") {
		if strings.HasPrefix(line, "#CHROM") {
			samples = strings.Split(line, "\t")[9:]
			break
		}
	}
	var b strings.Builder
	herds := []string{"north_farm", "river_farm", "hill_farm"}
	for i, s := range samples {
		fmt.Fprintf(&b, "%s\t%s\n", s, herds[i%3])
	}
	return writeTestInput(t, dir, "populations.tsv", b.String())
}

func mustOpen(t *testing.T, path string) *os.File {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { f.Close() })
	return f
}

// simulatedInput writes a three-chromosome simulated cohort (invented
// herds: full-sib, half-sib and first-cousin matings) with a tabix index.
func simulatedInput(t *testing.T, dir string) string {
	t.Helper()
	return simulatedInputDepth(t, dir, "herds.vcf.gz", 0)
}

// simulatedInputDepth is simulatedInput with simulated reads of the given
// mean depth (GT:DP:PL) when depth > 0.
func simulatedInputDepth(t *testing.T, dir, name string, depth float64) string {
	t.Helper()
	var designs []genedrop.Design
	for _, s := range []string{"full_sib", "half_sib", "first_cousin"} {
		d, err := genedrop.ParseDesign(s)
		if err != nil {
			t.Fatal(err)
		}
		designs = append(designs, d)
	}
	res, err := genedrop.Run(genedrop.Config{
		Seed:          11,
		Chromosomes:   []genedrop.Chromosome{{Name: "1", LengthBP: 30_000_000, LengthCM: 30}, {Name: "2", LengthBP: 20_000_000, LengthCM: 20}, {Name: "3", LengthBP: 12_000_000, LengthCM: 12}},
		Designs:       designs,
		Replicates:    2,
		SiteSpacing:   15_000,
		MissingRate:   0.01,
		GenotypeError: 0.001,
		Depth:         depth,
	})
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, name)
	if err := genedrop.WriteVCFBGZF(path, res); err != nil {
		t.Fatal(err)
	}
	// The simulated pedigree beside it, for --pedigree.
	var ped bytes.Buffer
	if err := genedrop.WritePedigree(&ped, res); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(strings.TrimSuffix(path, ".vcf.gz")+"_pedigree.tsv", ped.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestShardMergeIdentity(t *testing.T) {
	dir := t.TempDir()
	sim := simulatedInput(t, dir)
	simDepth := simulatedInputDepth(t, dir, "herds_reads.vcf.gz", 6)
	cases := []struct {
		name    string
		input   string
		opts    func(dir string) []string
		splits  []shardSplit
		minRuns int // runs.tsv rows the single pass must have, so that the check is not empty
	}{
		{
			// Real data: 1000 Genomes chr22 excerpt (r-bioc-variantannotation),
			// one chromosome, so every split cuts it.
			name: "chr22", input: "../../testdata/chr22_1000g.vcf.gz", minRuns: 5,
			opts: func(string) []string { return nil },
			splits: []shardSplit{
				{"two", [][]string{{"22:1-50600000"}, {"22:50600001-"}}},
				{"three", [][]string{{"22:1-50450000"}, {"22:50450001-50750000"}, {"22:50750001-"}}},
				{"seven", [][]string{{"22:1-50400000"}, {"22:50400001-50500000"}, {"22:50500001-50600000"},
					{"22:50600001-50700000"}, {"22:50700001-50800000"}, {"22:50800001-50900000"}, {"22:50900001-"}}},
			},
		},
		{
			// The same without runs of homozygosity.
			name: "chr22_no_roh", input: "../../testdata/chr22_1000g.vcf.gz",
			opts: func(string) []string { return []string{"--no-roh"} },
			splits: []shardSplit{
				{"two", [][]string{{"22:1-50600000"}, {"22:50600001-"}}},
			},
		},
		{
			// Real data: cyvcf2's 189-sample test file, with invented herds.
			name: "cohort189", input: "../../testdata/cohort189.vcf.gz",
			opts: func(d string) []string {
				return []string{"--populations", writePopulations(t, d, "../../testdata/cohort189.vcf.gz"), "--jackknife-block-mb", "0.001"}
			},
			splits: []shardSplit{
				{"two", [][]string{{"1:1-12000"}, {"1:12001-"}}},
				{"three", [][]string{{"1:1-11000"}, {"1:11001-14000"}, {"1:14001-"}}},
				{"seven", [][]string{{"1:1-10500"}, {"1:10501-11000"}, {"1:11001-11500"}, {"1:11501-12000"},
					{"1:12001-13000"}, {"1:13001-14500"}, {"1:14501-"}}},
			},
		},
		{
			// Simulated three-chromosome cohort: whole chromosomes and
			// split ones in one merge.
			name: "simulated", input: sim, minRuns: 20,
			opts: func(d string) []string {
				return []string{"--populations", writePopulations(t, d, sim), "--jackknife-block-mb", "2",
					"--pedigree", strings.TrimSuffix(sim, ".vcf.gz") + "_pedigree.tsv"}
			},
			splits: []shardSplit{
				{"two", [][]string{{"1"}, {"2", "3"}}},
				{"three", [][]string{{"1:1-17000000"}, {"1:17000001-", "2"}, {"3"}}},
				{"seven", [][]string{{"1:1-5000000"}, {"1:5000001-13000000"}, {"1:13000001-22000000"}, {"1:22000001-"},
					{"2:1-10000000"}, {"2:10000001-"}, {"3"}}},
			},
		},
		{
			// The same cohort with the rule-based detector and frequencies
			// from the populations.
			name: "simulated_rules", input: sim, minRuns: 5,
			opts: func(d string) []string {
				return []string{"--roh-method", "rules", "--rules-min-sites", "20"}
			},
			splits: []shardSplit{
				{"three", [][]string{{"1:1-9000000"}, {"1:9000001-", "2:1-4000000"}, {"2:4000001-", "3"}}},
			},
		},
		{
			// Simulated reads: the HMM uses the likelihoods (PL), fits its
			// parameters per sample and chromosome, and the estimators take
			// frequencies from INFO.
			name: "simulated_reads_fit", input: simDepth, minRuns: 20,
			opts: func(string) []string {
				return []string{"--fit", "--freqs-from-info", "POOL_AF"}
			},
			splits: []shardSplit{
				{"three", [][]string{{"1:1-11000000"}, {"1:11000001-23456789"}, {"1:23456790-", "2", "3"}}},
			},
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			d := filepath.Join(dir, tc.name)
			if err := os.MkdirAll(d, 0o755); err != nil {
				t.Fatal(err)
			}
			opts := tc.opts(d)
			single := scanSingle(t, d, tc.input, opts)
			if hdr, _ := os.ReadFile(filepath.Join(single, "samples.tsv")); slices.Contains(opts, "--pedigree") && !bytes.Contains(hdr, []byte("\tf_pedigree\n")) {
				t.Errorf("samples.tsv lacks f_pedigree")
			}
			runs, _ := os.ReadFile(filepath.Join(single, "runs.tsv"))
			if n := bytes.Count(runs, []byte("\n")) - 1; tc.minRuns > 0 && n < tc.minRuns {
				t.Errorf("single pass found %d runs, want at least %d for a meaningful check", n, tc.minRuns)
			}
			for _, sp := range tc.splits {
				t.Run(sp.name, func(t *testing.T) {
					assertSameOutputs(t, single, scanShards(t, d, tc.input, opts, sp))
				})
			}
		})
	}
}

// shardFixture scans cohort189 as two shards and returns the state paths.
func shardFixture(t *testing.T, dir string, extra ...string) (input string, states []string) {
	t.Helper()
	input = "../../testdata/cohort189.vcf.gz"
	for i, r := range []string{"1:1-12000", "1:12001-"} {
		out := filepath.Join(dir, fmt.Sprintf("s%d", i+1))
		st := out + ".state"
		args := append([]string{"scan", input, "--region", r, "-o", out, "--state-out", st, "--no-progress"}, extra...)
		if code, _, e := runCmdline(t, args...); code != exitOK {
			t.Fatalf("exit %d: %s", code, e)
		}
		states = append(states, st)
	}
	return input, states
}

// mergeErr merges states into a fresh folder through the shard package
// and returns the error.
func mergeErr(t *testing.T, states []string) error {
	t.Helper()
	_, err := shard.Merge(context.Background(), shard.MergeConfig{States: states, Out: filepath.Join(t.TempDir(), "m"), Threads: 1, Stderr: io.Discard})
	return err
}

func TestMergeRejects(t *testing.T) {
	dir := t.TempDir()
	input, states := shardFixture(t, dir)
	scanState := func(name string, args ...string) string {
		out := filepath.Join(dir, name)
		st := out + ".state"
		a := append([]string{"scan", input, "-o", out, "--state-out", st, "--no-progress"}, args...)
		if code, _, e := runCmdline(t, a...); code != exitOK {
			t.Fatalf("exit %d: %s", code, e)
		}
		return st
	}
	otherOpts := scanState("opts", "--region", "1:12001-", "--min-call-rate", "0.5")
	overlap := scanState("overlap", "--region", "1:11000-13000")
	whole := scanState("whole")
	raw, err := os.ReadFile(states[1])
	if err != nil {
		t.Fatal(err)
	}
	corrupt := writeTestInput(t, dir, "corrupt.state", string(append(append([]byte(nil), raw[:len(raw)-1]...), raw[len(raw)-1]^1)))
	truncated := writeTestInput(t, dir, "truncated.state", string(raw[:len(raw)/2]))
	notState := writeTestInput(t, dir, "not.state", "sample\tpopulation\n")
	// A state of another input: the same records, one more header line.
	otherInput := filepath.Join(dir, "other.vcf")
	text := gunzipFile(t, input)
	text = bytes.Replace(text, []byte("##fileformat=VCFv4.1\n"), []byte("##fileformat=VCFv4.1\n##note=copy\n"), 1)
	if err := os.WriteFile(otherInput, text, 0o644); err != nil {
		t.Fatal(err)
	}
	otherOut := filepath.Join(dir, "otherin")
	if code, _, e := runCmdline(t, "scan", otherInput, "-o", otherOut, "--state-out", otherOut+".state", "--no-progress"); code != exitOK {
		t.Fatalf("exit %d: %s", code, e)
	}
	otherIn := otherOut + ".state"
	// States edited to claim another version or sample set (the options
	// fingerprint would differ first in practice).
	editState := func(name string, edit func(*shard.State)) string {
		st, err := shard.ReadFile(states[1])
		if err != nil {
			t.Fatal(err)
		}
		edit(st)
		st.SitesFile, _ = filepath.Abs(shard.SiteTablePath(states[1], st.SitesFile))
		p := filepath.Join(dir, name+".state")
		if err := shard.WriteFile(p, st); err != nil {
			t.Fatal(err)
		}
		return p
	}
	otherVersion := editState("version", func(s *shard.State) { s.Version = "0.0.1" })
	otherSamples := editState("samples", func(s *shard.State) { s.Samples = s.Samples[1:] })
	for _, tc := range []struct {
		name   string
		states []string
		want   error
		words  string
	}{
		{"options", []string{states[0], otherOpts}, shard.ErrMismatch, "min-call-rate"},
		{"version", []string{states[0], otherVersion}, shard.ErrMismatch, "versions differ"},
		{"samples", []string{states[0], otherSamples}, shard.ErrMismatch, "sample sets differ"},
		{"overlap", []string{states[0], states[1], overlap}, shard.ErrMismatch, "overlap"},
		{"whole and part", []string{states[0], whole}, shard.ErrMismatch, "whole input"},
		{"other input", []string{states[0], otherIn}, shard.ErrMismatch, "inputs differ"},
		{"corrupt", []string{states[0], corrupt}, shard.ErrCorrupt, "checksum"},
		{"truncated", []string{truncated, states[0]}, shard.ErrCorrupt, "truncated"},
		{"not a state", []string{states[0], notState}, shard.ErrCorrupt, "header"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			err := mergeErr(t, tc.states)
			if !errors.Is(err, tc.want) {
				t.Fatalf("err = %v, want %v", err, tc.want)
			}
			if !strings.Contains(err.Error(), tc.words) {
				t.Errorf("message %q lacks %q", err, tc.words)
			}
			code, _, errText := runCmdline(t, append([]string{"merge", "-o", filepath.Join(dir, "m_"+strings.ReplaceAll(tc.name, " ", "_"))}, tc.states...)...)
			if code != exitBadInput {
				t.Errorf("exit %d, want %d: %s", code, exitBadInput, errText)
			}
			named := false
			for _, s := range tc.states {
				named = named || strings.Contains(errText, s)
			}
			if !named {
				t.Errorf("message names no state file: %s", errText)
			}
		})
	}
	// A site table edited after the state was written is caught too.
	edited := filepath.Join(dir, "s2", "sites.tsv.gz")
	b, _ := os.ReadFile(edited)
	os.WriteFile(edited, append(b[:len(b):len(b)], 0), 0o644)
	if err := mergeErr(t, states); !errors.Is(err, shard.ErrCorrupt) {
		t.Errorf("edited site table: err = %v", err)
	}
	code, out, _ := runCmdline(t, "merge", "--check", states[0], states[1], corrupt)
	if code != exitBadInput || strings.Count(out, "bad\t") != 2 || !strings.Contains(out, "ok\t"+states[0]) {
		t.Errorf("merge --check: exit %d, output:\n%s", code, out)
	}
}

func TestSkipIfValidState(t *testing.T) {
	dir := t.TempDir()
	input, states := shardFixture(t, dir)
	st0, err := os.Stat(states[0])
	if err != nil {
		t.Fatal(err)
	}
	rerun := func(extra ...string) string {
		args := append([]string{"scan", input, "--region", "1:1-12000", "-o", filepath.Join(dir, "s1"), "--force",
			"--state-out", states[0], "--skip-if-valid-state", "--no-progress"}, extra...)
		code, _, e := runCmdline(t, args...)
		if code != exitOK {
			t.Fatalf("exit %d: %s", code, e)
		}
		return e
	}
	if e := rerun(); !strings.Contains(e, "skipped") {
		t.Errorf("valid state not skipped: %s", e)
	}
	if st, _ := os.Stat(states[0]); !st.ModTime().Equal(st0.ModTime()) {
		t.Error("state rewritten although valid")
	}
	if e := rerun("--min-call-rate", "0.5"); strings.Contains(e, "skipped") || !strings.Contains(e, "another run") {
		t.Errorf("state of other options was skipped: %s", e)
	}
	raw, _ := os.ReadFile(states[0])
	os.WriteFile(states[0], raw[:len(raw)-3], 0o644)
	if e := rerun(); strings.Contains(e, "skipped") || !strings.Contains(e, "again") {
		t.Errorf("truncated state was skipped: %s", e)
	}
	if _, err := shard.ReadFile(states[0]); err != nil {
		t.Errorf("state not rewritten: %v", err)
	}
}

func TestPlanRunLocal(t *testing.T) {
	if testing.Short() {
		t.Skip("runs fgauge scripts")
	}
	dir := t.TempDir()
	sim := simulatedInput(t, dir)
	bin := filepath.Join(dir, "fgauge")
	goBin, err := exec.LookPath("go")
	if err != nil {
		goBin = filepath.Join(runtime.GOROOT(), "bin", "go")
	}
	if out, err := exec.Command(goBin, "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	pops := writePopulations(t, dir, sim)
	single := scanSingle(t, dir, sim, []string{"--populations", pops})
	planDir := filepath.Join(dir, "plan")
	// Five shards of a 30/20/12 Mb genome: chromosome 1 is split, 2 and 3
	// are kept whole.
	if code, _, e := runCmdline(t, "plan", sim, "-o", planDir, "--shards", "5", "--fgauge", bin, "--jobs", "2", "--", "--populations", pops); code != exitOK {
		t.Fatalf("plan: exit %d: %s", code, e)
	}
	tsv, err := os.ReadFile(filepath.Join(planDir, "shards.tsv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(tsv)), "\n")
	if lines[0] != "shard\tregions\tcompressed_bytes\test_records\test_cpu_seconds\test_memory_mb" || len(lines) < 4 || len(lines) > 8 {
		t.Fatalf("shards.tsv:\n%s", tsv)
	}
	if !strings.Contains(string(tsv), "\t1:1-") || !strings.Contains(string(tsv), "\t3\t") && !strings.Contains(string(tsv), ",3\t") {
		t.Errorf("want chromosome 1 split and 3 whole:\n%s", tsv)
	}
	sb, _ := os.ReadFile(filepath.Join(planDir, "shard_array.sbatch"))
	if !strings.Contains(string(sb), fmt.Sprintf("#SBATCH --array=1-%d\n", len(lines)-1)) {
		t.Errorf("shard_array.sbatch:\n%s", sb)
	}
	run := func() string {
		cmd := exec.Command("bash", filepath.Join(planDir, "run_local.sh"))
		out, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("run_local.sh: %v\n%s", err, out)
		}
		return string(out)
	}
	run()
	assertSameOutputs(t, single, filepath.Join(planDir, "merged"))
	// Resuming: only the shard whose state is gone is scanned again.
	os.Remove(filepath.Join(planDir, "states", "2.state"))
	out := run()
	if got := strings.Count(out, "skipped"); got != len(lines)-2 {
		t.Errorf("%d shards skipped on the second run, want %d:\n%s", got, len(lines)-2, out)
	}
	assertSameOutputs(t, single, filepath.Join(planDir, "merged"))
}

// TestShardBoundaryRecord checks that a deletion whose REF spans the
// boundary between two shards is read by one shard only: by the tabix
// overlap rule both regions would hold it and merged record counts would
// exceed the single pass's.
func TestShardBoundaryRecord(t *testing.T) {
	dir := t.TempDir()
	input := "../../testdata/shard/boundary_indel.vcf.gz"
	single := scanSingle(t, dir, input, nil)
	merged := scanShards(t, dir, input, nil, shardSplit{"boundary", [][]string{{"1:1-1000"}, {"1:1001-"}}})
	assertSameOutputs(t, single, merged)
	info := summaryJSON(t, filepath.Join(merged, "run.json"))
	rec := info["records"].(map[string]any)
	// 20 SNPs and one deletion, written by hand (testdata/SOURCES.md).
	if rec["read"] != 21.0 || rec["skipped"].(map[string]any)["indel_or_mnp"] != 1.0 {
		t.Errorf("records %v, want 21 read and 1 indel", rec)
	}
}

func TestCompareOutputDirs(t *testing.T) {
	a, b := os.Getenv("FGAUGE_COMPARE_SINGLE"), os.Getenv("FGAUGE_COMPARE_MERGED")
	if a == "" || b == "" {
		t.Skip("FGAUGE_COMPARE_SINGLE and FGAUGE_COMPARE_MERGED not set")
	}
	assertSameOutputs(t, a, b)
}

// TestShardOrderWithoutContigLines: without ##contig lines the shards
// take the chromosome order from the tabix index, so the joined site
// table follows the file.
func TestShardOrderWithoutContigLines(t *testing.T) {
	dir := t.TempDir()
	input := "../../testdata/shard/no_contig_lines.vcf.gz"
	single := scanSingle(t, dir, input, nil)
	merged := scanShards(t, dir, input, nil, shardSplit{"order", [][]string{{"2"}, {"1:1-1500000"}, {"1:1500001-", "10:1-100000"}, {"10:100001-"}}})
	assertSameOutputs(t, single, merged)
}

// TestPlanCSI plans the BCF twin of the chr22 file through its CSI index
// and scans the planned shards in-process: the merge equals one pass.
func TestPlanCSI(t *testing.T) {
	dir := t.TempDir()
	input := "../../testdata/bcf/chr22_1000g.bcf"
	planDir := filepath.Join(dir, "plan")
	if code, _, e := runCmdline(t, "plan", input, "-o", planDir, "--shards", "3"); code != exitOK {
		t.Fatalf("plan: exit %d: %s", code, e)
	}
	tsv, err := os.ReadFile(filepath.Join(planDir, "shards.tsv"))
	if err != nil {
		t.Fatal(err)
	}
	sp := shardSplit{name: "planned"}
	for _, line := range strings.Split(strings.TrimSpace(string(tsv)), "\n")[1:] {
		sp.shards = append(sp.shards, strings.Split(strings.Split(line, "\t")[1], ","))
	}
	if len(sp.shards) != 3 {
		t.Fatalf("want 3 shards of the one chromosome:\n%s", tsv)
	}
	assertSameOutputs(t, scanSingle(t, dir, input, nil), scanShards(t, dir, input, nil, sp))
}

func TestStateOutUsage(t *testing.T) {
	dir := t.TempDir()
	for _, args := range [][]string{
		{"scan", "-", "-o", filepath.Join(dir, "a"), "--state-out", filepath.Join(dir, "a.state")},
		{"scan", "../../testdata/cohort189.vcf.gz", "-o", filepath.Join(dir, "b"), "--state-out", filepath.Join(dir, "b.state"), "--report"},
		{"scan", "../../testdata/cohort189.vcf.gz", "-o", filepath.Join(dir, "c"), "--skip-if-valid-state"},
		{"merge", "-o", filepath.Join(dir, "d")},
		{"merge", "-o", filepath.Join(dir, "e"), filepath.Join(dir, "missing.state")},
		{"plan", "../../testdata/annotated_small.vcf", "-o", filepath.Join(dir, "f")},
		{"plan", "../../testdata/chr22_1000g.vcf.gz", "-o", filepath.Join(dir, "g"), "--shards", "2", "--shard-mb", "3"},
	} {
		if code, _, e := runCmdline(t, args...); code != exitBadInput {
			t.Errorf("%v: exit %d, want %d (%s)", args, code, exitBadInput, e)
		}
	}
}

func TestMergeReport(t *testing.T) {
	dir := t.TempDir()
	_, states := shardFixture(t, dir)
	out := filepath.Join(dir, "merged")
	if code, _, e := runCmdline(t, "merge", "-o", out, "--report", states[0], states[1]); code != exitOK {
		t.Fatalf("exit %d: %s", code, e)
	}
	if b, err := os.ReadFile(filepath.Join(out, "report.html")); err != nil || !bytes.Contains(b, []byte("<html")) {
		t.Errorf("report.html missing or not HTML (%v)", err)
	}
}

// TestPlanManyContigs: a shard of more than plan.MaxRegionArgs whole contigs
// reads them from a region list (--region @FILE); scanning the plan's shards that way
// merges to the single pass.
func TestPlanManyContigs(t *testing.T) {
	dir := t.TempDir()
	d, err := genedrop.ParseDesign("full_sib")
	if err != nil {
		t.Fatal(err)
	}
	var chroms []genedrop.Chromosome
	for i := 1; i <= 50; i++ {
		chroms = append(chroms, genedrop.Chromosome{Name: fmt.Sprint(i), LengthBP: 2_000_000, LengthCM: 2})
	}
	res, err := genedrop.Run(genedrop.Config{Seed: 3, Chromosomes: chroms, Designs: []genedrop.Design{d}, SiteSpacing: 40_000})
	if err != nil {
		t.Fatal(err)
	}
	input := filepath.Join(dir, "scaffolds.vcf.gz")
	if err := genedrop.WriteVCFBGZF(input, res); err != nil {
		t.Fatal(err)
	}
	planDir := filepath.Join(dir, "plan")
	if code, _, e := runCmdline(t, "plan", input, "-o", planDir, "--shards", "2"); code != exitOK {
		t.Fatalf("plan: exit %d: %s", code, e)
	}
	script, _ := os.ReadFile(filepath.Join(planDir, "run_shard.sh"))
	if !strings.Contains(string(script), `--region "@$PLANDIR/regions/`) {
		t.Fatalf("run_shard.sh uses no region list:\n%s", script)
	}
	single := scanSingle(t, dir, input, nil)
	var states []string
	for i := 1; i <= 2; i++ {
		rf := filepath.Join(planDir, "regions", fmt.Sprintf("%d.txt", i))
		b, err := os.ReadFile(rf)
		if err != nil {
			t.Fatal(err)
		}
		if n := strings.Count(string(b), "\n"); n <= plan.MaxRegionArgs {
			t.Errorf("%s lists %d contigs", rf, n)
		}
		out := filepath.Join(dir, fmt.Sprintf("shard%d", i))
		if code, _, e := runCmdline(t, "scan", input, "--region", "@"+rf, "-o", out, "--state-out", out+".state", "--no-progress"); code != exitOK {
			t.Fatalf("scan: exit %d: %s", code, e)
		}
		states = append(states, out+".state")
	}
	merged := filepath.Join(dir, "merged")
	if code, _, e := runCmdline(t, append([]string{"merge", "-o", merged}, states...)...); code != exitOK {
		t.Fatalf("merge: exit %d: %s", code, e)
	}
	assertSameOutputs(t, single, merged)
}
