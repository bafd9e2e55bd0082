package main

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"context"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// runCmd runs one fgauge command line in-process and returns the exit code
// and what it wrote to stderr.
func runCmd(t *testing.T, args ...string) (int, string) {
	t.Helper()
	var stdout, stderr bytes.Buffer
	env := &runEnv{stdout: &stdout, stderr: &stderr, stdin: strings.NewReader(""), argv: append([]string{"fgauge"}, args...)}
	code := run(context.Background(), env, args)
	return code, stderr.String() + stdout.String()
}

// scanTo runs fgauge scan on input into a new folder and returns the folder.
func scanTo(t *testing.T, input string, extra ...string) string {
	t.Helper()
	out := filepath.Join(t.TempDir(), "out")
	args := append([]string{"scan", input, "-o", out, "--no-progress"}, extra...)
	if code, msg := runCmd(t, args...); code != 0 {
		t.Fatalf("fgauge %s: exit %d: %s", strings.Join(args, " "), code, msg)
	}
	return out
}

// readTable reads a TSV (gzip/BGZF when the name ends in .gz) into a header
// and rows of fields.
func readTable(t *testing.T, path string) ([]string, [][]string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var sc *bufio.Scanner
	if strings.HasSuffix(path, ".gz") {
		z, err := gzip.NewReader(f)
		if err != nil {
			t.Fatal(err)
		}
		sc = bufio.NewScanner(z)
	} else {
		sc = bufio.NewScanner(f)
	}
	sc.Buffer(nil, 1<<24)
	var header []string
	var rows [][]string
	for sc.Scan() {
		fields := strings.Split(sc.Text(), "\t")
		if header == nil {
			header = fields
			continue
		}
		rows = append(rows, fields)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return header, rows
}

// column returns the index of name in header.
func column(t *testing.T, header []string, name string) int {
	t.Helper()
	for i, h := range header {
		if h == name {
			return i
		}
	}
	t.Fatalf("no column %q in %v", name, header)
	return -1
}

// TestScanCountsMatchReference checks per-site and per-sample genotype
// counts, end to end through fgauge scan, against the values computed with
// cyvcf2 0.30.18 (testdata/expected, made by testdata/tools/site_sample_counts.py),
// and hwe_p against R genetics 1.3.8.1.3 HWE.exact (testdata/tools/hwe_exact.R)
// within a relative error of 1e-9. Rows where R's implementation breaks a
// probability tie differently from the published definition
// (tie_in_probability = 1) are checked in package stats against the
// definition instead.
func TestScanCountsMatchReference(t *testing.T) {
	for _, name := range []string{"cohort189", "chr22_1000g"} {
		t.Run(name, func(t *testing.T) {
			out := scanTo(t, filepath.Join("..", "..", "testdata", name+".vcf.gz"), "--include-filtered", "--no-roh")
			_, want := readTable(t, filepath.Join("..", "..", "testdata", "expected", name+".sites.tsv"))
			h, got := readTable(t, filepath.Join(out, "sites.tsv.gz"))
			if len(got) != len(want) {
				t.Fatalf("sites: got %d rows, cyvcf2 has %d", len(got), len(want))
			}
			cols := []int{column(t, h, "chrom"), column(t, h, "pos"), column(t, h, "n_hom_ref"), column(t, h, "n_het"), column(t, h, "n_hom_alt"), column(t, h, "n_missing")}
			hp := column(t, h, "hwe_p")
			for i := range want {
				for j, c := range cols {
					if got[i][c] != want[i][j] {
						t.Fatalf("site row %d column %s: got %s, cyvcf2 %s", i+1, h[c], got[i][c], want[i][j])
					}
				}
				if want[i][6] == "NA" || want[i][7] == "1" {
					if want[i][6] == "NA" && got[i][hp] != "NA" {
						t.Errorf("site %s:%s: hwe_p %s for a monomorphic site, want NA", want[i][0], want[i][1], got[i][hp])
					}
					continue
				}
				r, _ := strconv.ParseFloat(want[i][6], 64)
				r = math.Min(r, 1) // R's summation can exceed 1 by rounding
				g, err := strconv.ParseFloat(got[i][hp], 64)
				if err != nil || math.Abs(g-r) > 1e-9*r {
					t.Errorf("site %s:%s: hwe_p %s, R HWE.exact %v", want[i][0], want[i][1], got[i][hp], r)
				}
			}
			_, wantS := readTable(t, filepath.Join("..", "..", "testdata", "expected", name+".samples.tsv"))
			hs, gotS := readTable(t, filepath.Join(out, "samples.tsv"))
			if len(gotS) != len(wantS) {
				t.Fatalf("samples: got %d rows, want %d", len(gotS), len(wantS))
			}
			scols := []int{column(t, hs, "sample"), column(t, hs, "n_hom_ref"), column(t, hs, "n_het"), column(t, hs, "n_hom_alt"), column(t, hs, "n_missing")}
			for i := range wantS {
				for j, c := range scols {
					if gotS[i][c] != wantS[i][j] {
						t.Errorf("sample %s column %s: got %s, cyvcf2 %s", wantS[i][0], hs[c], gotS[i][c], wantS[i][j])
					}
				}
			}
		})
	}
}

// TestScanVCFAndBCFAgree checks that the BCF twins (written with
// python3-pysam, testdata/tools/make_bcf_twins.py) give byte-identical
// tables to their VCF originals.
func TestScanVCFAndBCFAgree(t *testing.T) {
	for _, name := range []string{"cohort189", "chr22_1000g"} {
		t.Run(name, func(t *testing.T) {
			a := scanTo(t, filepath.Join("..", "..", "testdata", name+".vcf.gz"), "--include-filtered")
			b := scanTo(t, filepath.Join("..", "..", "testdata", "bcf", name+".bcf"), "--include-filtered")
			for _, f := range []string{"samples.tsv", "runs.tsv", "sites.tsv.gz"} {
				_, ra := readTable(t, filepath.Join(a, f))
				_, rb := readTable(t, filepath.Join(b, f))
				if !equalRows(ra, rb) {
					t.Errorf("%s differs between VCF and BCF input", f)
				}
			}
		})
	}
}

// TestScanThreadsIdentical checks that the outputs do not depend on the
// number of threads (the sums behind them are exact fixed-point).
func TestScanThreadsIdentical(t *testing.T) {
	in := filepath.Join("..", "..", "testdata", "chr22_1000g.vcf.gz")
	a := scanTo(t, in, "--threads", "1")
	b := scanTo(t, in, "--threads", "4")
	for _, f := range []string{"samples.tsv", "runs.tsv"} {
		x, _ := os.ReadFile(filepath.Join(a, f))
		y, _ := os.ReadFile(filepath.Join(b, f))
		if !bytes.Equal(x, y) || len(x) == 0 {
			t.Errorf("%s differs between --threads 1 and 4", f)
		}
	}
}

// TestScanRegionEqualsFilteredFullScan checks that an indexed region query
// returns exactly the rows of a full scan restricted to the region.
func TestScanRegionEqualsFilteredFullScan(t *testing.T) {
	in := filepath.Join("..", "..", "testdata", "chr22_1000g.vcf.gz")
	full := scanTo(t, in, "--no-roh")
	part := scanTo(t, in, "--no-roh", "--region", "22:50400000-50600000")
	h, all := readTable(t, filepath.Join(full, "sites.tsv.gz"))
	_, got := readTable(t, filepath.Join(part, "sites.tsv.gz"))
	pc := column(t, h, "pos")
	var want [][]string
	for _, r := range all {
		p, _ := strconv.Atoi(r[pc])
		if p >= 50400000 && p <= 50600000 {
			want = append(want, r[:column(t, h, "n_haploid")+1]) // counts; frequencies differ by nothing but are compared too below
		}
	}
	if len(want) == 0 {
		t.Fatal("region holds no sites; pick another")
	}
	if len(got) != len(want) {
		t.Fatalf("region scan: %d rows, full scan restricted: %d", len(got), len(want))
	}
	for i := range want {
		for j := range want[i] {
			if got[i][j] != want[i][j] {
				t.Fatalf("row %d column %s: region %s, full %s", i, h[j], got[i][j], want[i][j])
			}
		}
	}
}

// TestScanRefusesExistingResults checks that results are not overwritten
// without --force and that a refused run exits 2.
func TestScanRefusesExistingResults(t *testing.T) {
	in := filepath.Join("..", "..", "testdata", "cohort189.vcf.gz")
	out := scanTo(t, in, "--no-roh")
	code, msg := runCmd(t, "scan", in, "-o", out, "--no-roh")
	if code != exitBadInput || !strings.Contains(msg, "--force") {
		t.Fatalf("second scan into %s: exit %d, %q; want exit 2 naming --force", out, code, msg)
	}
	// A table the earlier run wrote and this one does not must not survive
	// to be mistaken for this run's result.
	if err := os.WriteFile(filepath.Join(out, "populations.tsv"), []byte("stale\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, msg := runCmd(t, "scan", in, "-o", out, "--no-roh", "--force"); code != 0 {
		t.Fatalf("--force: exit %d: %s", code, msg)
	}
	if _, err := os.Stat(filepath.Join(out, "populations.tsv")); !os.IsNotExist(err) {
		t.Errorf("stale populations.tsv left beside the new results (err %v)", err)
	}
	if _, err := os.Stat(filepath.Join(out, "samples.tsv")); err != nil {
		t.Errorf("samples.tsv missing after --force: %v", err)
	}
}

func equalRows(a, b [][]string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if strings.Join(a[i], "\t") != strings.Join(b[i], "\t") {
			return false
		}
	}
	return true
}
