package main

import (
	"bytes"
	"os"
	"path/filepath"
	"sort"
	"testing"
)

// readDir returns every regular file under dir by relative path.
func readDir(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	err := filepath.Walk(dir, func(p string, info os.FileInfo, err error) error {
		if err != nil || info.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		b, err := os.ReadFile(p)
		out[rel] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// One map rule for scan and simulate: a map naming "chr1" acts on
// chromosome "1" exactly as a map naming "1" does, in both commands (the
// simulator used to ignore it).
func TestRecombinationMapChrPrefix(t *testing.T) {
	dir := t.TempDir()
	for _, name := range []string{"plain", "prefix"} {
		c := "1"
		if name == "prefix" {
			c = "chr1"
		}
		text := "chrom pos cm\n" + c + " 1 0\n" + c + " 5000000 3\n" + c + " 10000000 12\n"
		if err := os.WriteFile(filepath.Join(dir, name+".map"), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	sim := func(out string, extra ...string) map[string][]byte {
		args := append([]string{"simulate", "-o", out, "--design", "selfing:3", "--replicates", "4", "--chromosomes", "1:10e6:10,2:5e6:5",
			"--site-spacing", "20000"}, extra...)
		if code, _, e := runCmdline(t, args...); code != exitOK {
			t.Fatalf("%v: exit %d: %s", args, code, e)
		}
		return readDir(t, out)
	}
	plain := sim(filepath.Join(dir, "sim_plain"), "--recombination-map", filepath.Join(dir, "plain.map"))
	prefix := sim(filepath.Join(dir, "sim_prefix"), "--recombination-map", filepath.Join(dir, "prefix.map"))
	none := sim(filepath.Join(dir, "sim_none"))
	sameFiles(t, "simulate", plain, prefix)
	if bytes.Equal(plain["truth_segments.tsv"], none["truth_segments.tsv"]) {
		t.Error("simulate: the map changed nothing (test cannot tell a map that is ignored)")
	}

	in := filepath.Join(dir, "sim_plain", "simulated.vcf.gz")
	if _, err := os.Stat(in); err != nil {
		names := make([]string, 0, len(plain))
		for k := range plain {
			names = append(names, k)
		}
		sort.Strings(names)
		t.Fatalf("no simulated VCF among %v", names)
	}
	scan := func(out string, extra ...string) map[string][]byte {
		args := append([]string{"scan", in, "-o", out, "--no-progress", "--roh-method", "rules"}, extra...)
		if code, _, e := runCmdline(t, args...); code != exitOK {
			t.Fatalf("%v: exit %d: %s", args, code, e)
		}
		files := readDir(t, out)
		delete(files, "run.json") // names the map file and the time
		return files
	}
	sPlain := scan(filepath.Join(dir, "scan_plain"), "--recombination-map", filepath.Join(dir, "plain.map"))
	sPrefix := scan(filepath.Join(dir, "scan_prefix"), "--recombination-map", filepath.Join(dir, "prefix.map"))
	sNone := scan(filepath.Join(dir, "scan_none"))
	sameFiles(t, "scan", sPlain, sPrefix)
	if bytes.Equal(sPlain["runs.tsv"], sNone["runs.tsv"]) {
		t.Error("scan: the map changed nothing in runs.tsv (test cannot tell a map that is ignored)")
	}
}

func sameFiles(t *testing.T, what string, a, b map[string][]byte) {
	t.Helper()
	if len(a) != len(b) {
		t.Errorf("%s: %d files vs %d", what, len(a), len(b))
	}
	for k, v := range a {
		if !bytes.Equal(v, b[k]) {
			t.Errorf("%s: %s differs between a map naming 1 and one naming chr1", what, k)
		}
	}
}
