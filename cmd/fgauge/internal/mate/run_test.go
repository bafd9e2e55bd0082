package mate

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

const cohort = "../../../../testdata/cohort189.vcf.gz"
const numpyFixture = "../../../../testdata/mating/cohort189_coancestry_numpy.tsv"

// cohortSamples returns the sample names of cohort189 in file order.
func cohortSamples(t *testing.T) []string {
	t.Helper()
	f, err := os.Open(numpyFixture)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	// the fixture lists sires 1-10 x dams 11-70 in header order
	var sires, dams []string
	seenS, seenD := map[string]bool{}, map[string]bool{}
	sc := bufio.NewScanner(f)
	sc.Scan()
	for sc.Scan() {
		fs := strings.Split(sc.Text(), "\t")
		if !seenS[fs[0]] {
			seenS[fs[0]] = true
			sires = append(sires, fs[0])
		}
		if !seenD[fs[1]] {
			seenD[fs[1]] = true
			dams = append(dams, fs[1])
		}
	}
	return append(sires, dams...)
}

func writeList(t *testing.T, dir, name string, ids []string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(strings.Join(ids, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func baseConfig(t *testing.T, dir string) Config {
	ids := cohortSamples(t)
	return Config{
		Input:           cohort,
		SiresFile:       writeList(t, dir, "sires.txt", ids[:10]),
		DamsFile:        writeList(t, dir, "dams.txt", ids[10:]),
		OutDir:          filepath.Join(dir, "out"),
		MaxProgenyF:     math.NaN(),
		IncludeFiltered: true,
		SireLimit:       7,
		Version:         "test",
	}
}

// TestRunAgainstNumpy: pairs.tsv's coancestry_genomic equals the NumPy
// VanRaden G/2 (python3-numpy, testdata/tools/vanraden_numpy.py) within
// 1e-9; the allocation serves every dam once within the limit; outputs are
// byte-identical with 1 and 3 threads.
func TestRunAgainstNumpy(t *testing.T) {
	dir := t.TempDir()
	cfg := baseConfig(t, dir)
	var out bytes.Buffer
	cfg.Stdout = &out
	cfg.Threads = 1
	cfg.Segments, cfg.SegmentMinMB = true, 0.001 // short stretches: the fixture spans little genome
	res, err := Run(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(out.String(), "60 dams on 10 sires") {
		t.Errorf("summary line: %q", out.String())
	}
	// NumPy fixture, same order (sire-major).
	want := readColumn(t, numpyFixture, "cohort")
	got := readColumn(t, filepath.Join(cfg.OutDir, "pairs.tsv"), "coancestry_genomic")
	if len(got) != len(want) || len(got) != 600 {
		t.Fatalf("%d pairs, fixture %d", len(got), len(want))
	}
	for i := range want {
		if math.Abs(got[i]-want[i]) > 1e-9 {
			t.Fatalf("pair %d: %v, NumPy %v", i, got[i], want[i])
		}
	}
	load := map[int]int{}
	for _, s := range res.Allocation.SireOf {
		load[s]++
	}
	for s, n := range load {
		if n > 7 {
			t.Errorf("sire %d: %d dams", s, n)
		}
	}
	ri, err := ReadRunInfo(filepath.Join(cfg.OutDir, "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	if ri.Plan.MeanProgenyF != res.Allocation.Mean || !(ri.Plan.MeanProgenyF < ri.Random.MeanProgenyF) {
		t.Errorf("run.json plan %+v random %+v", ri.Plan, ri.Random)
	}
	// Same run on 3 threads: byte-identical tables and page.
	cfg3 := cfg
	cfg3.Threads, cfg3.OutDir, cfg3.Stdout = 3, filepath.Join(dir, "out3"), nil
	if _, err := Run(context.Background(), cfg3); err != nil {
		t.Fatal(err)
	}
	for _, n := range []string{"pairs.tsv", "allocation.tsv", "mate.html"} {
		a, _ := os.ReadFile(filepath.Join(cfg.OutDir, n))
		b, _ := os.ReadFile(filepath.Join(cfg3.OutDir, n))
		if len(a) == 0 || !bytes.Equal(a, b) {
			t.Errorf("%s differs between 1 and 3 threads (or is empty)", n)
		}
	}
	page, _ := os.ReadFile(filepath.Join(cfg.OutDir, "mate.html"))
	for _, s := range []string{"Content-Security-Policy", `data-plot="pair_map"`, `data-plot="progeny_f"`, "local", "<svg"} {
		if !bytes.Contains(page, []byte(s)) {
			t.Errorf("mate.html lacks %q", s)
		}
	}
	if bytes.Contains(page, []byte("<script")) {
		t.Error("mate.html holds a script")
	}
}

// readColumn reads one numeric column of a TSV by header name.
func readColumn(t *testing.T, path, col string) []float64 {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
	k := -1
	for i, h := range strings.Split(lines[0], "\t") {
		if h == col {
			k = i
		}
	}
	if k < 0 {
		t.Fatalf("%s: no column %s", path, col)
	}
	var out []float64
	for _, l := range lines[1:] {
		v, err := strconv.ParseFloat(strings.Split(l, "\t")[k], 64)
		if err != nil {
			t.Fatalf("%s: %q", path, l)
		}
		out = append(out, v)
	}
	return out
}

// TestBadInput: each broken request is an input error naming the file and
// line, and leaves no output folder behind.
func TestBadInput(t *testing.T) {
	ids := cohortSamples(t)
	for _, tc := range []struct {
		name string
		edit func(c *Config, dir string)
		want string
	}{
		{"missing id", func(c *Config, dir string) {
			c.SiresFile = writeList(t, dir, "s.txt", []string{ids[0], "no_such_buck"})
		}, `s.txt:2: "no_such_buck" is not a sample`},
		{"listed twice", func(c *Config, dir string) {
			c.DamsFile = writeList(t, dir, "d.txt", []string{ids[20], ids[21], ids[20]})
		}, `d.txt:3: dam "` + ids[20] + `" listed twice (first on line 1)`},
		{"sire as dam", func(c *Config, dir string) {
			c.DamsFile = writeList(t, dir, "d.txt", []string{ids[20], ids[3]})
		}, `sires.txt:4: "` + ids[3] + `" is listed both as a sire and as a dam (` + "DIR/d.txt:2)"},
		{"empty list", func(c *Config, dir string) {
			c.SiresFile = writeList(t, dir, "s.txt", []string{"# none"})
		}, "s.txt: no sire listed"},
		{"two fields", func(c *Config, dir string) {
			c.SiresFile = writeList(t, dir, "s.txt", []string{ids[0] + " extra"})
		}, "s.txt:1: want one sire id per line"},
		{"capacity", func(c *Config, dir string) { c.SireLimit = 5 }, "50 places for 60 dams"},
		{"ceiling", func(c *Config, dir string) { c.MaxProgenyF = -0.5 }, "every pair above the ceiling"},
		{"limits file", func(c *Config, dir string) {
			c.SireLimitsFile = writeList(t, dir, "lim.txt", []string{"sire limit", ids[0] + " 3", ids[20] + " 2"})
		}, `lim.txt:3: "` + ids[20] + `" is not a listed sire`},
		{"plan on pedigree", func(c *Config, dir string) { c.PlanOn = PlanPedigree }, "needs --pedigree"},
		{"plan on segments", func(c *Config, dir string) { c.PlanOn = PlanSegments }, "needs --segments"},
		{"segments on unsorted input", func(c *Config, dir string) {
			vcf := "##fileformat=VCFv4.2\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tbuck\tdoe\n" +
				"1\t200\t.\tA\tG\t.\tPASS\t.\tGT\t0/1\t0/0\n1\t100\t.\tA\tG\t.\tPASS\t.\tGT\t0/1\t1/1\n"
			c.Input = filepath.Join(dir, "unsorted.vcf")
			os.WriteFile(c.Input, []byte(vcf), 0o644)
			c.SiresFile = writeList(t, dir, "s.txt", []string{"buck"})
			c.DamsFile = writeList(t, dir, "d.txt", []string{"doe"})
			c.Segments = true
		}, "unsorted.vcf: line 4: --segments: position 100 after position 200"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			cfg := baseConfig(t, dir)
			tc.edit(&cfg, dir)
			_, err := Run(context.Background(), cfg)
			if err == nil || !errors.Is(err, ErrInput) {
				t.Fatalf("got %v, want an input error", err)
			}
			msg := strings.ReplaceAll(err.Error(), dir, "DIR")
			if !strings.Contains(msg, tc.want) {
				t.Fatalf("got %q, want %q", msg, tc.want)
			}
			if _, err := os.Stat(cfg.OutDir); !os.IsNotExist(err) {
				t.Errorf("output folder left behind (%v)", err)
			}
		})
	}
}

// TestRunWithPedigree: an invented pedigree over some of the cohort's
// samples (sire 1 and dam 1 full sibs, sire 2 and dam 2 half sibs; common
// practice: kinship 1/4 and 1/8); coancestry_pedigree, the blend and the
// pedigree-only plan in run.json.
func TestRunWithPedigree(t *testing.T) {
	ids := cohortSamples(t)
	dir := t.TempDir()
	ped := "id\tsire\tdam\nfounder_m\t0\t0\nfounder_f\t0\t0\nfounder_g\t0\t0\n" +
		ids[0] + "\tfounder_m\tfounder_f\n" + ids[10] + "\tfounder_m\tfounder_f\n" +
		ids[1] + "\tfounder_m\tfounder_g\n" + ids[11] + "\tfounder_m\tfounder_f\n"
	pedPath := filepath.Join(dir, "ped.tsv")
	if err := os.WriteFile(pedPath, []byte(ped), 0o644); err != nil {
		t.Fatal(err)
	}
	cfg := baseConfig(t, dir)
	cfg.PedigreeFile = pedPath
	cfg.PlanOn, cfg.BlendWeight = PlanBlend, 0.25
	var stderr bytes.Buffer
	cfg.Stderr = &stderr
	res, err := Run(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	nD := len(res.Dams)
	for _, c := range []struct {
		s, d int
		want float64
	}{{0, 0, 0.25}, {1, 1, 0.125}, {0, 1, 0.25}, {1, 0, 0.125}, {2, 0, 0}} {
		got := res.Pedigree.V[c.s*nD+c.d]
		if got != c.want {
			t.Errorf("coancestry_pedigree(%d,%d) = %v, want %v", c.s, c.d, got, c.want)
		}
		i := c.s*nD + c.d
		if blend := 0.25*res.Genomic.V[i] + 0.75*got; res.ProgenyF.V[i] != blend {
			t.Errorf("progeny_f(%d,%d) = %v, blend %v", c.s, c.d, res.ProgenyF.V[i], blend)
		}
	}
	ri, err := ReadRunInfo(filepath.Join(cfg.OutDir, "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	if ri.PedigreePlan == nil || ri.PedigreePlan.MeanCoancestryGenomic == nil || ri.Plan.MeanCoancestryPedigree == nil {
		t.Fatalf("run.json lacks the pedigree-only plan: %+v", ri.PedigreePlan)
	}
	if len(ri.PedigreeAbsent) != 66 || !strings.Contains(stderr.String(), "66 candidates are not in the pedigree") {
		t.Errorf("absent %d, stderr %q", len(ri.PedigreeAbsent), stderr.String())
	}
	if *ri.BlendWeight != 0.25 {
		t.Errorf("blend weight %v", *ri.BlendWeight)
	}
	got := readColumn(t, filepath.Join(cfg.OutDir, "pairs.tsv"), "coancestry_pedigree")
	if got[0] != 0.25 || got[nD+1] != 0.125 {
		t.Errorf("pairs.tsv coancestry_pedigree %v %v", got[0], got[nD+1])
	}
}
