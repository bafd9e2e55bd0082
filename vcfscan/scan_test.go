package vcfscan

import (
	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"runtime"
	"sort"
	"strings"
	"testing"
	"time"

	"github.com/klauspost/compress/gzip"
)

// plainText returns the decompressed text of a fixture.
func plainText(t testing.TB, path string) []byte {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	b, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func toBGZF(t testing.TB, text []byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	w := NewBGZFWriter(&buf, 6)
	if _, err := w.Write(text); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func toGzip(t testing.TB, text []byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	w := gzip.NewWriter(&buf)
	w.Write(text)
	w.Close()
	return buf.Bytes()
}

func readBytes(t testing.TB, data []byte, opt Options) (*scanResult, error) {
	t.Helper()
	r, err := NewReader(bytes.NewReader(data), "mem.vcf", opt)
	if err != nil {
		return nil, err
	}
	defer r.Close()
	return collect(t, r)
}

// TestContainersIdentical checks that plain text, gzip, BGZF, a file and a
// stream give the same batches for the same content, whatever the number
// of workers and the chunk size.
func TestContainersIdentical(t *testing.T) {
	text := plainText(t, filepath.Join("..", "testdata", "cohort189.vcf.gz"))
	base, err := readBytes(t, text, Options{IncludeFiltered: true, Threads: 1})
	if err != nil {
		t.Fatal(err)
	}
	if len(base.sites) == 0 {
		t.Fatal("no sites kept")
	}
	tmp := filepath.Join(t.TempDir(), "c.vcf.gz")
	if err := os.WriteFile(tmp, toBGZF(t, text), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name   string
		data   []byte
		format Format
		opt    Options
	}{
		{"plain", text, FormatVCF, Options{Threads: 4}},
		{"gzip", toGzip(t, text), FormatVCFGzip, Options{Threads: 2}},
		{"bgzf", toBGZF(t, text), FormatVCFBGZF, Options{Threads: 3}},
		{"bgzf small chunks", toBGZF(t, text), FormatVCFBGZF, Options{Threads: 2, chunkBytes: 1000}},
		{"plain batch of 7 lines", text, FormatVCF, Options{Threads: 2, BatchSize: 7}},
		{"plain 1 line per batch", text, FormatVCF, Options{Threads: 2, BatchSize: 1, chunkBytes: 64}},
		{"file", nil, FormatVCFBGZF, Options{Threads: 2}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			c.opt.IncludeFiltered = true
			var got *scanResult
			var err error
			if c.data == nil {
				got, err = readFile(t, tmp, c.opt)
			} else {
				got, err = readBytes(t, c.data, c.opt)
			}
			if err != nil {
				t.Fatal(err)
			}
			if got.format != c.format {
				t.Errorf("format %v, want %v", got.format, c.format)
			}
			if !reflect.DeepEqual(got.sites, base.sites) || !bytes.Equal(genoBytes(got.gts), genoBytes(base.gts)) ||
				!reflect.DeepEqual(got.lines, base.lines) || got.skipped != base.skipped || got.read != base.read {
				t.Errorf("batches differ from the plain single-thread read")
			}
		})
	}
}

func genoBytes(g []Geno) []byte {
	b := make([]byte, len(g))
	for i, x := range g {
		b[i] = byte(x)
	}
	return b
}

// TestStdin reads a BGZF file through "-" (standard input).
func TestStdin(t *testing.T) {
	f, err := os.Open(filepath.Join("..", "testdata", "cohort189.vcf.gz"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	old := os.Stdin
	os.Stdin = f
	defer func() { os.Stdin = old }()
	res, err := readFile(t, "-", Options{IncludeFiltered: true})
	if err != nil {
		t.Fatal(err)
	}
	// 115 records, of which cyvcf2's table keeps the biallelic ACGT SNPs.
	want := readTSV(t, filepath.Join("..", "testdata", "expected", "cohort189.sites.tsv"))
	if len(res.sites) != len(want) || res.read != 115 {
		t.Errorf("stdin: %d sites of %d records, want %d of 115", len(res.sites), res.read, len(want))
	}
}

const miniHeader = "##fileformat=VCFv4.2\n" +
	"##contig=<ID=1,length=1000>\n" +
	"##contig=<ID=2,length=1000>\n" +
	"##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n" +
	"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\ta\tb\tc\n"

func mini(lines ...string) []byte {
	return []byte(miniHeader + strings.Join(lines, "\n") + "\n")
}

// TestGenotypeDecoding checks GT decoding against the VCF 4.4 specification
// section 1.6.2 (common practice: "/" unphased, "|" phased, "." missing
// allele, one allele for haploid calls).
func TestGenotypeDecoding(t *testing.T) {
	cases := []struct {
		name  string
		line  string
		want  []Geno
		flags string
	}{
		{"unphased", "1\t10\t.\tA\tG\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1", []Geno{HomRef, Heterozygous, HomAlt}, ""},
		{"phased", "1\t10\t.\tA\tG\t.\t.\t.\tGT\t1|0\t0|1\t1|1", []Geno{Heterozygous, Heterozygous, HomAlt}, ""},
		{"missing and half missing", "1\t10\t.\tA\tG\t.\t.\t.\tGT\t./.\t0/.\t.|1", []Geno{Missing, Missing, Missing}, ""},
		{"haploid", "1\t10\t.\tA\tG\t.\t.\t.\tGT\t0\t1\t.", []Geno{HaploidRef, HaploidAlt, Missing}, "haploid_calls"},
		{"other keys after GT", "1\t10\t.\tA\tG\t.\t.\t.\tGT:DP\t0/1:3\t1/1:.\t./.:0", []Geno{Heterozygous, HomAlt, Missing}, ""},
		{"GT not first", "1\t10\t.\tA\tG\t.\t.\t.\tDP:GT\t3:0/1\t4:1|1\t5:0/0", []Geno{Heterozygous, HomAlt, HomRef}, ""},
		{"dropped trailing fields", "1\t10\t.\tA\tG\t.\t.\t.\tDP:GT\t3\t4:1|1\t.", []Geno{Missing, HomAlt, Missing}, ""},
		{"triploid", "1\t10\t.\tA\tG\t.\t.\t.\tGT\t0/0/1\t0/1\t1/1", []Geno{Missing, Heterozygous, HomAlt}, "polyploid_calls_as_missing"},
		{"VCF 4.4 leading phase", "1\t10\t.\tA\tG\t.\t.\t.\tGT\t|0|1\t/1/1\t0/0", []Geno{Heterozygous, HomAlt, HomRef}, ""},
		{"lower case bases", "1\t10\t.\ta\tg\t.\t.\t.\tGT\t0/0\t0/1\t1/1", []Geno{HomRef, Heterozygous, HomAlt}, ""},
		{"CRLF", "1\t10\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1\r", []Geno{HomRef, Heterozygous, HomAlt}, ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			res, err := readBytes(t, mini(c.line), Options{})
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(res.gts, c.want) {
				t.Errorf("calls %v, want %v", res.gts, c.want)
			}
			var kinds []string
			for _, w := range res.warns {
				kinds = append(kinds, w.Kind)
			}
			if got := strings.Join(kinds, ","); got != c.flags {
				t.Errorf("warnings %q, want %q", got, c.flags)
			}
		})
	}
}

// TestSitePolicy checks which records are kept and why the others are
// skipped.
func TestSitePolicy(t *testing.T) {
	data := mini(
		"1\t1\t.\tA\tG\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1",     // kept
		"1\t2\t.\tA\tG,T\t.\tPASS\t.\tGT\t0/0\t0/2\t1/1",   // multiallelic (allele 2 is fine there)
		"1\t3\t.\tAT\tA\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1",    // indel
		"1\t4\t.\tAT\tGC\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1",   // MNP
		"1\t5\t.\tA\t<DEL>\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1", // symbolic
		"1\t6\t.\tA\t*\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1",     // spanning deletion
		"1\t7\t.\tA\t.\t.\tPASS\t.\tGT\t0/0\t0/0\t0/0",     // no ALT
		"1\t8\t.\tA\tG\t.\tq10\t.\tGT\t0/0\t0/1\t1/1",      // filtered
		"1\t9\t.\tA\tG\t.\t.\t.\tDP\t1\t2\t3",              // no GT
		"1\t10\t.\tN\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1",       // N is not a SNP base
	)
	res, err := readBytes(t, data, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := [NumSkipReasons]int64{SkipMultiallelic: 1, SkipIndel: 3, SkipSymbolic: 3, SkipFiltered: 1, SkipNoGT: 1}
	if res.skipped != want || len(res.sites) != 1 || res.read != 10 {
		t.Errorf("skipped %v kept %d read %d; want %v, 1, 10", res.skipped, len(res.sites), res.read, want)
	}
	res, err = readBytes(t, data, Options{IncludeFiltered: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.sites) != 2 || res.skipped[SkipFiltered] != 0 {
		t.Errorf("IncludeFiltered: kept %d, skipped %v", len(res.sites), res.skipped)
	}
}

// TestBadInput checks that malformed lines are rejected with the right
// sentinel, the file name and the line number.
func TestBadInput(t *testing.T) {
	hdrLines := int64(strings.Count(miniHeader, "\n"))
	cases := []struct {
		name string
		data []byte
		opt  Options
		want error
		line int64 // 0: do not check
		msg  string
	}{
		{"too few samples", mini("1\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1"), Options{}, ErrSampleCount, hdrLines + 1, "expected 3 sample columns"},
		{"too many samples", mini("1\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t0/0\t0/0"), Options{}, ErrSampleCount, hdrLines + 1, "expected 3 sample columns"},
		{"skipped record with too few samples", mini("1\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1", "1\t2\t.\tAC\tG\t.\t.\t.\tGT\t0/0"), Options{}, ErrSampleCount, hdrLines + 2, "found 1"},
		{"allele beyond ALT", mini("1\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/2\t1/1"), Options{}, ErrMalformed, hdrLines + 1, "allele 2"},
		{"bad GT", mini("1\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\tx/1\t1/1"), Options{}, ErrMalformed, hdrLines + 1, "GT"},
		{"bad POS", mini("1\tabc\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1"), Options{}, ErrMalformed, hdrLines + 1, "POS"},
		{"spaces not tabs", mini("1 1 . A G . . . GT 0/0 0/1 1/1"), Options{}, ErrMalformed, hdrLines + 1, "spaces"},
		{"header line inside data", mini("1\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1", "##late=1"), Options{}, ErrMalformed, hdrLines + 2, "header line"},
		{"too many alleles", mini("1\t1\t.\tA\tC,G,T\t.\t.\t.\tGT\t0/0\t0/1\t1/1"), Options{Limits: Limits{MaxAlleles: 3}}, ErrLimit, hdrLines + 1, "--guard-alleles"},
		{"line too long", mini("1\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1", "1\t2\t.\tA\tG\t.\t.\t"+strings.Repeat("X", 5000)+"\tGT\t0/0\t0/1\t1/1"), Options{Limits: Limits{MaxLineBytes: 4096}, chunkBytes: 512}, ErrLimit, 0, "--guard-line-bytes"},
		{"too many samples in header", mini(), Options{Limits: Limits{MaxSamples: 2}}, ErrLimit, hdrLines, "--guard-samples"},
		{"duplicate sample", []byte("##fileformat=VCFv4.2\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tx\ty\tx\n"), Options{}, ErrMalformed, 2, "unique"},
		{"no #CHROM line", []byte("##fileformat=VCFv4.2\n##x=1\n"), Options{}, ErrTruncated, 2, "#CHROM"},
		{"not a VCF", []byte("hello world\n"), Options{}, ErrMalformed, 1, "not a VCF"},
		{"empty", []byte{}, Options{}, ErrMalformed, 0, "empty"},
		{"unsorted positions", mini("1\t5\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1", "1\t4\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1"), Options{RequireSorted: true}, ErrUnsorted, hdrLines + 2, "comes after position 5"},
		{"unsorted across batches", mini("1\t5\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1", "1\t4\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1"), Options{RequireSorted: true, BatchSize: 1}, ErrUnsorted, hdrLines + 2, "comes after position 5"},
		{"chromosome split", mini("1\t5\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1", "2\t4\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1", "1\t6\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1"), Options{RequireSorted: true, BatchSize: 2}, ErrUnsorted, hdrLines + 3, "appears again"},
		{"unsorted skipped records count too", mini("1\t5\t.\tAT\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1", "1\t4\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1"), Options{RequireSorted: true}, ErrUnsorted, hdrLines + 2, "comes after"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := readBytes(t, c.data, c.opt)
			if err == nil {
				t.Fatal("no error")
			}
			if !errors.Is(err, c.want) {
				t.Fatalf("error %v, want %v", err, c.want)
			}
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %T is not a *ParseError", err)
			}
			if pe.File != "mem.vcf" {
				t.Errorf("file %q", pe.File)
			}
			if c.line > 0 && pe.Line != c.line {
				t.Errorf("line %d, want %d (%v)", pe.Line, c.line, err)
			}
			if !strings.Contains(err.Error(), c.msg) {
				t.Errorf("message %q lacks %q", err, c.msg)
			}
		})
	}
	// Without RequireSorted the same unsorted input reads fine.
	if _, err := readBytes(t, mini("1\t5\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1", "1\t4\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1"), Options{}); err != nil {
		t.Errorf("unsorted without RequireSorted: %v", err)
	}
}

// TestSampleSelection keeps and reorders samples.
func TestSampleSelection(t *testing.T) {
	data := mini("1\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1")
	cases := []struct {
		name    string
		opt     Options
		samples []string
		calls   []Geno
		err     string
	}{
		{"all", Options{}, []string{"a", "b", "c"}, []Geno{HomRef, Heterozygous, HomAlt}, ""},
		{"subset reordered", Options{Samples: []string{"c", "a"}}, []string{"c", "a"}, []Geno{HomAlt, HomRef}, ""},
		{"exclude", Options{ExcludeSamples: []string{"b"}}, []string{"a", "c"}, []Geno{HomRef, HomAlt}, ""},
		{"keep and exclude", Options{Samples: []string{"b", "c"}, ExcludeSamples: []string{"c"}}, []string{"b"}, []Geno{Heterozygous}, ""},
		{"unknown", Options{Samples: []string{"zz"}}, nil, nil, `"zz" is not in the file`},
		{"unknown excluded", Options{ExcludeSamples: []string{"zz"}}, nil, nil, `"zz" to exclude is not in the file`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			for _, mask := range []bool{false, true} {
				opt := c.opt
				if mask {
					opt.MinDP = 1 // forces the general decoding path; no DP here so nothing is masked
				}
				res, err := readBytes(t, data, opt)
				if c.err != "" {
					if err == nil || !strings.Contains(err.Error(), c.err) {
						t.Fatalf("error %v, want %q", err, c.err)
					}
					return
				}
				if err != nil {
					t.Fatal(err)
				}
				if !reflect.DeepEqual(res.samples, c.samples) || !reflect.DeepEqual(res.gts, c.calls) {
					t.Errorf("samples %v calls %v, want %v %v", res.samples, res.calls(), c.samples, c.calls)
				}
			}
		})
	}
}

func (s *scanResult) calls() []Geno { return s.gts }

// TestMaskingAndLikelihoods checks DP/GQ masking and PL/GL decoding. GL to
// phred as round(-10*GL) is common practice (VCF 4.4 section 1.6.2 defines
// GL as log10 and PL as phred-scaled).
func TestMaskingAndLikelihoods(t *testing.T) {
	data := mini(
		"1\t1\t.\tA\tG\t.\t.\t.\tGT:DP:GQ:PL\t0/0:9:50:0,30,300\t0/1:3:50:40,0,50\t1/1:20:5:300,30,0",
		"1\t2\t.\tA\tG\t.\t.\t.\tGT:GL\t0/0:-0.1,-2.04,-30\t0/1:.\t1:-3,-0.2",
		"1\t3\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1",
	)
	res, err := readBytes(t, data, Options{MinDP: 5, MinGQ: 10, WantPL: true})
	if err != nil {
		t.Fatal(err)
	}
	wantGT := []Geno{HomRef, Missing, Missing, HomRef, Heterozygous, HaploidAlt, HomRef, Heterozygous, HomAlt}
	if !reflect.DeepEqual(res.gts, wantGT) {
		t.Errorf("calls %v, want %v", res.gts, wantGT)
	}
	if res.masked != 2 {
		t.Errorf("masked %d, want 2", res.masked)
	}
	// Masked calls (DP 3, GQ 5) carry no likelihoods: zeros.
	wantPL := []uint16{0, 30, 300, 0, 0, 0, 0, 0, 0, 1, 20, 300, 0, 0, 0, 30, 65535, 2, 0, 0, 0, 0, 0, 0, 0, 0, 0}
	if !reflect.DeepEqual(res.pls, wantPL) {
		t.Errorf("PL %v, want %v", res.pls, wantPL)
	}
}

// TestInfoValue reads one INFO key as a number.
func TestInfoValue(t *testing.T) {
	data := mini(
		"1\t1\t.\tA\tG\t.\t.\tDP=3;AF=0.25,0.5\tGT\t0/0\t0/1\t1/1",
		"1\t2\t.\tA\tG\t.\t.\tAFX=3;DB\tGT\t0/0\t0/1\t1/1",
		"1\t3\t.\tA\tG\t.\t.\tAF=1e-3\tGT\t0/0\t0/1\t1/1",
	)
	r, err := NewReader(bytes.NewReader(data), "mem.vcf", Options{InfoKey: "AF"})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	b, err := r.Next()
	if err != nil {
		t.Fatal(err)
	}
	got := []float64{b.Records[0].InfoValue, b.Records[1].InfoValue, b.Records[2].InfoValue}
	if got[0] != 0.25 || got[1] == got[1] || got[2] != 0.001 {
		t.Errorf("INFO AF %v, want [0.25 NaN 0.001]", got)
	}
}

// TestContigs checks contig interning and header lengths.
func TestContigs(t *testing.T) {
	data := mini(
		"1\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1",
		"chrUn\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1",
		"2\t1\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1",
	)
	r, err := NewReader(bytes.NewReader(data), "mem.vcf", Options{BatchSize: 1})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	var ids []int
	for {
		b, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		for _, rec := range b.Records {
			ids = append(ids, rec.ChromID)
		}
	}
	h := r.Header()
	if !reflect.DeepEqual(ids, []int{0, 2, 1}) || len(h.Contigs) != 3 || h.Contigs[2].Name != "chrUn" || h.Contigs[0].Length != 1000 {
		t.Errorf("ids %v contigs %v", ids, h.Contigs)
	}
	w := r.Warnings()
	if len(w) != 1 || w[0].Kind != "contig_not_in_header" || w[0].Count != 1 {
		t.Errorf("warnings %v", w)
	}
}

// bgzfBlocks splits a BGZF stream into its blocks.
func bgzfBlocks(t *testing.T, data []byte) [][]byte {
	t.Helper()
	var out [][]byte
	for len(data) > 0 {
		bsize, ok := findBC(data[12 : 12+int(binary.LittleEndian.Uint16(data[10:12]))])
		if !ok {
			t.Fatal("not BGZF")
		}
		out = append(out, data[:bsize+1])
		data = data[bsize+1:]
	}
	return out
}

// TestBGZFDamage checks CRC32, ISIZE, truncation and the EOF marker (SAM
// specification section 4.1: each block's gzip trailer holds CRC32 and
// ISIZE of its data; the file ends with a fixed empty block).
func TestBGZFDamage(t *testing.T) {
	text := plainText(t, filepath.Join("..", "testdata", "cohort189.vcf.gz"))
	good := toBGZF(t, text)
	blocks := bgzfBlocks(t, good)
	if len(blocks) < 3 || !bytes.Equal(blocks[len(blocks)-1], bgzfEOF) {
		t.Fatalf("writer made %d blocks; want several ending with the EOF block", len(blocks))
	}
	join := func(bs [][]byte) []byte { return bytes.Join(bs, nil) }
	mutate := func(i int, f func(b []byte)) []byte {
		bs := make([][]byte, len(blocks))
		for k := range blocks {
			bs[k] = append([]byte(nil), blocks[k]...)
		}
		f(bs[i])
		return join(bs)
	}
	cases := []struct {
		name string
		data []byte
		err  error
		warn string
	}{
		{"intact", good, nil, ""},
		{"bad CRC", mutate(1, func(b []byte) { b[len(b)-8] ^= 0xff }), ErrChecksum, ""},
		{"bad ISIZE", mutate(1, func(b []byte) { b[len(b)-4]-- }), ErrChecksum, ""},
		{"huge ISIZE", mutate(1, func(b []byte) { binary.LittleEndian.PutUint32(b[len(b)-4:], 1<<30) }), ErrLimit, ""},
		{"corrupt deflate", mutate(1, func(b []byte) {
			for k := 20; k < 40; k++ {
				b[k] = 0xff
			}
		}), ErrMalformed, ""},
		{"cut inside a block", good[:len(blocks[0])+len(blocks[1])/2], ErrTruncated, ""},
		{"cut inside a header", good[:len(blocks[0])+5], ErrTruncated, ""},
		{"no EOF block", join(blocks[:len(blocks)-1]), nil, "bgzf_missing_eof"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r, err := NewReader(bytes.NewReader(c.data), "mem.vcf.gz", Options{Threads: 2, IncludeFiltered: true})
			if err == nil {
				var res *scanResult
				res, err = collect(t, r)
				if err == nil && res.read != 115 {
					t.Errorf("read %d records, want 115", res.read)
				}
				r.Close()
			}
			if c.err == nil && err != nil {
				t.Fatalf("unexpected error %v", err)
			}
			if c.err != nil {
				if !errors.Is(err, c.err) {
					t.Fatalf("error %v, want %v", err, c.err)
				}
				if !strings.Contains(err.Error(), "mem.vcf.gz") {
					t.Errorf("error %q does not name the file", err)
				}
				return
			}
			var kinds []string
			for _, w := range r.Warnings() {
				kinds = append(kinds, w.Kind)
			}
			if got := strings.Join(kinds, ","); got != c.warn {
				t.Errorf("warnings %q, want %q", got, c.warn)
			}
		})
	}
}

// TestBGZFWriterRoundTrip writes incompressible and empty data.
func TestBGZFWriterRoundTrip(t *testing.T) {
	src := make([]byte, 300_000)
	x := uint32(1)
	for i := range src {
		x = x*1664525 + 1013904223
		src[i] = byte(x >> 24)
	}
	for _, data := range [][]byte{nil, []byte("x"), src} {
		enc := toBGZF(t, data)
		z, err := newBGZFReader(bytes.NewReader(enc), "t", 2, 0, nil)
		if err != nil {
			t.Fatal(err)
		}
		got, err := io.ReadAll(z)
		if err != nil {
			t.Fatal(err)
		}
		z.Close()
		if !bytes.Equal(got, data) {
			t.Errorf("round trip of %d bytes gave %d bytes", len(data), len(got))
		}
		if missing, _ := z.eofs.get(); missing {
			t.Error("writer did not end with the EOF block")
		}
	}
}

// TestCloseEarly stops reading in the middle; no goroutine may be left.
func TestCloseEarly(t *testing.T) {
	text := plainText(t, filepath.Join("..", "testdata", "chr22_1000g.vcf.gz"))
	enc := toBGZF(t, text)
	before := runtime.NumGoroutine()
	for i := 0; i < 5; i++ {
		r, err := NewReader(bytes.NewReader(enc), "mem.vcf.gz", Options{Threads: 3, chunkBytes: 4096})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := r.Next(); err != nil {
			t.Fatal(err)
		}
		r.Close()
		if _, err := r.Next(); err == nil {
			t.Fatal("Next after Close gave no error")
		}
	}
	deadline := time.Now().Add(5 * time.Second)
	for runtime.NumGoroutine() > before && time.Now().Before(deadline) {
		time.Sleep(10 * time.Millisecond)
	}
	if n := runtime.NumGoroutine(); n > before {
		t.Errorf("%d goroutines left running after Close (%d before)", n-before, before)
	}
}

// TestBGZFWriterFlushAndThreads checks that Flush ends a block, that the
// output is the same whatever the number of compressing goroutines, and
// that writes after Close fail.
func TestBGZFWriterFlushAndThreads(t *testing.T) {
	text := plainText(t, filepath.Join("..", "testdata", "cohort189.vcf.gz"))
	var outs [][]byte
	for _, threads := range []int{1, 4} {
		var buf bytes.Buffer
		w := NewBGZFWriter(&buf, 6)
		w.SetThreads(threads)
		w.Write(text[:1000])
		if err := w.Flush(); err != nil {
			t.Fatal(err)
		}
		if n := len(bgzfBlocks(t, buf.Bytes())); n != 1 {
			t.Errorf("after Flush %d blocks written, want 1", n)
		}
		w.Write(text[1000:])
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
		if _, err := w.Write([]byte("x")); err == nil {
			t.Error("Write after Close succeeded")
		}
		outs = append(outs, buf.Bytes())
	}
	if !bytes.Equal(outs[0], outs[1]) {
		t.Error("output depends on the number of threads")
	}
	got, err := io.ReadAll(mustGzip(t, outs[1]))
	if err != nil || !bytes.Equal(got, text) {
		t.Errorf("gzip reads back %d bytes (%v), want %d", len(got), err, len(text))
	}
}

func mustGzip(t *testing.T, data []byte) io.Reader {
	zr, err := gzip.NewReader(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	return zr
}

// TestTextLayout covers line endings, blank lines and a missing
// ##fileformat line.
func TestTextLayout(t *testing.T) {
	rec := "1\t10\t.\tA\tG\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1"
	cases := []struct {
		name  string
		data  string
		kept  int
		warns string
	}{
		{"no final newline", miniHeader + rec, 1, ""},
		{"CRLF everywhere", strings.ReplaceAll(miniHeader+rec+"\n", "\n", "\r\n"), 1, ""},
		{"blank lines", miniHeader + "\n" + rec + "\n\n" + rec + "\n", 2, "blank_lines"},
		{"no fileformat line", "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\ta\tb\tc\n" + rec + "\n", 1, "contig_not_in_header,no_fileformat_line"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			res, err := readBytes(t, []byte(c.data), Options{})
			if err != nil {
				t.Fatal(err)
			}
			var kinds []string
			for _, w := range res.warns {
				kinds = append(kinds, w.Kind)
			}
			sort.Strings(kinds)
			if len(res.sites) != c.kept || strings.Join(kinds, ",") != c.warns {
				t.Errorf("kept %d warnings %v, want %d %q", len(res.sites), kinds, c.kept, c.warns)
			}
			if !reflect.DeepEqual(res.samples, []string{"a", "b", "c"}) {
				t.Errorf("samples %q", res.samples)
			}
		})
	}
}

// TestProgress checks that Progress reaches the file size.
func TestProgress(t *testing.T) {
	path := filepath.Join("..", "testdata", "chr22_1000g.vcf.gz")
	st, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	r, err := Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	if _, err := collect(t, r); err != nil {
		t.Fatal(err)
	}
	done, total := r.Progress()
	if total != st.Size() || done != total {
		t.Errorf("progress %d of %d, file has %d bytes", done, total, st.Size())
	}
	// A region query reads part of the file; progress still ends full.
	rr, err := Open(path, Options{Regions: []Region{{Chrom: "22", Start: 50_400_000, End: 50_500_000}}})
	if err != nil {
		t.Fatal(err)
	}
	defer rr.Close()
	res, err := collect(t, rr)
	if err != nil {
		t.Fatal(err)
	}
	done, total = rr.Progress()
	if len(res.sites) == 0 || total <= 0 || total >= st.Size() || done != total {
		t.Errorf("region: %d sites, progress %d of %d (file %d bytes)", len(res.sites), done, total, st.Size())
	}
	for i, s := range res.sites {
		if s.pos < 50_400_000 || s.pos > 50_500_000 || res.lines[i] != 0 {
			t.Fatalf("region: site %d at %d line %d", i, s.pos, res.lines[i])
		}
	}
}
