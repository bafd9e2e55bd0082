package plan

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func TestPlanScanArgs(t *testing.T) {
	dir := t.TempDir()
	pops := filepath.Join(dir, "herds.tsv")
	if err := os.WriteFile(pops, []byte("a\tnorth_farm\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	abs, _ := filepath.Abs(pops)
	rel, _ := filepath.Rel(mustGetwd(t), pops)
	for _, tc := range []struct {
		in   []string
		want []string
		bad  bool
	}{
		{in: []string{"--populations", rel, "--roh-method", "rules"}, want: []string{"--populations", abs, "--roh-method", "rules"}},
		{in: []string{"--populations=" + rel}, want: []string{"--populations=" + abs}},
		{in: []string{"--region", "1"}, bad: true},
		{in: []string{"-o", "x"}, bad: true},
		{in: []string{"--report"}, bad: true},
		{in: []string{"--populations", filepath.Join(dir, "missing.tsv")}, bad: true},
		{in: []string{"--populations"}, bad: true},
	} {
		got, err := planScanArgs(tc.in)
		if (err != nil) != tc.bad || (!tc.bad && !reflect.DeepEqual(got, tc.want)) {
			t.Errorf("%v: got %v, %v", tc.in, got, err)
		}
	}
}

func mustGetwd(t *testing.T) string {
	t.Helper()
	wd, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	return wd
}

// TestScriptsUnchanged: a plan of a public fixture (testdata/SOURCES.md)
// with scan options, a partition, --jobs and --threads renders exactly
// the files the Sprintf-built scripts wrote before the templates
// (testdata/chr22_plan.txt, written by that version; the plan and input
// folders replaced by PLANDIR and INPUT).
func TestScriptsUnchanged(t *testing.T) {
	want, err := os.ReadFile("testdata/chr22_plan.txt")
	if err != nil {
		t.Fatal(err)
	}
	input, _ := filepath.Abs("../../../../testdata/chr22_1000g.vcf.gz")
	dir := filepath.Join(t.TempDir(), "plan")
	res, err := Make(Config{Input: input, Out: dir, ShardMB: 0.15, Threads: 4, Jobs: 3, Fgauge: "/opt/fgauge", Partition: "short",
		ScanArgs: []string{"--roh-method", "rules", "--min-call-rate=0.5", "--species", "cattle"}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Shards != 4 || res.Samples != 5 {
		t.Errorf("result %+v", res)
	}
	var got strings.Builder
	for _, name := range []string{"shards.tsv", "run_shard.sh", "run_local.sh", "shard_array.sbatch", "merge.sbatch", "submit_slurm.sh"} {
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		got.WriteString("== " + name + "\n")
		got.Write(b)
	}
	g := strings.NewReplacer(dir, "PLANDIR", input, "INPUT").Replace(got.String())
	if g != string(want) {
		gl, wl := strings.Split(g, "\n"), strings.Split(string(want), "\n")
		for i := range min(len(gl), len(wl)) {
			if gl[i] != wl[i] {
				t.Fatalf("line %d differs:\n got %q\nwant %q", i+1, gl[i], wl[i])
			}
		}
		t.Fatalf("%d lines, want %d", len(gl), len(wl))
	}
}
