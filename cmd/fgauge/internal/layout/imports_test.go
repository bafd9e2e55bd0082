package layout

import (
	"encoding/json"
	"io"
	"os/exec"
	"strings"
	"testing"
)

// pkg is what 'go list -json' reports of one package that the rules need.
type pkg struct {
	ImportPath   string
	Imports      []string
	TestImports  []string
	XTestImports []string
	Deps         []string
}

// goList runs 'go list -json' with args from the module root and decodes
// the stream of packages it prints.
func goList(t *testing.T, args ...string) []pkg {
	t.Helper()
	goTool, err := exec.LookPath("go")
	if err != nil {
		t.Skip("the go command is not on PATH; this test asserts import rules with 'go list'")
	}
	cmd := exec.Command(goTool, append([]string{"list", "-json"}, args...)...)
	cmd.Dir = "../../../.."
	out, err := cmd.Output()
	if err != nil {
		if ee, ok := err.(*exec.ExitError); ok {
			t.Fatalf("go list %v: %v\n%s", args, err, ee.Stderr)
		}
		t.Fatalf("go list %v: %v", args, err)
	}
	dec := json.NewDecoder(strings.NewReader(string(out)))
	var pkgs []pkg
	for {
		var p pkg
		if err := dec.Decode(&p); err == io.EOF {
			break
		} else if err != nil {
			t.Fatal(err)
		}
		pkgs = append(pkgs, p)
	}
	if len(pkgs) == 0 {
		t.Fatalf("go list %v printed no packages", args)
	}
	return pkgs
}

// under reports whether package path is root or below it; test variants
// ("fgauge/stats [fgauge/stats.test]", "fgauge/stats.test",
// "fgauge/stats_test") count as the package they test.
func under(path, root string) bool {
	path, _, _ = strings.Cut(path, " ")
	path = strings.TrimSuffix(strings.TrimSuffix(path, ".test"), "_test")
	return path == root || strings.HasPrefix(path, root+"/")
}

func ours(path string) bool { return under(path, "fgauge") }

// TestImportRules checks the layout rules: vcfscan imports nothing of
// ours; only vcfscan imports biogo/hts; stats (tests included) never
// reaches roh; nothing under roh imports stats/pedigree; the gene-drop
// simulator and the genetic-map reader do not import roh.
func TestImportRules(t *testing.T) {
	all := goList(t, "./...")
	// Direct imports, tests included, of every package of the module.
	for _, p := range all {
		direct := append(append(append([]string{}, p.Imports...), p.TestImports...), p.XTestImports...)
		for _, imp := range direct {
			if under(p.ImportPath, "fgauge/vcfscan") && ours(imp) && !under(imp, "fgauge/vcfscan") {
				t.Errorf("%s imports %s: vcfscan must import nothing of ours", p.ImportPath, imp)
			}
			if under(imp, "github.com/biogo/hts") && !under(p.ImportPath, "fgauge/vcfscan") {
				t.Errorf("%s imports %s: only vcfscan may import biogo/hts", p.ImportPath, imp)
			}
			if under(p.ImportPath, "fgauge/roh") && under(imp, "fgauge/stats/pedigree") {
				t.Errorf("%s imports %s: nothing under roh may import stats/pedigree", p.ImportPath, imp)
			}
		}
	}
	// Everything reachable, tests included.
	for _, p := range goList(t, "-deps", "-test", "./stats/...", "./vcfscan/...", "./genedrop/...", "./genmap/...") {
		if !under(p.ImportPath, "fgauge/stats") && !under(p.ImportPath, "fgauge/genedrop") && !under(p.ImportPath, "fgauge/genmap") && !under(p.ImportPath, "fgauge/vcfscan") {
			continue
		}
		for _, d := range append(append([]string{}, p.Deps...), p.ImportPath) {
			if under(d, "fgauge/roh") {
				t.Errorf("%s depends on %s: stats, vcfscan, genedrop and genmap must never reach roh", p.ImportPath, d)
			}
			if under(p.ImportPath, "fgauge/vcfscan") && ours(d) && !under(d, "fgauge/vcfscan") {
				t.Errorf("%s depends on %s: vcfscan must import nothing of ours", p.ImportPath, d)
			}
		}
	}
}
