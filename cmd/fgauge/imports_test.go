package main

import (
	"os/exec"
	"strings"
	"testing"
)

// TestMainImports keeps package main a thin shell: flags, help, dispatch,
// progress and exit codes. It may import the standard library except the
// packages that read or write file formats, the packages under
// cmd/fgauge/internal and cmd/fgauge/htmlreport, the library packages
// whose types the options are turned into and whose errors are mapped to
// exit codes, and the progress bar. Scan, merge, plan, demo and file-format
// work belong in cmd/fgauge/internal.
func TestMainImports(t *testing.T) {
	goCmd, err := exec.LookPath("go")
	if err != nil {
		t.Skip("the go command is not on PATH")
	}
	out, err := exec.Command(goCmd, "list", "-f", `{{join .Imports "\n"}}`, ".").Output()
	if err != nil {
		t.Fatalf("go list: %v", err)
	}
	allowed := map[string]bool{
		"fgauge/cmd/fgauge/htmlreport":      true,
		"fgauge/vcfscan":                    true, // region and sample options, error sentinels
		"fgauge/stats":                      true, // population and panel options, error sentinels
		"fgauge/stats/pedigree":             true, // the pedigree command, error sentinels
		"fgauge/roh":                        true, // detection options, error sentinels
		"fgauge/genedrop":                   true, // the simulate command's options
		"fgauge/genmap":                     true, // the --recombination-map option
		"fgauge/internal/numfmt":            true, // NA in the pedigree command's table
		"github.com/schollz/progressbar/v3": true,
		"golang.org/x/term":                 true,
	}
	// Standard packages that mean file-format or pipeline work.
	denied := []string{"encoding/", "compress/", "crypto/", "hash/", "text/template", "html/", "archive/", "embed", "net/"}
	tolerated := map[string]bool{}
	for _, imp := range strings.Fields(string(out)) {
		switch {
		case strings.HasPrefix(imp, "fgauge/cmd/fgauge/internal/"), allowed[imp], tolerated[imp]:
		case strings.Contains(strings.SplitN(imp, "/", 2)[0], "."), strings.HasPrefix(imp, "fgauge/"):
			t.Errorf("package main imports %s: move that work into a package under cmd/fgauge/internal", imp)
		default:
			for _, d := range denied {
				if strings.HasPrefix(imp, d) || imp == strings.TrimSuffix(d, "/") {
					t.Errorf("package main imports %s: file formats belong in vcfscan or cmd/fgauge/internal", imp)
				}
			}
		}
	}
}
