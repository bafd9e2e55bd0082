package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fgauge/genedrop"
)

// lowcovCohort simulates a pedigree cohort (genedrop: full-sib lines,
// half-sib, first-cousin and parent-offspring matings, replicated) observed
// as reads of the given mean depth with 1% read error, and writes the
// calls with DP and PL and the true genotypes beside them. The truth is
// controlled by the simulation; the check compares against the moments F
// (f_hom) of the same scan on the true genotypes.
func lowcovCohort(t *testing.T, dir string, depth float64, replicates int) (calls, truth string) {
	t.Helper()
	var designs []genedrop.Design
	for _, s := range []string{"full_sib:4", "half_sib", "first_cousin", "parent_offspring"} {
		d, err := genedrop.ParseDesign(s)
		if err != nil {
			t.Fatal(err)
		}
		designs = append(designs, d)
	}
	res, err := genedrop.Run(genedrop.Config{
		Seed:        7,
		Chromosomes: []genedrop.Chromosome{{Name: "1", LengthBP: 100_000_000, LengthCM: 100}, {Name: "2", LengthBP: 80_000_000, LengthCM: 80}},
		Designs:     designs,
		Replicates:  replicates,
		SiteSpacing: 10_000,
		Depth:       depth,
		ReadError:   0.01,
	})
	if err != nil {
		t.Fatal(err)
	}
	calls = filepath.Join(dir, "calls.vcf.gz")
	truth = filepath.Join(dir, "truth.vcf.gz")
	if err := genedrop.WriteVCFBGZF(calls, res); err != nil {
		t.Fatal(err)
	}
	if err := genedrop.WriteTruthVCFBGZF(truth, res); err != nil {
		t.Fatal(err)
	}
	return calls, truth
}

// sampleColumn returns a samples.tsv column as numbers by sample (NaN for NA).
func sampleColumn(t *testing.T, out, name string) map[string]float64 {
	t.Helper()
	h, rows := readTable(t, filepath.Join(out, "samples.tsv"))
	c := column(t, h, name)
	m := map[string]float64{}
	for _, r := range rows {
		v, err := strconv.ParseFloat(r[c], 64)
		if err != nil {
			v = math.NaN()
		}
		m[r[0]] = v
	}
	return m
}

// TestLowDepthFLik is the end-to-end check of issue 19: at mean depth 2,
// 3 and 5 with 1% read error, f_lik from the scan of the calls is within
// 0.03 on average of f_hom on the true genotypes, with correlation >=
// 0.95, while f_hom on the calls is biased upwards; run.json carries the
// low-depth warning.
func TestLowDepthFLik(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and scans three cohorts")
	}
	for _, depth := range []float64{2, 3, 5} {
		t.Run(strconv.FormatFloat(depth, 'g', -1, 64), func(t *testing.T) {
			dir := t.TempDir()
			calls, truth := lowcovCohort(t, dir, depth, 6)
			outC, outT := filepath.Join(dir, "out_calls"), filepath.Join(dir, "out_truth")
			for _, a := range [][]string{{calls, outC}, {truth, outT}} {
				if code, _, errText := runCmdline(t, "scan", a[0], "-o", a[1], "--no-roh", "--no-progress", "--threads", "2"); code != exitOK {
					t.Fatalf("scan %s: exit %d: %s", a[0], code, errText)
				}
			}
			fLik, fHard, fTrue := sampleColumn(t, outC, "f_lik"), sampleColumn(t, outC, "f_hom"), sampleColumn(t, outT, "f_hom")
			var x, y []float64
			var diff, bias, hardBias float64
			for s, ft := range fTrue {
				fl := fLik[s]
				if math.IsNaN(fl) || math.IsNaN(ft) {
					t.Fatalf("%s: f_lik %v, true f_hom %v", s, fl, ft)
				}
				x, y = append(x, fl), append(y, ft)
				diff += math.Abs(fl - ft)
				bias += fl - ft
				hardBias += fHard[s] - ft
			}
			n := float64(len(x))
			diff, bias, hardBias = diff/n, bias/n, hardBias/n
			r := pearson(x, y)
			t.Logf("depth %g, %d samples: f_lik mean |diff| %.4f, mean diff %+.4f, r %.4f; hard-call f_hom mean bias %+.4f", depth, len(x), diff, bias, r, hardBias)
			if diff > 0.03 || r < 0.95 {
				t.Errorf("f_lik mean |diff| %.4f (want <= 0.03), r %.4f (want >= 0.95)", diff, r)
			}
			if hardBias < 0.05 {
				t.Errorf("hard-call f_hom bias %+.4f: the cohort is not low-depth enough for the check to mean anything", hardBias)
			}
			var run struct {
				Depth *struct {
					Low    bool    `json:"low"`
					Mean   float64 `json:"mean"`
					Source string  `json:"source"`
				} `json:"depth"`
				Warnings map[string]int64 `json:"warnings"`
			}
			b, err := os.ReadFile(filepath.Join(outC, "run.json"))
			if err != nil {
				t.Fatal(err)
			}
			if err := json.Unmarshal(b, &run); err != nil {
				t.Fatal(err)
			}
			if run.Depth == nil || !run.Depth.Low || run.Depth.Source != "dp" || math.Abs(run.Depth.Mean-depth) > 0.1 || run.Warnings["low_depth"] != 1 {
				t.Errorf("run.json depth %+v, warnings %v: want low depth %g from dp and a low_depth warning", run.Depth, run.Warnings, depth)
			}
			if depth == 3 {
				if code, _, errText := runCmdline(t, "report", outC); code != exitOK {
					t.Fatalf("report: exit %d: %s", code, errText)
				}
				html, _ := os.ReadFile(filepath.Join(outC, "report.html"))
				if !bytes.Contains(html, []byte(`id="low_depth"`)) || !bytes.Contains(html, []byte(`id="how_to_read_depth"`)) {
					t.Error("report.html lacks the low-depth note or its explanation")
				}
			}
			if b, _ := os.ReadFile(filepath.Join(outT, "run.json")); bytes.Contains(b, []byte(`"depth"`)) {
				t.Errorf("GT-only scan has a depth section")
			}
		})
	}
}

func pearson(x, y []float64) float64 {
	n := float64(len(x))
	var mx, my float64
	for i := range x {
		mx += x[i] / n
		my += y[i] / n
	}
	var sxy, sxx, syy float64
	for i := range x {
		sxy += (x[i] - mx) * (y[i] - my)
		sxx += (x[i] - mx) * (x[i] - mx)
		syy += (y[i] - my) * (y[i] - my)
	}
	return sxy / math.Sqrt(sxx*syy)
}

// TestLikelihoodOutputsIdentical: on a file with PL, samples.tsv (f_lik,
// depth_mean) and sites.tsv.gz (alt_freq_lik) are byte-identical for 1,
// 2 and 4 threads, and a merge of 2 or 3 shards equals the single pass,
// with the default and the per-population likelihood frequencies.
func TestLikelihoodOutputsIdentical(t *testing.T) {
	dir := t.TempDir()
	calls, _ := lowcovCohort(t, dir, 3, 2)
	pops := writePopulations(t, dir, calls)
	for _, opts := range [][]string{nil, {"--populations", pops, "--f-lik-freqs", "likelihood"}} {
		name := "cohort"
		if opts != nil {
			name = "populations"
		}
		t.Run(name, func(t *testing.T) {
			d := filepath.Join(dir, name)
			var first map[string][]byte
			for _, th := range []string{"1", "2", "4"} {
				out := filepath.Join(d, "threads"+th)
				args := append([]string{"scan", calls, "-o", out, "--no-progress", "--threads", th}, opts...)
				if code, _, errText := runCmdline(t, args...); code != exitOK {
					t.Fatalf("threads %s: exit %d: %s", th, code, errText)
				}
				got := map[string][]byte{"samples.tsv": nil, "sites.tsv.gz": gunzipFile(t, filepath.Join(out, "sites.tsv.gz"))}
				got["samples.tsv"], _ = os.ReadFile(filepath.Join(out, "samples.tsv"))
				if first == nil {
					first = got
					if bytes.Contains(got["samples.tsv"], []byte("\tNA\tNA\tdp\t")) || !bytes.Contains(got["samples.tsv"], []byte("\tdp\t")) {
						t.Fatalf("samples.tsv lacks f_lik or depth:\n%.400s", got["samples.tsv"])
					}
					lines := strings.SplitN(string(got["sites.tsv.gz"]), "\n", 3)
					if !strings.HasSuffix(lines[0], "\talt_freq_lik") || strings.HasSuffix(lines[1], "\tNA") {
						t.Fatalf("sites.tsv.gz lacks alt_freq_lik: %q", lines[:2])
					}
					continue
				}
				for f, b := range got {
					if !bytes.Equal(b, first[f]) {
						t.Errorf("%s differs between --threads 1 and %s", f, th)
					}
				}
			}
			single := scanSingle(t, d, calls, append([]string{"--no-roh"}, opts...))
			for _, sp := range []shardSplit{
				{"two", [][]string{{"1"}, {"2"}}},
				{"three", [][]string{{"1:1-40000000"}, {"1:40000001-", "2:1-30000000"}, {"2:30000001-"}}},
			} {
				t.Run(sp.name, func(t *testing.T) {
					assertSameOutputs(t, single, scanShards(t, d, calls, append([]string{"--no-roh"}, opts...), sp))
				})
			}
		})
	}
}

// TestBadLikelihoodExit2: a negative PL is bad input: exit 2 with the
// file and line, and no results left behind.
func TestBadLikelihoodExit2(t *testing.T) {
	dir := t.TempDir()
	in := writeTestInput(t, dir, "bad_pl.vcf", "##fileformat=VCFv4.3\n##contig=<ID=1>\n"+
		"##FORMAT=<ID=GT,Number=1,Type=String,Description=\"g\">\n##FORMAT=<ID=PL,Number=G,Type=Integer,Description=\"p\">\n"+
		"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tgoat1\tgoat2\n"+
		"1\t100\t.\tA\tG\t.\tPASS\t.\tGT:PL\t0/0:0,10,100\t0/1:20,0,20\n"+
		"1\t200\t.\tA\tG\t.\tPASS\t.\tGT:PL\t0/0:0,-10,100\t0/1:20,0,20\n")
	out := filepath.Join(dir, "out")
	code, _, errText := runCmdline(t, "scan", in, "-o", out, "--no-progress")
	if code != exitBadInput || !strings.Contains(errText, "bad_pl.vcf:7") || !strings.Contains(errText, "negative") {
		t.Fatalf("exit %d, stderr %q: want exit 2 naming bad_pl.vcf:7 and the negative PL", code, errText)
	}
	if _, err := os.Stat(filepath.Join(out, "samples.tsv")); err == nil {
		t.Error("samples.tsv written despite the error")
	}
}
