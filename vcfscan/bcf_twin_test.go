package vcfscan

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// Tests of BCF input through Open: the BCF twins must give exactly the
// batches of their VCF sources.

// bcfFlatRecord is a kept record with its calls, detached from its batch.
type bcfFlatRecord struct {
	Chrom                string
	Pos                  int64
	ID, Filter, Ref, Alt string
	Info                 float64
	GT                   []Geno
	PL                   []uint16
	HasPL                bool
}

type bcfScanResult struct {
	format  Format
	samples []string
	recs    []bcfFlatRecord
	read    int64
	skipped [NumSkipReasons]int64
	masked  int64
}

// bcfScanFile reads path with Open and flattens every batch.
func bcfScanFile(t testing.TB, path string, opt Options) bcfScanResult {
	t.Helper()
	r, err := Open(path, opt)
	if err != nil {
		t.Fatalf("Open(%s): %v", path, err)
	}
	defer r.Close()
	res := bcfScanResult{format: r.Format(), samples: append([]string(nil), r.Samples()...)}
	for {
		b, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("%s: Next: %v", path, err)
		}
		res.read += b.Read
		res.masked += b.Masked
		for k := range b.Skipped {
			res.skipped[k] += b.Skipped[k]
		}
		for i, rec := range b.Records {
			f := bcfFlatRecord{
				Chrom: r.Header().Contigs[rec.ChromID].Name, Pos: rec.Pos,
				ID: string(rec.ID), Filter: string(rec.Filter), Ref: string(rec.Ref), Alt: string(rec.Alt),
				Info: rec.InfoValue,
				GT:   append([]Geno(nil), b.Calls(i)...),
			}
			if opt.WantPL {
				f.HasPL = b.HasPL[i]
				f.PL = make([]uint16, 3*b.NSamples) // zeros: PL is empty in batches without likelihoods
				if len(b.PL) > 0 {
					copy(f.PL, b.PL[3*i*b.NSamples:3*(i+1)*b.NSamples])
				}
			}
			res.recs = append(res.recs, f)
		}
		r.Release(b)
	}
	return res
}

// bcfCompareScans reports the first differences between two scans.
func bcfCompareScans(t *testing.T, what string, a, b bcfScanResult, counts bool) {
	t.Helper()
	if strings.Join(a.samples, ",") != strings.Join(b.samples, ",") {
		t.Fatalf("%s: samples differ: %v vs %v", what, a.samples, b.samples)
	}
	if len(a.recs) != len(b.recs) {
		t.Errorf("%s: %d vs %d kept records", what, len(a.recs), len(b.recs))
	}
	if counts {
		if a.read != b.read || a.skipped != b.skipped || a.masked != b.masked {
			t.Errorf("%s: counts differ: read %d/%d skipped %v/%v masked %d/%d", what, a.read, b.read, a.skipped, b.skipped, a.masked, b.masked)
		}
	}
	bad := 0
	for i := 0; i < len(a.recs) && i < len(b.recs) && bad < 5; i++ {
		x, y := a.recs[i], b.recs[i]
		if x.Chrom != y.Chrom || x.Pos != y.Pos || x.ID != y.ID || x.Filter != y.Filter || x.Ref != y.Ref || x.Alt != y.Alt ||
			!bcfSameFloat(x.Info, y.Info) || x.HasPL != y.HasPL {
			t.Errorf("%s: record %d differs:\n %+v\n %+v", what, i, x, y)
			bad++
			continue
		}
		for j := range x.GT {
			if x.GT[j] != y.GT[j] {
				t.Errorf("%s: %s:%d sample %d: GT %d vs %d", what, x.Chrom, x.Pos, j, x.GT[j], y.GT[j])
				bad++
				break
			}
		}
		for j := range x.PL {
			if x.PL[j] != y.PL[j] {
				t.Errorf("%s: %s:%d PL value %d: %d vs %d", what, x.Chrom, x.Pos, j, x.PL[j], y.PL[j])
				bad++
				break
			}
		}
	}
}

// bcfTwins pairs each VCF fixture with the BCF written from it by
// testdata/tools/make_bcf_twins.py (python3-pysam 0.20.0, htslib's BCF 2.2
// encoder): an independent encoder, so agreement checks our decoder against
// htslib's reading of the same text.
var bcfTwins = []struct{ vcf, bcf string }{
	{"../testdata/chr22_1000g.vcf.gz", "../testdata/bcf/chr22_1000g.bcf"},
	{"../testdata/cohort189.vcf.gz", "../testdata/bcf/cohort189.bcf"},
	{"../testdata/annotated_small.vcf", "../testdata/bcf/annotated_small.bcf"},
	{"../testdata/annotated_small.vcf", "../testdata/annotated_small.bcf"}, // shipped upstream twin
	{"../testdata/edge/test-haploidX.vcf", "../testdata/bcf/test-haploidX.bcf"},
	{"../testdata/edge/gl_chr1.vcf", "../testdata/bcf/gl_chr1.bcf"},
	{"../testdata/edge/test.mnp.vcf", "../testdata/bcf/test.mnp.bcf"},
}

// bcfEdgeTwins are BCF twins of the edge files htslib encodes whole
// (testdata/bcf/edge/, same script): no samples, no FORMAT, symbolic and
// structural alleles, gVCF bands, hemizygous calls, missing headers.
var bcfEdgeTwins = []string{
	"FORMAT_header_no_SAMPLEs.vcf", "banded_gvcf.vcf", "chr7-sub.vcf.gz",
	"decomposed.vcf", "expand.vcf", "issue_198.vcf", "multiple_INFO_fields.vcf",
	"no-seq-len.vcf", "no-seq-names.vcf", "no_FORMAT_column.vcf",
	"no_INFO_header.vcf", "structural.vcf", "test-format-string.vcf",
	"test-genotypes.vcf", "test-hemi.vcf",
	"test-multiallelic-homozygous-alt.vcf.gz",
}

func TestBCFEdgeTwinsMatchVCF(t *testing.T) {
	for _, name := range bcfEdgeTwins {
		stem := strings.TrimSuffix(strings.TrimSuffix(name, ".gz"), ".vcf")
		vcf, bcf := "../testdata/edge/"+name, "../testdata/bcf/edge/"+stem+".bcf"
		for _, opt := range []Options{{}, {IncludeFiltered: true, WantPL: true, InfoKey: "DP", MinGQ: 10, MinDP: 5}} {
			v := bcfScanFile(t, vcf, opt)
			b := bcfScanFile(t, bcf, opt)
			if v.read == 0 {
				t.Fatalf("%s: no records read", vcf)
			}
			bcfCompareScans(t, bcf, v, b, true)
		}
	}
}

func TestBCFTwinsMatchVCF(t *testing.T) {
	opts := []struct {
		name string
		opt  Options
	}{
		{"default", Options{}},
		{"all_fields", Options{IncludeFiltered: true, WantPL: true, InfoKey: "AF"}},
		{"masking", Options{IncludeFiltered: true, MinGQ: 20, MinDP: 8, WantPL: true}},
		{"one_thread_small_batches", Options{Threads: 1, BatchSize: 7, InfoKey: "DP"}},
	}
	for _, tw := range bcfTwins {
		for _, o := range opts {
			t.Run(filepath.Base(tw.bcf)+"/"+o.name, func(t *testing.T) {
				v := bcfScanFile(t, tw.vcf, o.opt)
				b := bcfScanFile(t, tw.bcf, o.opt)
				if b.format != FormatBCF {
					t.Errorf("format %v, want %v", b.format, FormatBCF)
				}
				if len(v.recs) == 0 && tw.vcf != "../testdata/edge/test.mnp.vcf" {
					t.Fatalf("no kept records in %s: the comparison would prove nothing", tw.vcf)
				}
				bcfCompareScans(t, tw.bcf, v, b, true)
			})
		}
	}
}

func TestBCFSampleSelection(t *testing.T) {
	// Selection and reordering must pick the same columns as the VCF path.
	vcf, bcf := "../testdata/cohort189.vcf.gz", "../testdata/bcf/cohort189.bcf"
	full := bcfScanFile(t, bcf, Options{})
	opt := Options{Samples: []string{full.samples[5], full.samples[0], full.samples[100]}, WantPL: true}
	v := bcfScanFile(t, vcf, opt)
	b := bcfScanFile(t, bcf, opt)
	bcfCompareScans(t, "samples", v, b, true)
	if len(b.samples) != 3 || b.samples[0] != full.samples[5] {
		t.Fatalf("samples %v", b.samples)
	}
	for i, r := range b.recs {
		if r.GT[0] != full.recs[i].GT[5] || r.GT[1] != full.recs[i].GT[0] || r.GT[2] != full.recs[i].GT[100] {
			t.Fatalf("record %d: selected calls %v do not match full scan", i, r.GT)
		}
	}
	ex := bcfScanFile(t, bcf, Options{ExcludeSamples: []string{full.samples[0]}})
	bcfCompareScans(t, "exclude", bcfScanFile(t, vcf, Options{ExcludeSamples: []string{full.samples[0]}}), ex, true)
}

// TestBCFCountsMatchReference checks per-site genotype counts decoded from
// the BCF twins against testdata/expected/*.sites.tsv, computed from the VCF
// with python3-cyvcf2 0.30.18 (tools/site_sample_counts.py); that script's
// site policy is one ALT, single ACGT bases, any FILTER, and a call with a
// missing allele counts as missing.
func TestBCFCountsMatchReference(t *testing.T) {
	for _, c := range []struct{ bcf, expected string }{
		{"../testdata/bcf/chr22_1000g.bcf", "../testdata/expected/chr22_1000g.sites.tsv"},
		{"../testdata/bcf/cohort189.bcf", "../testdata/expected/cohort189.sites.tsv"},
	} {
		got := bcfScanFile(t, c.bcf, Options{IncludeFiltered: true})
		f, err := os.Open(c.expected)
		if err != nil {
			t.Fatal(err)
		}
		sc := bufio.NewScanner(f)
		sc.Scan() // header
		i := 0
		for sc.Scan() {
			fs := strings.Split(sc.Text(), "\t")
			if i >= len(got.recs) {
				t.Fatalf("%s: only %d kept records, reference has more", c.bcf, len(got.recs))
			}
			r := got.recs[i]
			var n [4]int
			for _, g := range r.GT {
				switch g {
				case HomRef, HomAlt, Heterozygous:
					n[g]++
				default:
					n[3]++
				}
			}
			want := fmt.Sprintf("%s:%s %s %s %s %s", fs[0], fs[1], fs[2], fs[3], fs[4], fs[5])
			have := fmt.Sprintf("%s:%d %d %d %d %d", r.Chrom, r.Pos, n[0], n[1], n[2], n[3])
			if want != have {
				t.Errorf("%s: site %d: got %s, reference %s", c.bcf, i, have, want)
			}
			i++
		}
		f.Close()
		if i != len(got.recs) || i == 0 {
			t.Errorf("%s: %d kept records, reference %d", c.bcf, len(got.recs), i)
		}
	}
}

func TestBCFHeader(t *testing.T) {
	r, err := Open("../testdata/bcf/cohort189.bcf", Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	v, err := Open("../testdata/cohort189.vcf.gz", Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer v.Close()
	hb, hv := r.Header(), v.Header()
	if len(hb.Samples) != 189 || strings.Join(hb.Samples, ",") != strings.Join(hv.Samples, ",") {
		t.Errorf("samples: %d in BCF, %d in VCF", len(hb.Samples), len(hv.Samples))
	}
	if len(hb.Contigs) != len(hv.Contigs) || hb.Contigs[0] != hv.Contigs[0] {
		t.Errorf("contigs: %v vs %v", hb.Contigs[:1], hv.Contigs[:1])
	}
	if hb.FileFormat != hv.FileFormat {
		t.Errorf("fileformat %q vs %q", hb.FileFormat, hv.FileFormat)
	}
	if hb.FormatDefs["GT"].Type != "String" || hb.Info["AF"].Number != hv.Info["AF"].Number {
		t.Errorf("definitions: GT %+v AF %+v", hb.FormatDefs["GT"], hb.Info["AF"])
	}
}

func TestBCFTruncatedFile(t *testing.T) {
	// A BCF cut inside a BGZF block must fail with a ParseError, not
	// succeed quietly or panic.
	raw, err := os.ReadFile("../testdata/bcf/cohort189.bcf")
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "cut.bcf")
	if err := os.WriteFile(p, raw[:len(raw)/2], 0o644); err != nil {
		t.Fatal(err)
	}
	r, err := Open(p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	for {
		_, err = r.Next()
		if err != nil {
			break
		}
	}
	var pe *ParseError
	if err == io.EOF || !errors.As(err, &pe) {
		t.Fatalf("cut file: %v, want a ParseError", err)
	}
}

// BenchmarkBCFScan reads the chr22 twin end to end through Open on one
// thread, next to its VCF source as the floor to compare with.
func BenchmarkBCFScan(b *testing.B) {
	for _, path := range []string{"../testdata/bcf/chr22_1000g.bcf", "../testdata/chr22_1000g.vcf.gz"} {
		for _, c := range []struct {
			name string
			opt  Options
		}{
			{"gt_only", Options{Threads: 1}},
			{"gt_pl_info", Options{Threads: 1, WantPL: true, InfoKey: "AF"}},
		} {
			b.Run(filepath.Base(path)+"/"+c.name, func(b *testing.B) {
				var recs int64
				for i := 0; i < b.N; i++ {
					r, err := Open(path, c.opt)
					if err != nil {
						b.Fatal(err)
					}
					for {
						bt, err := r.Next()
						if err != nil {
							break
						}
						recs += bt.Read
						r.Release(bt)
					}
					r.Close()
				}
				b.ReportMetric(float64(recs)/b.Elapsed().Seconds(), "records/s")
			})
		}
	}
}

func TestBCFWarningsMatchVCF(t *testing.T) {
	count := func(path string) map[string]int64 {
		r, err := Open(path, Options{})
		if err != nil {
			t.Fatal(err)
		}
		defer r.Close()
		for {
			b, err := r.Next()
			if err != nil {
				break
			}
			r.Release(b)
		}
		m := map[string]int64{}
		for _, w := range r.Warnings() {
			m[w.Kind] = w.Count
		}
		return m
	}
	v := count("../testdata/edge/test-haploidX.vcf")
	b := count("../testdata/bcf/test-haploidX.bcf")
	if v["haploid_calls"] == 0 || v["haploid_calls"] != b["haploid_calls"] {
		t.Errorf("haploid_calls: VCF %d, BCF %d", v["haploid_calls"], b["haploid_calls"])
	}
}

// TestBCFRequireSorted builds an uncompressed BCF whose second record goes
// back in position, and one that returns to a finished chromosome.
func TestBCFRequireSorted(t *testing.T) {
	text := "##fileformat=VCFv4.2\n##contig=<ID=chr1,IDX=0>\n##contig=<ID=chr2,IDX=1>\n" +
		"##FORMAT=<ID=GT,Number=1,Type=String,Description=\"g\",IDX=1>\n" +
		"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\ts1\n\x00"
	file := func(recs ...bcfRec) string {
		var buf bytes.Buffer
		buf.WriteString("BCF\x02\x02")
		binary.Write(&buf, binary.LittleEndian, uint32(len(text)))
		buf.WriteString(text)
		for _, r := range recs {
			buf.Write(r.bytes())
		}
		p := filepath.Join(t.TempDir(), "s.bcf")
		if err := os.WriteFile(p, buf.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	rec := func(chrom, pos int32) bcfRec {
		return bcfRec{chrom: chrom, pos0: pos, alleles: []string{"A", "G"}, fmt: [][]byte{{0x11, 1, 2<<4 | bcfTypeInt8, 2, 4}}, nSample: 1}
	}
	for _, c := range []struct {
		name string
		recs []bcfRec
		bad  bool
	}{
		{"sorted", []bcfRec{rec(0, 10), rec(0, 20), rec(1, 5)}, false},
		{"position goes back", []bcfRec{rec(0, 20), rec(0, 10)}, true},
		{"chromosome again", []bcfRec{rec(0, 10), rec(1, 5), rec(0, 30)}, true},
	} {
		p := file(c.recs...)
		for _, require := range []bool{false, true} {
			r, err := Open(p, Options{RequireSorted: require})
			if err != nil {
				t.Fatalf("%s: %v", c.name, err)
			}
			if r.Format() != FormatBCFPlain {
				t.Errorf("%s: format %v", c.name, r.Format())
			}
			n := 0
			for {
				b, err2 := r.Next()
				if err2 != nil {
					err = err2
					break
				}
				n += len(b.Records)
			}
			r.Close()
			wantErr := c.bad && require
			if wantErr != errors.Is(err, ErrUnsorted) {
				t.Errorf("%s require=%v: %v", c.name, require, err)
			}
			if !wantErr && (err != io.EOF || n != len(c.recs)) {
				t.Errorf("%s require=%v: %d records, end %v", c.name, require, n, err)
			}
		}
	}
}

// TestBCFInfoValues compares Record.InfoValue between twins for INFO keys
// of every type: Flag, Integer, Float, Character and String (a String
// value is read as a number when it is one, as in the VCF path).
func TestBCFInfoValues(t *testing.T) {
	for _, c := range []struct {
		vcf, bcf string
		keys     []string
	}{
		{"../testdata/chr22_1000g.vcf.gz", "../testdata/bcf/chr22_1000g.bcf", []string{"AN", "AC", "LDAF", "RSQ", "THETA", "AA", "VT", "SNPSOURCE", "NOSUCHKEY"}},
		{"../testdata/cohort189.vcf.gz", "../testdata/bcf/cohort189.bcf", []string{"EXOME_CHIP_flag", "NEGATIVE_TRAIN_SITE", "superdup", "encode_consensus_h1hesc", "InbreedingCoeff", "MLEAF", "HWP", "set", "AC"}},
		{"../testdata/edge/test-haploidX.vcf", "../testdata/bcf/test-haploidX.bcf", []string{"DS", "AF", "GQ_MEAN", "END", "MQ0"}},
	} {
		for _, k := range c.keys {
			opt := Options{IncludeFiltered: true, InfoKey: k}
			v := bcfScanFile(t, c.vcf, opt)
			b := bcfScanFile(t, c.bcf, opt)
			bcfCompareScans(t, filepath.Base(c.bcf)+" INFO "+k, v, b, true)
			present := 0
			for _, r := range b.recs {
				if !math.IsNaN(r.Info) {
					present++
				}
			}
			t.Logf("%s %s: %d of %d kept records have a value", filepath.Base(c.bcf), k, present, len(b.recs))
			if k == "NOSUCHKEY" && present != 0 {
				t.Errorf("absent key gave %d values", present)
			}
			if (k == "superdup" || k == "AN" || k == "MLEAF") && present == 0 {
				t.Errorf("%s: no record has a value; the comparison proves little", k)
			}
		}
	}
}

// TestBCFBatchCap checks that many samples make smaller batches: 600
// records of 2000 samples are 1.2 million calls, more than one batch holds.
func TestBCFBatchCap(t *testing.T) {
	const nSamples, nRecs = 2000, 600
	var text strings.Builder
	text.WriteString("##fileformat=VCFv4.2\n##contig=<ID=1>\n##FORMAT=<ID=GT,Number=1,Type=String,Description=\"g\">\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for i := 0; i < nSamples; i++ {
		fmt.Fprintf(&text, "\tS%d", i)
	}
	text.WriteString("\n\x00")
	var buf bytes.Buffer
	buf.WriteString("BCF\x02\x02")
	binary.Write(&buf, binary.LittleEndian, uint32(text.Len()))
	buf.WriteString(text.String())
	gt := []byte{0x11, 1, 2<<4 | bcfTypeInt8} // dictionary: PASS=0, GT=1
	for i := 0; i < nSamples; i++ {
		gt = append(gt, 2, byte(2+2*(i%2)))
	}
	for i := 0; i < nRecs; i++ {
		buf.Write(bcfRec{pos0: int32(100 * (i + 1)), alleles: []string{"A", "C"}, fmt: [][]byte{gt}, nSample: nSamples}.bytes())
	}
	p := filepath.Join(t.TempDir(), "wide.bcf")
	if err := os.WriteFile(p, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	r, err := Open(p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	batches, recs := 0, 0
	for {
		b, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		batches++
		recs += len(b.Records)
		if len(b.GT) > bcfBatchCalls+nSamples {
			t.Errorf("batch of %d calls", len(b.GT))
		}
		if c := b.Calls(len(b.Records) - 1); c[0] != HomRef || c[1] != Heterozygous {
			t.Errorf("calls %v", c[:2])
		}
		r.Release(b)
	}
	if recs != nRecs || batches < 3 {
		t.Errorf("%d records in %d batches, want %d in at least 3", recs, batches, nRecs)
	}
}

// TestBCFMatchesHtslib compares our decoding of three BCF twins with
// htslib's: testdata/bcf/*.htslib_calls.tsv hold the genotypes and PL/GL
// values python3-pysam 0.20.0 (htslib) reads from the same BCF files,
// mapped to our call codes and phred triples by
// testdata/tools/make_bcf_twins.py (see geno_code and phred there).
func TestBCFMatchesHtslib(t *testing.T) {
	for _, stem := range []string{"cohort189", "test-haploidX", "gl_chr1"} {
		got := bcfScanFile(t, "../testdata/bcf/"+stem+".bcf", Options{IncludeFiltered: true, WantPL: true})
		raw, err := os.ReadFile("../testdata/bcf/" + stem + ".htslib_calls.tsv")
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.Split(strings.TrimSpace(string(raw)), "\n")[1:]
		if len(lines) != len(got.recs) || len(lines) == 0 {
			t.Fatalf("%s: %d kept records, htslib %d", stem, len(got.recs), len(lines))
		}
		for i, line := range lines {
			f := strings.Split(line, "\t")
			r := got.recs[i]
			if f[0] != r.Chrom || f[1] != strconv.FormatInt(r.Pos, 10) {
				t.Fatalf("%s row %d: %s:%s vs %s:%d", stem, i, f[0], f[1], r.Chrom, r.Pos)
			}
			codes := make([]string, len(r.GT))
			for j, g := range r.GT {
				codes[j] = strconv.Itoa(int(g))
			}
			if c := strings.Join(codes, ","); c != f[2] {
				t.Errorf("%s %s:%s: calls differ:\n ours   %s\n htslib %s", stem, f[0], f[1], c, f[2])
			}
			if f[3] == "." {
				if r.HasPL {
					t.Errorf("%s %s:%s: likelihoods where htslib has none", stem, f[0], f[1])
				}
				continue
			}
			pl := make([]string, len(r.PL))
			for j, v := range r.PL {
				pl[j] = strconv.Itoa(int(v))
			}
			if p := strings.Join(pl, ","); !r.HasPL || p != f[3] {
				t.Errorf("%s %s:%s: likelihoods differ:\n ours   %s\n htslib %s", stem, f[0], f[1], p, f[3])
			}
		}
	}
}
