package main

import (
	"bufio"
	"compress/gzip"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// retiredColumns and retiredOptions are the names of the first version
// that were replaced (README, "Names changed"); none may come back.
// Some are assembled from parts so that this file does not itself carry
// the retired spellings the project has dropped.
var (
	retiredColumns = []string{"hom_observed", "hom_expected", "sites_informative", "hwe_p_" + "deficit", "hwe_p_" + "excess", "quality"}
	retiredOptions = []string{"regions" + "-file", "rules-max-kb" + "-per-site", "max-line-bytes", "max-samples", "max" + "-alleles", "max-block-bytes"}
)

// tableHeader returns the header fields of a TSV output (gzip or plain).
func tableHeader(t *testing.T, path string) []string {
	t.Helper()
	f := mustOpen(t, path)
	defer f.Close()
	var sc *bufio.Scanner
	if strings.HasSuffix(path, ".gz") {
		zr, err := gzip.NewReader(f)
		if err != nil {
			t.Fatalf("%s: %v", path, err)
		}
		sc = bufio.NewScanner(zr)
	} else {
		sc = bufio.NewScanner(f)
	}
	sc.Buffer(nil, 1<<20)
	if !sc.Scan() {
		t.Fatalf("%s: no header line (%v)", path, sc.Err())
	}
	return strings.Split(sc.Text(), "\t")
}

// jsonStrings collects every key and string value of a decoded JSON value.
func jsonStrings(v any, out map[string]bool) {
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			out[k] = true
			jsonStrings(e, out)
		}
	case []any:
		for _, e := range x {
			jsonStrings(e, out)
		}
	case string:
		out[x] = true
	}
}

// TestRetiredNamesStayRetired scans the chr22 fixture with populations
// and reads the header of every output table, the keys and strings of
// run.json, the column list of 'fgauge columns' and the option list of
// 'fgauge scan --help' and 'fgauge plan --help': none may hold a retired
// name, and the new names must be there.
func TestRetiredNamesStayRetired(t *testing.T) {
	dir := t.TempDir()
	input := "../../testdata/chr22_1000g.vcf.gz"
	out := scanSingle(t, dir, input, []string{"--populations", writePopulations(t, dir, input), "--jackknife-block-mb", "0.1"})

	seen := map[string]map[string]bool{} // file -> column names
	for _, name := range []string{"samples.tsv", "runs.tsv", "populations.tsv", "populations_pairwise.tsv",
		"sites.tsv.gz", "sites_by_population.tsv.gz"} {
		seen[name] = map[string]bool{}
		for _, c := range tableHeader(t, filepath.Join(out, name)) {
			seen[name][c] = true
		}
	}
	_, cols, _ := runCmdline(t, "columns")
	seen["fgauge columns"] = map[string]bool{}
	for _, line := range strings.Split(cols, "\n") {
		if f := strings.Fields(line); len(f) >= 2 {
			seen["fgauge columns"][f[1]] = true
		}
	}
	raw, err := os.ReadFile(filepath.Join(out, "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	var summary any
	if err := json.Unmarshal(raw, &summary); err != nil {
		t.Fatal(err)
	}
	seen["run.json"] = map[string]bool{}
	jsonStrings(summary, seen["run.json"])
	for where, names := range seen {
		for _, old := range retiredColumns {
			if names[old] {
				t.Errorf("%s: retired name %q is back", where, old)
			}
		}
	}
	for file, want := range map[string][]string{
		"samples.tsv":    {"f_hom", "polymorphic_sites_called", "homozygous_share", "homozygous_share_under_hwe"},
		"sites.tsv.gz":   {"hwe_p", "hwe_midp", "hwe_p_fewer_het", "hwe_p_more_het"},
		"runs.tsv":       {"mean_posterior_autozygous"},
		"fgauge columns": {"polymorphic_sites_called", "hwe_p_more_het", "mean_posterior_autozygous"},
	} {
		for _, c := range want {
			if !seen[file][c] {
				t.Errorf("%s: no column %q", file, c)
			}
		}
	}

	reOption := regexp.MustCompile(`(?m)^\s+-{1,2}([a-z0-9-]+)`)
	for _, cmd := range []string{"scan", "plan", "merge"} {
		_, stdout, stderr := runCmdline(t, cmd, "--help")
		help := stdout + stderr
		opts := map[string]bool{}
		for _, m := range reOption.FindAllStringSubmatch(help, -1) {
			opts[m[1]] = true
		}
		if cmd == "scan" && len(opts) < 30 {
			t.Fatalf("scan --help: only %d options found:\n%s", len(opts), help)
		}
		for _, old := range retiredOptions {
			if opts[old] || strings.Contains(help, "--"+old) {
				t.Errorf("%s --help: retired option --%s is back", cmd, old)
			}
		}
		if cmd == "scan" {
			for _, o := range []string{"region", "rules-min-sites-per-mb", "guard-line-bytes", "guard-samples", "guard-alleles", "guard-block-bytes"} {
				if !opts[o] {
					t.Errorf("scan --help: no option --%s", o)
				}
			}
		}
	}
	// The retired options are refused, not silently accepted.
	for _, old := range retiredOptions {
		if code, _, _ := runCmdline(t, "scan", input, "-o", filepath.Join(dir, "x"), "--"+old, "1"); code != exitBadInput {
			t.Errorf("scan --%s 1: exit %d, want %d (unknown option)", old, code, exitBadInput)
		}
	}
}

// TestRegionListMatchesRegions: the same three windows of the chr22
// fixture (1000 Genomes, testdata/SOURCES.md) given as --region options,
// as a gzip-compressed BED file (--region @list.bed.gz: 0-based,
// half-open), as a plain BED file recognised by content, and as a region
// list in the --region syntax give byte-identical tables and run.json.
func TestRegionListMatchesRegions(t *testing.T) {
	dir := t.TempDir()
	input := "../../testdata/chr22_1000g.vcf.gz"
	pops := writePopulations(t, dir, input)
	regions := []string{"22:50300001-50400000", "22:50500001-50650000", "22:50800001-50900000"}
	bed := "track name=windows\n22\t50300000\t50400000\tfirst\n22\t50500000\t50650000\n# a comment\n22\t50800000\t50900000\n"

	var zb strings.Builder
	zw := gzip.NewWriter(&zb)
	if _, err := zw.Write([]byte(bed)); err != nil {
		t.Fatal(err)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	bedGz := writeTestInput(t, dir, "list.bed.gz", zb.String())
	bedPlain := writeTestInput(t, dir, "windows.txt", "22\t50300000\t50400000\n22\t50500000\t50650000\n22\t50800000\t50900000\n")
	list := writeTestInput(t, dir, "windows.list", "# windows\n"+strings.Join(regions, "\n")+"\n")

	common := []string{"--populations", pops, "--jackknife-block-mb", "0.1"}
	var oneByOne []string
	for _, r := range regions {
		oneByOne = append(oneByOne, "--region", r)
	}
	ref := scanSingle(t, dir, input, append(oneByOne, common...))
	if n := len(tableHeader(t, filepath.Join(ref, "sites.tsv.gz"))); n < 10 {
		t.Fatalf("sites.tsv.gz header has %d columns", n)
	}
	for i, arg := range []string{"@" + bedGz, "@" + bedPlain, "@" + list} {
		out := filepath.Join(dir, "list"+string(rune('a'+i)))
		args := append([]string{"scan", input, "-o", out, "--no-progress", "--threads", "2", "--region", arg}, common...)
		if code, _, e := runCmdline(t, args...); code != exitOK {
			t.Fatalf("%s: exit %d: %s", arg, code, e)
		}
		assertSameOutputs(t, ref, out)
	}
	// The windows select a part of the fixture, not all of it.
	whole := filepath.Join(dir, "whole")
	if code, _, e := runCmdline(t, "scan", input, "-o", whole, "--no-progress", "--no-roh"); code != exitOK {
		t.Fatalf("whole: exit %d: %s", code, e)
	}
	if a, b := gunzipFile(t, filepath.Join(ref, "sites.tsv.gz")), gunzipFile(t, filepath.Join(whole, "sites.tsv.gz")); len(a) >= len(b) {
		t.Errorf("the regions kept %d bytes of sites, the whole file %d", len(a), len(b))
	}
}
