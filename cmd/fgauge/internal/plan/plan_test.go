package plan

import (
	"os"
	"path/filepath"
	"reflect"
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
