package main

import (
	"fmt"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// scan writes sites.tsv.gz.tbi beside sites.tsv.gz; the Debian tabix
// command (htslib) answers region queries through it with exactly the
// rows filtering the table gives.
func TestSitesTableIndex(t *testing.T) {
	tabixCmd, err := exec.LookPath("tabix")
	if err != nil {
		t.Skip("the tabix command is not installed (Debian package tabix); it checks sites.tsv.gz.tbi")
	}
	out := filepath.Join(t.TempDir(), "out")
	if code, _, e := runCmdline(t, "scan", "../../testdata/chr22_1000g.vcf.gz", "-o", out, "--no-progress", "--no-roh"); code != exitOK {
		t.Fatalf("scan: exit %d: %s", code, e)
	}
	path := filepath.Join(out, "sites.tsv.gz")
	_, rows := readTable(t, path)
	if len(rows) < 1000 {
		t.Fatalf("only %d sites", len(rows))
	}
	first, _ := strconv.ParseInt(rows[0][1], 10, 64)
	last, _ := strconv.ParseInt(rows[len(rows)-1][1], 10, 64)
	for k := int64(0); k < 12; k++ {
		a := first + (last-first)*k/12
		e := a + (last-first)/40
		got, err := exec.Command(tabixCmd, path, fmt.Sprintf("%s:%d-%d", rows[0][0], a, e)).Output()
		if err != nil {
			t.Fatalf("tabix: %v", err)
		}
		var want strings.Builder
		for _, r := range rows {
			if p, _ := strconv.ParseInt(r[1], 10, 64); r[0] == rows[0][0] && p >= a && p <= e {
				want.WriteString(strings.Join(r, "\t") + "\n")
			}
		}
		if string(got) != want.String() || want.Len() == 0 {
			t.Errorf("tabix %s:%d-%d gave %d bytes, filtering %d", rows[0][0], a, e, len(got), want.Len())
		}
	}
}
