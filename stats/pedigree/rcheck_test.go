package pedigree

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// Pedigree F and coancestries against the tabular method (Emik & Terrill
// 1949; common practice) written in plain R (Debian r-base-core, no add-on
// package), on a random pedigree with selfing and close matings. Skipped
// where Rscript is not installed.
func TestAgainstPlainR(t *testing.T) {
	rs, err := exec.LookPath("Rscript")
	if err != nil {
		t.Skip("Rscript not installed")
	}
	rng := rand.New(rand.NewPCG(11, 12))
	p := randomPedigree(rng, 150)
	dir := t.TempDir()
	var b strings.Builder
	for i := 0; i < p.Len(); i++ {
		fmt.Fprintf(&b, "%d\t%d\t%d\n", i+1, p.Sire(i)+1, p.Dam(i)+1) // 0 = unknown
	}
	pedPath := filepath.Join(dir, "ped.tsv")
	if err := os.WriteFile(pedPath, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	script := `
args <- commandArgs(trailingOnly = TRUE)
p <- read.table(args[1], sep = "\t")
n <- nrow(p)
A <- matrix(0, n, n)
for (i in 1:n) {
  s <- p[i, 2]; d <- p[i, 3]
  if (i > 1) for (j in 1:(i - 1)) {
    v <- 0
    if (s > 0) v <- v + 0.5 * A[j, s]
    if (d > 0) v <- v + 0.5 * A[j, d]
    A[i, j] <- v; A[j, i] <- v
  }
  A[i, i] <- 1 + (if (s > 0 && d > 0) 0.5 * A[s, d] else 0)
}
cat(sprintf("F %d %.17g\n", 1:n, diag(A) - 1), sep = "")
cat(sprintf("C %d %d %.17g\n", 1:(n - 1), 2:n, A[cbind(1:(n - 1), 2:n)] / 2), sep = "")
`
	out, err := exec.Command(rs, "-e", script, pedPath).CombinedOutput()
	if err != nil {
		t.Fatalf("Rscript: %v\n%s", err, out)
	}
	f := p.Inbreeding()
	var pairs [][2]int
	for i := 0; i+1 < p.Len(); i++ {
		pairs = append(pairs, [2]int{i, i + 1})
	}
	co, err := p.Coancestry(pairs, f)
	if err != nil {
		t.Fatal(err)
	}
	nF, nC := 0, 0
	for _, line := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		fl := strings.Fields(line)
		switch {
		case len(fl) == 3 && fl[0] == "F":
			i, _ := strconv.Atoi(fl[1])
			want, _ := strconv.ParseFloat(fl[2], 64)
			if math.Abs(f[i-1]-want) > 1e-12 {
				t.Errorf("F(%s) = %v, R tabular %v", p.ID(i-1), f[i-1], want)
			}
			nF++
		case len(fl) == 4 && fl[0] == "C":
			i, _ := strconv.Atoi(fl[1])
			want, _ := strconv.ParseFloat(fl[3], 64)
			if math.Abs(co[i-1]-want) > 1e-12 {
				t.Errorf("coancestry(%s,%s) = %v, R tabular %v", p.ID(i-1), p.ID(i), co[i-1], want)
			}
			nC++
		}
	}
	inbred := 0
	for _, v := range f {
		if v > 0 {
			inbred++
		}
	}
	if inbred < 10 {
		t.Errorf("only %d inbred animals: the check would not bite", inbred)
	}
	if nF != p.Len() || nC != p.Len()-1 {
		t.Fatalf("R gave %d F and %d coancestries, want %d and %d:\n%s", nF, nC, p.Len(), p.Len()-1, out)
	}
}
