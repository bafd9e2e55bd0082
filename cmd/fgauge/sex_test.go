package main

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fgauge/stats"
	"fgauge/vcfscan"
)

// sexCohort is a simulated mixed-sex cohort whose truth the test controls:
// an autosome, X with a PAR at its start, and Y. Males are hemizygous on
// non-PAR X; half of them are written with haploid calls ("0", "1"), half
// with diploid homozygous calls ("0/0", "1/1"), and a few of their calls
// are heterozygous (genotyping errors). Females are diploid in
// Hardy-Weinberg proportions. Y is called in males only.
type sexCohort struct {
	names  []string
	male   []bool
	path   string
	noSex  string // the same data without non-PAR X and Y
	xCalls map[int64][]string
}

const (
	sexN       = 300
	sexAuto    = 400
	sexPAR     = 60
	sexX       = 1500
	sexY       = 40
	sexPAREnd  = 100_000
	sexXLen    = 2_000_000
	sexHetErr  = 0.002
	sexMissing = 0.01
)

func writeSexCohort(t *testing.T, dir string) *sexCohort {
	t.Helper()
	rng := rand.New(rand.NewPCG(17, 4))
	c := &sexCohort{xCalls: map[int64][]string{}}
	for i := 0; i < sexN; i++ {
		c.names = append(c.names, fmt.Sprintf("kid%03d", i+1))
		c.male = append(c.male, i%2 == 0)
	}
	var all, auto bytes.Buffer
	head := "##fileformat=VCFv4.2\n##contig=<ID=1,length=10000000>\n##contig=<ID=X,length=" + strconv.Itoa(sexXLen) + ">\n##contig=<ID=Y,length=1000000>\n" +
		"##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\t" + strings.Join(c.names, "\t") + "\n"
	all.WriteString(head)
	auto.WriteString(head)
	freq := func() float64 { return 0.05 + 0.45*rng.Float64() }
	dip := func(p float64) string {
		a, b := rng.Float64() < p, rng.Float64() < p
		switch {
		case a && b:
			return "1/1"
		case a || b:
			return "0/1"
		}
		return "0/0"
	}
	line := func(w *bytes.Buffer, chrom string, pos int64, calls []string) {
		fmt.Fprintf(w, "%s\t%d\t.\tA\tG\t.\tPASS\t.\tGT\t%s\n", chrom, pos, strings.Join(calls, "\t"))
	}
	calls := make([]string, sexN)
	for k := 0; k < sexAuto; k++ {
		p := freq()
		for i := range calls {
			calls[i] = dip(p)
			if rng.Float64() < sexMissing {
				calls[i] = "./."
			}
		}
		line(&all, "1", int64(1000+k*20000), calls)
		line(&auto, "1", int64(1000+k*20000), calls)
	}
	for k := 0; k < sexPAR+sexX; k++ {
		pos := int64(500 + k*1600)
		if k >= sexPAR {
			pos = sexPAREnd + int64(1000+(k-sexPAR)*1200)
		}
		p := freq()
		for i := range calls {
			switch {
			case k < sexPAR || !c.male[i]:
				calls[i] = dip(p)
			case rng.Float64() < sexHetErr && i%4 == 0:
				calls[i] = "0/1"
			default:
				a := "0"
				if rng.Float64() < p {
					a = "1"
				}
				if i%4 == 0 {
					calls[i] = a + "/" + a
				} else {
					calls[i] = a
				}
			}
			if rng.Float64() < sexMissing {
				calls[i] = "./."
			}
		}
		if k >= sexPAR {
			c.xCalls[pos] = append([]string(nil), calls...)
		} else {
			line(&auto, "X", pos, calls)
		}
		line(&all, "X", pos, calls)
	}
	for k := 0; k < sexY; k++ {
		for i := range calls {
			calls[i] = "."
			if c.male[i] && rng.Float64() >= sexMissing {
				calls[i] = "0"
				if k%3 == 0 {
					calls[i] = "1"
				}
			}
		}
		line(&all, "Y", int64(3_000_000+k*1000), calls)
	}
	c.path = writeBGZFIndexed(t, filepath.Join(dir, "sexes.vcf.gz"), all.Bytes())
	c.noSex = writeBGZFIndexed(t, filepath.Join(dir, "autosome.vcf.gz"), auto.Bytes())
	return c
}

func writeBGZFIndexed(t *testing.T, path string, text []byte) string {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w := vcfscan.NewBGZFWriter(f, 1)
	if _, err := w.Write(text); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	if err := vcfscan.IndexBGZFTable(path, vcfscan.TabixVCFColumns); err != nil {
		t.Fatal(err)
	}
	return path
}

// The planted label swaps and unknown labels of the sex file.
var (
	sexSwapped = map[int]bool{3: true, 10: true, 57: true, 120: true, 201: true, 288: true}
	sexNoLabel = map[int]bool{5: true, 6: true, 99: true}
)

func writeSexFile(t *testing.T, dir string, c *sexCohort) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("sample\tsex\n")
	for i, n := range c.names {
		m := c.male[i] != sexSwapped[i]
		v := "F"
		if m {
			v = "M"
		}
		if sexNoLabel[i] {
			v = "NA"
		}
		fmt.Fprintf(&b, "%s\t%s\n", n, v)
	}
	p := filepath.Join(dir, "sexes.tsv")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// TestSexCheckSimulated: on the simulated cohort (truth controlled here),
// every planted label swap is flagged sex_mismatch, nothing else is
// flagged, and at least 99% of the samples are inferred correctly: the
// heterozygosity-based sex check of common practice (Anderson et al.
// 2010, Nat Protoc 5:1564). The X rows carry the true male allele counts
// and the X test of the counts by the sexes used (given, else inferred);
// the autosomal per-sample statistics equal those of the same data
// without X and Y.
func TestSexCheckSimulated(t *testing.T) {
	dir := t.TempDir()
	c := writeSexCohort(t, dir)
	sexFile := writeSexFile(t, dir, c)
	out := scanTo(t, c.path, "--sex", sexFile, "--par", "X:1-"+strconv.Itoa(sexPAREnd), "--no-roh", "--threads", "3", "--report")

	h, rows := readTable(t, filepath.Join(out, "samples.tsv"))
	ci, cg, cf, ce := column(t, h, "sex_inferred"), column(t, h, "sex_given"), column(t, h, "flags"), column(t, h, "x_male_het_errors")
	correct := 0
	for i, r := range rows {
		truth := "female"
		if c.male[i] {
			truth = "male"
		}
		if r[ci] == truth {
			correct++
		}
		mismatch := strings.Contains(r[cf], "sex_mismatch")
		if mismatch != sexSwapped[i] {
			t.Errorf("%s: flags %q, given %s, inferred %s, truth %s, swapped %v", r[0], r[cf], r[cg], r[ci], truth, sexSwapped[i])
		}
		if strings.Contains(r[cf], "sex_fits_neither") {
			t.Errorf("%s: flagged sex_fits_neither", r[0])
		}
		if sexNoLabel[i] && r[cg] != "unknown" {
			t.Errorf("%s: sex_given %s, want unknown", r[0], r[cg])
		}
		if (r[ce] != "NA") != ((c.male[i] != sexSwapped[i] && !sexNoLabel[i]) || (sexNoLabel[i] && c.male[i])) {
			t.Errorf("%s: x_male_het_errors %s", r[0], r[ce])
		}
	}
	if share := float64(correct) / float64(len(rows)); share < 0.99 {
		t.Errorf("inferred correctly: %d of %d", correct, len(rows))
	}
	t.Logf("inferred correctly: %d of %d; swaps flagged: %d", correct, len(rows), len(sexSwapped))

	// The report's sex-check section: the counts, one table row per swap,
	// the plot with every sample, and the caution.
	page, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`id="sex_check"`, `data-sex="mismatches">6<`, `data-sex="fits_neither">0<`,
		`id="fig_sex" data-plot="fig_sex" data-kind="scatter" data-points="300" data-total="300"`, "licensed practitioners following local regulations"} {
		if !bytes.Contains(page, []byte(want)) {
			t.Errorf("report.html lacks %q", want)
		}
	}
	if i := bytes.Index(page, []byte(`id="sex_table"`)); i < 0 {
		t.Errorf("report.html has no sex table")
	} else if tbl, _, _ := bytes.Cut(page[i:], []byte("</table>")); bytes.Count(tbl, []byte(`<tr data-sample=`)) != len(sexSwapped) {
		t.Errorf("report.html: sex table has %d rows, want %d", bytes.Count(tbl, []byte(`<tr data-sample=`)), len(sexSwapped))
	}

	// X rows: male allele counts and the X test of the counts by test sex.
	testMale := make([]int, sexN) // 1 male, 2 female
	for i := range testMale {
		m := c.male[i] != sexSwapped[i]
		if sexNoLabel[i] {
			m = c.male[i] // inferred
		}
		testMale[i] = 2
		if m {
			testMale[i] = 1
		}
	}
	sh, srows := readTable(t, filepath.Join(out, "sites.tsv.gz"))
	col := func(n string) int { return column(t, sh, n) }
	nx, below := 0, 0
	var lastChrom string
	var lastPos int64
	for _, r := range srows {
		pos, _ := strconv.ParseInt(r[1], 10, 64)
		if r[0] == lastChrom && pos < lastPos {
			t.Fatalf("site rows out of order at %s:%d", r[0], pos)
		}
		lastChrom, lastPos = r[0], pos
		calls, isX := c.xCalls[pos]
		if r[0] != "X" || !isX {
			if r[col("n_male_ref")] != "NA" {
				t.Errorf("%s:%s: n_male_ref %s on a row that is not non-PAR X", r[0], r[1], r[col("n_male_ref")])
			}
			if r[0] == "Y" {
				// Y: haploid calls of the males only, all one allele per site.
				af, cr := r[col("alt_freq")], r[col("call_rate")]
				want := "0"
				if (pos-3_000_000)/1000%3 == 0 {
					want = "1"
				}
				if r[col("hwe_p")] != "NA" || r[col("het_observed")] != "NA" || af != want || r[col("n_haploid")] == "0" {
					t.Errorf("Y row %d: hwe_p %s, het_observed %s, alt_freq %s (want %s)", pos, r[col("hwe_p")], r[col("het_observed")], af, want)
				}
				if v, _ := strconv.ParseFloat(cr, 64); v < 0.45 || v > 0.5 {
					t.Errorf("Y row %d: call_rate %s, want the males' share (0.5) less missing calls", pos, cr)
				}
			}
			continue
		}
		nx++
		var f [3]int64
		var mRef, mAlt, mHet int64
		for i, g := range calls {
			if testMale[i] == 1 {
				switch g {
				case "0", "0/0":
					mRef++
				case "1", "1/1":
					mAlt++
				case "0/1":
					mHet++
				}
				continue
			}
			switch g {
			case "0/0":
				f[0]++
			case "0/1":
				f[1]++
			case "1/1":
				f[2]++
			}
		}
		got := []string{r[col("n_hom_ref")], r[col("n_het")], r[col("n_hom_alt")], r[col("n_male_ref")], r[col("n_male_alt")], r[col("n_male_het_error")]}
		want := []string{itoa(f[0]), itoa(f[1]), itoa(f[2]), itoa(mRef), itoa(mAlt), itoa(mHet)}
		if strings.Join(got, " ") != strings.Join(want, " ") {
			t.Fatalf("X:%d counts %v, want %v", pos, got, want)
		}
		p, _ := strconv.ParseFloat(r[col("hwe_p")], 64)
		// The X test itself is checked against a base-R enumeration in package stats.
		if w := stats.HWEExactX(f[0], f[1], f[2], mRef, mAlt).P; math.Abs(p-w) > 1e-12*math.Max(w, 1e-300) {
			t.Fatalf("X:%d hwe_p %v, want %v", pos, p, w)
		}
		if p < 0.05 {
			below++
		}
	}
	if nx != sexX {
		t.Errorf("%d non-PAR X rows, want %d", nx, sexX)
	}
	// In equilibrium by construction (apart from 6 mislabelled samples
	// and rare errors): about 5% of X tests below 0.05.
	if below > sexX/10 {
		t.Errorf("%d of %d X tests below 0.05", below, nx)
	}
	t.Logf("X tests below 0.05: %d of %d", below, nx)

	// Autosomal per-sample statistics: the same as without non-PAR X and Y
	// (PAR sites are autosomal).
	out2 := scanTo(t, c.noSex, "--no-roh", "--par", "X:1-"+strconv.Itoa(sexPAREnd))
	h2, rows2 := readTable(t, filepath.Join(out2, "samples.tsv"))
	for j, name := range h2 {
		if name == "flags" {
			continue
		}
		k := column(t, h, name)
		for i := range rows2 {
			if rows[i][k] != rows2[i][j] {
				t.Fatalf("%s of %s: %s with X and Y, %s without", name, rows2[i][0], rows[i][k], rows2[i][j])
			}
		}
	}
}

func itoa(v int64) string { return strconv.FormatInt(v, 10) }

// writeTrueSexes writes the true sex of every sample.
func writeTrueSexes(t *testing.T, dir string, c *sexCohort) string {
	t.Helper()
	var b strings.Builder
	for i, n := range c.names {
		v := "2"
		if c.male[i] {
			v = "1"
		}
		fmt.Fprintf(&b, "%s %s\n", n, v)
	}
	p := filepath.Join(dir, "true_sexes.txt")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// TestSexDeferredEqualsGiven: X rows written at the end from inferred
// sexes (no --sex: the rows wait and are spliced in) equal the rows
// written in stream when every sex is given and equals the inferred one;
// and the spliced table is a valid indexed BGZF table.
func TestSexDeferredEqualsGiven(t *testing.T) {
	dir := t.TempDir()
	c := writeSexCohort(t, dir)
	par := "X:1-" + strconv.Itoa(sexPAREnd)
	inferred := scanTo(t, c.path, "--par", par, "--no-roh", "--threads", "2")
	given := scanTo(t, c.path, "--par", par, "--no-roh", "--threads", "2", "--sex", writeTrueSexes(t, dir, c))
	one := scanTo(t, c.path, "--par", par, "--no-roh", "--threads", "1")
	a, b := gunzipFile(t, filepath.Join(inferred, "sites.tsv.gz")), gunzipFile(t, filepath.Join(given, "sites.tsv.gz"))
	if !bytes.Equal(a, b) {
		t.Fatalf("sites.tsv.gz differs between inferred (deferred) and given sexes (%d vs %d bytes)", len(a), len(b))
	}
	for _, name := range []string{"sites.tsv.gz", "sites.tsv.gz.tbi", "samples.tsv"} {
		x, _ := os.ReadFile(filepath.Join(one, name))
		y, _ := os.ReadFile(filepath.Join(inferred, name))
		if len(x) == 0 || !bytes.Equal(x, y) {
			t.Errorf("%s differs between 1 and 2 threads", name)
		}
	}
	if _, err := os.Stat(filepath.Join(inferred, "sites.tsv.gz.tbi")); err != nil {
		t.Errorf("spliced site table has no index: %v", err)
	}
	for _, d := range []string{inferred, given} {
		ents, _ := os.ReadDir(d)
		for _, e := range ents {
			if strings.HasPrefix(e.Name(), ".") || strings.HasSuffix(e.Name(), ".body") {
				t.Errorf("temporary file %s left in %s", e.Name(), d)
			}
		}
	}
}

// TestSexShardsMerge: shards + merge give the single pass's outputs on a
// cohort with X and Y, X split between two shards; and merge refuses
// (exit 2) when a shard's X rows were tested with sexes the whole run
// does not infer (a shard holding too few X sites to infer any sex).
func TestSexShardsMerge(t *testing.T) {
	dir := t.TempDir()
	c := writeSexCohort(t, dir)
	opts := []string{"--par", "X:1-" + strconv.Itoa(sexPAREnd), "--roh-method", "rules"}
	single := scanSingle(t, dir, c.path, opts)
	merged := scanShards(t, dir, c.path, opts, shardSplit{"xsplit", [][]string{{"1", "X:1-1000000"}, {"X:1000001-2000000", "Y"}}})
	assertSameOutputs(t, single, merged)

	// X:1000001-1040000 holds about 33 X sites: too few to infer a sex.
	sp := shardSplit{"refused", [][]string{{"1", "X:1-1000000"}, {"X:1000001-1040000"}, {"X:1040001-2000000", "Y"}}}
	var states []string
	for i, regs := range sp.shards {
		out := filepath.Join(dir, fmt.Sprintf("refused_shard%d", i+1))
		args := append([]string{"scan", c.path, "-o", out, "--state-out", out + ".state", "--no-progress"}, opts...)
		for _, r := range regs {
			args = append(args, "--region", r)
		}
		if code, _, e := runCmdline(t, args...); code != exitOK {
			t.Fatalf("shard %d: exit %d: %s", i+1, code, e)
		}
		states = append(states, out+".state")
	}
	code, _, e := runCmdline(t, append([]string{"merge", "-o", filepath.Join(dir, "refused_merged")}, states...)...)
	t.Logf("refusal: %s", e)
	if code != exitBadInput || !strings.Contains(e, "merge cannot recompute X rows") {
		t.Fatalf("merge of X rows tested with other sexes: exit %d: %s", code, e)
	}
}

// TestSexFileErrors: a sex file naming a sample absent from the input, a
// duplicate or an unreadable value is refused with its file and line
// (exit 2) and leaves no output.
func TestSexFileErrors(t *testing.T) {
	dir := t.TempDir()
	c := writeSexCohort(t, dir)
	for _, tc := range []struct{ name, text, want string }{
		{"absent", "sample\tsex\nkid001\tM\nnobody\tF\n", "absent.tsv:3: sample not in the data"},
		{"duplicate", "kid001 M\nkid002 F\nkid001 F\n", "duplicate.tsv:3: sample listed twice"},
		{"value", "kid001\tM\nkid002\tyes\n", "value.tsv:2: unreadable sex value"},
	} {
		p := filepath.Join(dir, tc.name+".tsv")
		if err := os.WriteFile(p, []byte(tc.text), 0o644); err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, "out_"+tc.name)
		code, _, e := runCmdline(t, "scan", c.path, "-o", out, "--no-progress", "--sex", p)
		if code != exitBadInput || !strings.Contains(e, tc.want) {
			t.Errorf("%s: exit %d, %q; want exit %d and %q", tc.name, code, e, exitBadInput, tc.want)
		}
		if _, err := os.Stat(filepath.Join(out, "samples.tsv")); err == nil {
			t.Errorf("%s: output written", tc.name)
		}
	}
}

// TestSexFromPedigree: without --sex, the pedigree's sex column gives the
// given sexes (planted swaps flagged as with --sex), and run.json names it.
func TestSexFromPedigree(t *testing.T) {
	dir := t.TempDir()
	c := writeSexCohort(t, dir)
	var b strings.Builder
	for i, n := range c.names {
		sx := "F"
		if c.male[i] != sexSwapped[i] {
			sx = "M"
		}
		fmt.Fprintf(&b, "%s\t0\t0\t%s\n", n, sx)
	}
	ped := filepath.Join(dir, "herdbook.tsv")
	if err := os.WriteFile(ped, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	out := scanTo(t, c.path, "--pedigree", ped, "--no-roh")
	h, rows := readTable(t, filepath.Join(out, "samples.tsv"))
	cf := column(t, h, "flags")
	n := 0
	for i, r := range rows {
		if strings.Contains(r[cf], "sex_mismatch") != sexSwapped[i] {
			t.Errorf("%s: flags %q, swapped %v", r[0], r[cf], sexSwapped[i])
		}
		if sexSwapped[i] {
			n++
		}
	}
	js, err := os.ReadFile(filepath.Join(out, "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(js, []byte(`"given_source": "pedigree `+ped+`"`)) || !bytes.Contains(js, []byte(`"mismatches": 6`)) {
		t.Errorf("run.json sex section does not name the pedigree or count the swaps")
	}
	if n != len(sexSwapped) {
		t.Fatal("fixture")
	}
}

// TestSexSpeciesHumanUnknownBuild: with --species human and an X length of
// neither GRCh37 nor GRCh38, no PAR is used and run.json says why.
func TestSexSpeciesHumanUnknownBuild(t *testing.T) {
	dir := t.TempDir()
	c := writeSexCohort(t, dir)
	out := scanTo(t, c.path, "--species", "human", "--no-roh")
	js, err := os.ReadFile(filepath.Join(out, "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(js, []byte(`X length 2000000 is neither GRCh37`)) || !bytes.Contains(js, []byte(`"regions": []`)) {
		t.Errorf("run.json does not say that no PAR was used and why")
	}
}
