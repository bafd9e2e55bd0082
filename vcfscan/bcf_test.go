package vcfscan

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"
)

func TestBCFHeaderErrors(t *testing.T) {
	hdr := "##fileformat=VCFv4.2\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n\x00"
	withLen := func(magic, text string, l int) []byte {
		var b bytes.Buffer
		b.WriteString(magic)
		binary.Write(&b, binary.LittleEndian, uint32(l))
		b.WriteString(text)
		return b.Bytes()
	}
	cases := []struct {
		name string
		in   []byte
		want error
		msg  string
	}{
		{"ok", withLen("BCF\x02\x02", hdr, len(hdr)), nil, ""},
		{"version 2.1", withLen("BCF\x02\x01", hdr, len(hdr)), ErrMalformed, "version 2.1"},
		{"not BCF", []byte("##fileformat=VCFv4.2\n"), ErrMalformed, "not BCF"},
		{"short magic", []byte("BCF"), ErrTruncated, "file ends"},
		{"short text", withLen("BCF\x02\x02", hdr[:10], len(hdr)), ErrTruncated, "header text"},
		{"huge length", withLen("BCF\x02\x02", hdr, 1<<31), ErrLimit, "limit"},
		{"no CHROM", withLen("BCF\x02\x02", "##fileformat=VCFv4.2\n\x00", 22), ErrTruncated, ""},
		{"IDX clash", withLen("BCF\x02\x02", "##fileformat=VCFv4.2\n##INFO=<ID=A,Number=1,Type=Integer,Description=\"x\",IDX=1>\n##INFO=<ID=B,Number=1,Type=Integer,Description=\"x\",IDX=1>\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n", 200), ErrMalformed, "IDX=1"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			in := c.in
			if c.name == "IDX clash" { // fix the length word to the text
				in = withLen("BCF\x02\x02", string(in[9:]), len(in)-9)
			}
			h, err := readBCFHeader(bytes.NewReader(in), "x.bcf", Limits{}, nil)
			if c.want == nil {
				if err != nil || h == nil {
					t.Fatalf("unexpected error %v", err)
				}
				return
			}
			if !errors.Is(err, c.want) {
				t.Fatalf("error %v, want %v", err, c.want)
			}
			var pe *ParseError
			if !errors.As(err, &pe) || !strings.Contains(err.Error(), "x.bcf") || !strings.Contains(err.Error(), c.msg) {
				t.Errorf("error %q should be a ParseError naming the file and %q", err, c.msg)
			}
		})
	}
}

// TestBCFDictionaries checks the dictionary rules of the BCF 2.2
// specification section 6.2.1 (hts-specs): PASS first, FILTER/INFO/FORMAT
// IDs in header order sharing one slot per ID, IDX overriding the order.
func TestBCFDictionaries(t *testing.T) {
	cases := []struct {
		name          string
		meta          []string
		strs, contigs string
	}{
		{"order and sharing", []string{
			"fileformat=VCFv4.2",
			`FILTER=<ID=q10,Description="low">`,
			`INFO=<ID=DP,Number=1,Type=Integer,Description="d">`,
			`contig=<ID=chr2,length=10>`,
			`FORMAT=<ID=GT,Number=1,Type=String,Description="g">`,
			`FORMAT=<ID=DP,Number=1,Type=Integer,Description="d">`,
			`contig=<ID=chr1>`,
		}, "PASS,q10,DP,GT", "chr2,chr1"},
		{"explicit PASS later keeps slot 0", []string{
			`INFO=<ID=AF,Number=A,Type=Float,Description="a">`,
			`FILTER=<ID=PASS,Description="All filters passed">`,
		}, "PASS,AF", ""},
		{"IDX", []string{
			`FILTER=<ID=PASS,Description="p",IDX=0>`,
			`INFO=<ID=AF,Number=A,Type=Float,Description="a, with comma",IDX=3>`,
			`FORMAT=<ID=GT,Number=1,Type=String,Description="g",IDX=1>`,
			`contig=<ID=x,IDX=1>`,
			`contig=<ID=y,IDX=0>`,
		}, "PASS,GT,,AF", "y,x"},
	}
	for _, c := range cases {
		strs, contigs, err := bcfDictionaries(c.meta)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if got := strings.Join(strs, ","); got != c.strs {
			t.Errorf("%s: strings %q, want %q", c.name, got, c.strs)
		}
		if got := strings.Join(contigs, ","); got != c.contigs {
			t.Errorf("%s: contigs %q, want %q", c.name, got, c.contigs)
		}
	}
}

// bcfTestHeader is a small header for hand-made records: dictionary
// PASS=0, q10=1, AF=2, GT=3, GQ=4, DP=5, PL=6; contig chr1=0.
var bcfTestHeader = &Header{
	Meta: []string{
		`FILTER=<ID=q10,Description="low">`,
		`INFO=<ID=AF,Number=A,Type=Float,Description="a">`,
		`FORMAT=<ID=GT,Number=1,Type=String,Description="g">`,
		`FORMAT=<ID=GQ,Number=1,Type=Integer,Description="q">`,
		`FORMAT=<ID=DP,Number=1,Type=Integer,Description="d">`,
		`FORMAT=<ID=PL,Number=G,Type=Integer,Description="p">`,
		`contig=<ID=chr1>`,
	},
	Contigs: []Contig{{Name: "chr1"}},
	Samples: []string{"s1", "s2", "s3"},
}

// bcfRec builds a BCF record by hand, following BCF 2.2 section 6.3.
type bcfRec struct {
	chrom, pos0 int32
	alleles     []string
	filters     []int8
	info        [][]byte // key+value, already typed
	fmt         [][]byte // key+type+values, already typed
	nSample     int
}

func typedStr(s string) []byte {
	if len(s) < 15 {
		return append([]byte{byte(len(s)<<4 | bcfTypeChar)}, s...)
	}
	return append([]byte{0xF0 | bcfTypeChar, 0x11, byte(len(s))}, s...)
}

func (r bcfRec) bytes() []byte {
	var sh bytes.Buffer
	binary.Write(&sh, binary.LittleEndian, r.chrom)
	binary.Write(&sh, binary.LittleEndian, r.pos0)
	binary.Write(&sh, binary.LittleEndian, int32(1))
	binary.Write(&sh, binary.LittleEndian, uint32(0x7F800001))
	binary.Write(&sh, binary.LittleEndian, uint32(len(r.alleles))<<16|uint32(len(r.info)))
	binary.Write(&sh, binary.LittleEndian, uint32(len(r.fmt))<<24|uint32(r.nSample))
	sh.WriteByte(bcfTypeChar) // missing ID
	for _, a := range r.alleles {
		sh.Write(typedStr(a))
	}
	sh.WriteByte(byte(len(r.filters)<<4 | bcfTypeInt8))
	for _, f := range r.filters {
		sh.WriteByte(byte(f))
	}
	for _, kv := range r.info {
		sh.Write(kv)
	}
	var ind bytes.Buffer
	for _, f := range r.fmt {
		ind.Write(f)
	}
	var out bytes.Buffer
	binary.Write(&out, binary.LittleEndian, uint32(sh.Len()))
	binary.Write(&out, binary.LittleEndian, uint32(ind.Len()))
	out.Write(sh.Bytes())
	out.Write(ind.Bytes())
	return out.Bytes()
}

// Hand-made records for rules the fixtures do not reach; expected values
// follow the BCF 2.2 encoding rules (hts-specs section 6.3.3, GT as
// (allele+1)<<1|phased, 0x81 end of vector) and our VCF policy.
func TestBCFDecodeHandMade(t *testing.T) {
	gt := func(vals ...byte) []byte { // key GT=3, int8 x2 per sample
		return append([]byte{0x11, 3, 2<<4 | bcfTypeInt8}, vals...)
	}
	gq := func(vals ...byte) []byte { return append([]byte{0x11, 4, 1<<4 | bcfTypeInt8}, vals...) }
	// PL as int16: [0,10,1000], a haploid pair [5,0,end], and [missing,end,end]
	pl16 := []byte{0x11, 6, 3<<4 | bcfTypeInt16, 0, 0, 10, 0, 0xE8, 0x03, 5, 0, 0, 0, 0x01, 0x80, 0x00, 0x80, 0x01, 0x80, 0x01, 0x80}
	af := []byte{0x11, 2, 1<<4 | bcfTypeFloat, 0, 0, 0, 0}
	binary.LittleEndian.PutUint32(af[3:], math.Float32bits(0.25))
	cases := []struct {
		name   string
		rec    bcfRec
		opt    Options
		kept   bool
		reason SkipReason
		gt     []Geno
		pl     []uint16
		info   float64
		filter string
		err    error
	}{
		{name: "diploid phased and unphased",
			rec:  bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{gt(2, 4, 4, 5, 3, 5)}, nSample: 3},
			kept: true, gt: []Geno{Heterozygous, HomAlt, Heterozygous}, filter: "."},
		{name: "missing alleles and haploid",
			rec:  bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{gt(0, 0, 2, 0, 4, 0x81)}, nSample: 3},
			kept: true, gt: []Geno{Missing, Missing, HaploidAlt}, filter: "."},
		{name: "empty GT vector",
			rec:  bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{gt(0x81, 0x81, 2, 2, 0x80, 0x81)}, nSample: 3},
			kept: true, gt: []Geno{Missing, HomRef, Missing}, filter: "."},
		{name: "allele 2 in biallelic record",
			rec: bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{gt(2, 6, 2, 2, 2, 2)}, nSample: 3},
			err: ErrMalformed},
		{name: "filtered", rec: bcfRec{alleles: []string{"A", "G"}, filters: []int8{1}, fmt: [][]byte{gt(2, 2, 2, 2, 2, 2)}, nSample: 3},
			reason: SkipFiltered},
		{name: "filtered kept", opt: Options{IncludeFiltered: true},
			rec:  bcfRec{alleles: []string{"A", "G"}, filters: []int8{0, 1}, fmt: [][]byte{gt(2, 2, 2, 2, 2, 2)}, nSample: 3},
			kept: true, gt: []Geno{HomRef, HomRef, HomRef}, filter: "PASS;q10"},
		{name: "pass", rec: bcfRec{alleles: []string{"A", "G"}, filters: []int8{0}, fmt: [][]byte{gt(2, 2, 2, 2, 2, 2)}, nSample: 3},
			kept: true, gt: []Geno{HomRef, HomRef, HomRef}, filter: "PASS"},
		{name: "multiallelic", rec: bcfRec{alleles: []string{"A", "G", "T"}, nSample: 3}, reason: SkipMultiallelic},
		{name: "too many alleles", opt: Options{Limits: Limits{MaxAlleles: 2}}, rec: bcfRec{alleles: []string{"A", "G", "T"}, nSample: 3}, err: ErrLimit},
		{name: "no alt", rec: bcfRec{alleles: []string{"A"}, nSample: 3}, reason: SkipSymbolic},
		{name: "symbolic", rec: bcfRec{alleles: []string{"A", "<DEL>"}, nSample: 3}, reason: SkipSymbolic},
		{name: "star", rec: bcfRec{alleles: []string{"A", "*"}, nSample: 3}, reason: SkipSymbolic},
		{name: "indel", rec: bcfRec{alleles: []string{"A", "AT"}, nSample: 3}, reason: SkipIndel},
		{name: "N base", rec: bcfRec{alleles: []string{"N", "A"}, nSample: 3}, reason: SkipIndel},
		{name: "long allele", rec: bcfRec{alleles: []string{"ACGTACGTACGTACGTAC", "A"}, nSample: 3}, reason: SkipIndel},
		{name: "no GT", rec: bcfRec{alleles: []string{"A", "C"}, fmt: [][]byte{gq(1, 2, 3)}, nSample: 3}, reason: SkipNoGT},
		{name: "GQ masking", opt: Options{MinGQ: 20},
			rec:  bcfRec{alleles: []string{"a", "c"}, fmt: [][]byte{gt(2, 4, 2, 4, 0, 0), gq(19, 0x80, 5)}, nSample: 3},
			kept: true, gt: []Geno{Missing, Heterozygous, Missing}, filter: "."},
		{name: "PL and AF", opt: Options{WantPL: true, InfoKey: "AF"},
			rec:  bcfRec{alleles: []string{"A", "G"}, info: [][]byte{af}, fmt: [][]byte{gt(2, 4, 4, 0x81, 2, 4), pl16}, nSample: 3},
			kept: true, gt: []Geno{Heterozygous, HaploidAlt, Heterozygous}, pl: []uint16{0, 10, 1000, 5, 65535, 0, 0, 0, 0}, info: 0.25, filter: "."},
		// Found by FuzzBCFRecord: a count of 3 with the null type and no values.
		{name: "PL of null type", opt: Options{WantPL: true},
			rec:  bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{gt(2, 4, 2, 4, 2, 4), {0x11, 6, 3<<4 | bcfTypeNull}}, nSample: 3},
			kept: true, gt: []Geno{Heterozygous, Heterozygous, Heterozygous}, pl: []uint16{0, 0, 0, 0, 0, 0, 0, 0, 0}, filter: "."},
		{name: "wrong sample count", rec: bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{gt(2, 2)}, nSample: 1}, err: ErrSampleCount},
		{name: "unknown contig", rec: bcfRec{chrom: 7, alleles: []string{"A", "G"}}, err: ErrMalformed},
		{name: "position before the contig", rec: bcfRec{pos0: -2, alleles: []string{"A", "G"}}, err: ErrMalformed},
		{name: "POS 0 (telomere)", rec: bcfRec{pos0: -1, alleles: []string{"A", "G"}, fmt: [][]byte{gt(2, 2, 2, 2, 2, 2)}, nSample: 3},
			kept: true, gt: []Geno{HomRef, HomRef, HomRef}, filter: "."},
		{name: "outside region", opt: Options{Regions: []Region{{Chrom: "chr1", Start: 5, End: 9}}},
			rec: bcfRec{pos0: 10, alleles: []string{"A", "G"}, fmt: [][]byte{gt(2, 2, 2, 2, 2, 2)}, nSample: 3}, reason: SkipOutsideRegion},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d := newBCFDecoder(bcfTestHeader, nil, c.opt)
			d.name = "hand.bcf"
			b := &Batch{NSamples: 3}
			kept, reason, err := d.decode(c.rec.bytes(), 4, b)
			if c.err != nil {
				var pe *ParseError
				if !errors.Is(err, c.err) || !errors.As(err, &pe) || pe.Record != 4 || pe.File != "hand.bcf" {
					t.Fatalf("error %v, want %v as ParseError at record 4", err, c.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if kept != c.kept || (!kept && reason != c.reason) {
				t.Fatalf("kept %v reason %v, want %v %v", kept, reason, c.kept, c.reason)
			}
			if !kept {
				if len(b.Records) != 0 || len(b.GT) != 0 {
					t.Fatalf("skipped record left rows in the batch")
				}
				return
			}
			rec := b.Records[0]
			if fmt.Sprint(b.Calls(0)) != fmt.Sprint(c.gt) || string(rec.Filter) != c.filter || rec.Pos != int64(c.rec.pos0)+1 || rec.Line != 4 {
				t.Errorf("got GT %v filter %q pos %d line %d", b.Calls(0), rec.Filter, rec.Pos, rec.Line)
			}
			if c.pl != nil && fmt.Sprint(b.PL) != fmt.Sprint(c.pl) {
				t.Errorf("PL %v, want %v", b.PL, c.pl)
			}
			want := c.info
			if c.opt.InfoKey == "" {
				want = NaN
			}
			if !bcfSameFloat(rec.InfoValue, want) {
				t.Errorf("info %v, want %v", rec.InfoValue, want)
			}
		})
	}
}

func TestReadBCFRecord(t *testing.T) {
	rec := bcfRec{alleles: []string{"A", "G"}}.bytes()
	in := append(append([]byte{}, rec...), rec...)
	r := bytes.NewReader(in)
	var buf []byte
	for i := 0; i < 2; i++ {
		got, err := readBCFRecord(r, buf, 0)
		if err != nil || !bytes.Equal(got, rec) {
			t.Fatalf("record %d: %v", i, err)
		}
		buf = got
	}
	if _, err := readBCFRecord(r, buf, 0); err != io.EOF {
		t.Fatalf("at end: %v, want io.EOF", err)
	}
	if _, err := readBCFRecord(bytes.NewReader(rec[:len(rec)-1]), nil, 0); !errors.Is(err, ErrTruncated) {
		t.Fatalf("cut record: %v, want ErrTruncated", err)
	}
	if _, err := readBCFRecord(bytes.NewReader(rec[:5]), nil, 0); !errors.Is(err, ErrTruncated) {
		t.Fatalf("cut lengths: %v, want ErrTruncated", err)
	}
	if _, err := readBCFRecord(bytes.NewReader(rec), nil, 10); !errors.Is(err, ErrLimit) {
		t.Fatalf("limit: %v, want ErrLimit", err)
	}
}

// bcfFixtureRecords returns the raw records of a BCF fixture.
func bcfFixtureRecords(t testing.TB, path string) (*Header, [][]byte) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	z, err := newBGZFReader(f, path, 1, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer z.Close()
	br := bufio.NewReader(z)
	h, err := readBCFHeader(br, path, Limits{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	var recs [][]byte
	for {
		rec, err := readBCFRecord(br, nil, 0)
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		recs = append(recs, rec)
	}
	return h, recs
}

// FuzzBCFRecord checks that the record decoder never panics, that a kept
// record leaves consistent rows, and that decoding with the samples in
// reverse order gives the same outcome with the calls reversed, on
// arbitrary bytes seeded with real records of the fixtures.
func FuzzBCFRecord(f *testing.F) {
	h, recs := bcfFixtureRecords(f, "../testdata/bcf/annotated_small.bcf")
	for _, r := range recs {
		f.Add(r, uint8(0))
	}
	h2, recs2 := bcfFixtureRecords(f, "../testdata/bcf/test-haploidX.bcf")
	for _, r := range recs2[:5] {
		f.Add(r, uint8(1))
	}
	_, recs3 := bcfFixtureRecords(f, "../testdata/bcf/gl_chr1.bcf")
	for _, r := range recs3[:3] {
		f.Add(r, uint8(2))
	}
	f.Add(bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{{0x11, 3, 0xF1, 0x11, 2, 2, 4}}, nSample: 3}.bytes(), uint8(3))
	opt := Options{IncludeFiltered: true, WantPL: true, InfoKey: "AF", MinGQ: 10, MinDP: 3}
	hdrs := []*Header{h, h2, bcfTestHeader}
	var decs, revs []*bcfDecoder
	for _, hh := range hdrs {
		decs = append(decs, newBCFDecoder(hh, nil, opt))
		rev := make([]int, len(hh.Samples)) // the samples in reverse order
		for i := range rev {
			rev[i] = len(rev) - 1 - i
		}
		revs = append(revs, newBCFDecoder(hh, rev, opt))
	}
	f.Fuzz(func(t *testing.T, rec []byte, which uint8) {
		d, dr := decs[int(which)%len(decs)], revs[int(which)%len(decs)]
		b := &Batch{NSamples: len(d.sel)}
		kept, reason, err := d.decode(rec, 0, b)
		br := &Batch{NSamples: len(dr.sel)}
		keptR, reasonR, errR := dr.decode(rec, 0, br)
		if (err == nil) != (errR == nil) || kept != keptR || reason != reasonR {
			t.Fatalf("sample order changed the outcome: %v %v %v / %v %v %v", kept, reason, err, keptR, reasonR, errR)
		}
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a ParseError", err)
			}
			return
		}
		// PL is filled only for batches whose records carry PL or GL.
		if kept && (len(b.Records) != 1 || len(b.GT) != b.NSamples || (len(b.PL) != 3*b.NSamples && len(b.PL) != 0) || len(b.PL) != len(br.PL)) {
			t.Fatalf("kept record with %d rows, %d calls, %d PL (reversed: %d PL)", len(b.Records), len(b.GT), len(b.PL), len(br.PL))
		}
		if kept && len(b.PL) == 0 && len(b.HasPL) > 0 && b.HasPL[0] {
			t.Fatalf("record marked as carrying PL but no PL stored")
		}
		if !kept && len(b.Records) != 0 {
			t.Fatalf("skipped record left a row")
		}
		// Selecting the samples in reverse order reverses the calls and
		// the likelihood triples, and masks as many calls.
		n := b.NSamples
		for j := 0; kept && j < n; j++ {
			if b.GT[j] != br.GT[n-1-j] {
				t.Fatalf("sample %d: %v vs reversed %v", j, b.GT[j], br.GT[n-1-j])
			}
			if len(b.PL) > 0 && [3]uint16(b.PL[3*j:3*j+3]) != [3]uint16(br.PL[3*(n-1-j):3*(n-j)]) {
				t.Fatalf("sample %d: PL %v vs reversed %v", j, b.PL[3*j:3*j+3], br.PL[3*(n-1-j):3*(n-j)])
			}
		}
		if b.Masked != br.Masked {
			t.Fatalf("masked %d vs %d", b.Masked, br.Masked)
		}
	})
}

// BenchmarkBCFDecode decodes the records of two twins already in memory:
// chr22 (5 samples, 10,376 records, GT+DS+GL) and cohort189 (189 samples,
// 115 records), with GT only and with PL/GL and an INFO value.
func BenchmarkBCFDecode(b *testing.B) {
	for _, path := range []string{"../testdata/bcf/chr22_1000g.bcf", "../testdata/bcf/cohort189.bcf"} {
		h, recs := bcfFixtureRecords(b, path)
		for _, c := range []struct {
			name string
			opt  Options
		}{
			{"gt_only", Options{IncludeFiltered: true}},
			{"gt_pl_info", Options{IncludeFiltered: true, WantPL: true, InfoKey: "AF"}},
		} {
			b.Run(strings.TrimSuffix(filepath.Base(path), ".bcf")+"/"+c.name, func(b *testing.B) {
				d := newBCFDecoder(h, nil, c.opt)
				batch := &Batch{NSamples: len(h.Samples)}
				var size int64
				for _, r := range recs {
					size += int64(len(r))
				}
				b.SetBytes(size)
				b.ReportAllocs()
				b.ResetTimer()
				for i := 0; i < b.N; i++ {
					batch.Records, batch.GT, batch.PL, batch.HasPL, batch.arena = batch.Records[:0], batch.GT[:0], batch.PL[:0], batch.HasPL[:0], batch.arena[:0]
					for j, r := range recs {
						if _, _, err := d.decode(r, int64(j), batch); err != nil {
							b.Fatal(err)
						}
					}
				}
				b.ReportMetric(float64(len(recs)*len(h.Samples)*b.N)/b.Elapsed().Seconds(), "calls/s")
			})
		}
	}
}

func bcfSameFloat(a, b float64) bool {
	return a == b || (math.IsNaN(a) && math.IsNaN(b))
}

// TestBCFDecodeEncodings covers integer widths, the long-count form of a
// type descriptor and IDX-ordered contigs (BCF 2.2 sections 6.2.1 and
// 6.3.3: a count of 15 in the descriptor means a typed integer follows).
func TestBCFDecodeEncodings(t *testing.T) {
	// GT for 3 samples as int16 and as int32: 0/1, 1|1, ./. (0,0).
	gt16 := []byte{0x11, 3, 2<<4 | bcfTypeInt16, 2, 0, 4, 0, 4, 0, 5, 0, 0, 0, 0, 0}
	gt32 := []byte{0x11, 3, 2<<4 | bcfTypeInt32, 2, 0, 0, 0, 4, 0, 0, 0, 4, 0, 0, 0, 5, 0, 0, 0, 0, 0, 0, 0x80, 0x01, 0, 0, 0x80}
	// GT with the long count form: 0xF1 then typed int8 2.
	gtLong := []byte{0x11, 3, 0xF0 | bcfTypeInt8, 0x11, 2, 2, 2, 2, 4, 4, 4}
	// GT with ploidy 3 padded: sample 1 triploid, 2 diploid, 3 haploid.
	gt3 := []byte{0x11, 3, 3<<4 | bcfTypeInt8, 2, 2, 4, 2, 4, 0x81, 2, 0x81, 0x81}
	for _, c := range []struct {
		name string
		fmt  []byte
		want []Geno
	}{
		{"int16", gt16, []Geno{Heterozygous, HomAlt, Missing}},
		{"int32", gt32, []Geno{Heterozygous, HomAlt, Missing}},
		{"long count", gtLong, []Geno{HomRef, Heterozygous, HomAlt}},
		{"mixed ploidy", gt3, []Geno{Missing, Heterozygous, HaploidRef}},
	} {
		d := newBCFDecoder(bcfTestHeader, nil, Options{})
		st := &batchState{}
		d.st = st
		b := &Batch{NSamples: 3}
		kept, _, err := d.decode(bcfRec{alleles: []string{"C", "T"}, fmt: [][]byte{c.fmt}, nSample: 3}.bytes(), 0, b)
		if err != nil || !kept {
			t.Fatalf("%s: kept %v err %v", c.name, kept, err)
		}
		if fmt.Sprint(b.Calls(0)) != fmt.Sprint(c.want) {
			t.Errorf("%s: GT %v, want %v", c.name, b.Calls(0), c.want)
		}
		if c.name == "mixed ploidy" && (st.warn[warnPolyploid] != 1 || st.warn[warnHaploid] != 1) {
			t.Errorf("%s: warnings %v, want one polyploid and one haploid", c.name, st.warn)
		}
	}

	// Contig dictionary order from IDX differs from header order: record
	// contig 0 is "b", the header's second contig.
	h := &Header{
		Meta:    []string{`contig=<ID=a,IDX=1>`, `contig=<ID=b,IDX=0>`, `FORMAT=<ID=GT,Number=1,Type=String,Description="g">`},
		Contigs: []Contig{{Name: "a"}, {Name: "b"}},
		Samples: []string{"s1"},
	}
	d := newBCFDecoder(h, nil, Options{})
	b := &Batch{NSamples: 1}
	// Dictionary: PASS=0, GT=1.
	rec := bcfRec{chrom: 0, pos0: 99, alleles: []string{"G", "A"}, fmt: [][]byte{{0x11, 1, 2<<4 | bcfTypeInt8, 2, 4}}, nSample: 1}
	if kept, _, err := d.decode(rec.bytes(), 0, b); err != nil || !kept {
		t.Fatalf("IDX contigs: %v %v", kept, err)
	}
	if r := b.Records[0]; r.ChromID != 1 || r.Pos != 100 || b.GT[0] != Heterozygous {
		t.Errorf("IDX contigs: chrom %d pos %d GT %v, want 1 100 Het", r.ChromID, r.Pos, b.GT[0])
	}
}

// TestReadBCFRecordClaim checks that a record claiming 60 MiB on a short
// input fails without allocating the claim.
func TestReadBCFRecordClaim(t *testing.T) {
	in := make([]byte, 8+100)
	binary.LittleEndian.PutUint32(in[0:], 60<<20)
	var ms0, ms1 runtime.MemStats
	runtime.ReadMemStats(&ms0)
	_, err := readBCFRecord(bytes.NewReader(in), nil, 64<<20)
	runtime.ReadMemStats(&ms1)
	if !errors.Is(err, ErrTruncated) {
		t.Fatalf("error %v, want ErrTruncated", err)
	}
	if grew := ms1.TotalAlloc - ms0.TotalAlloc; grew > 8<<20 {
		t.Errorf("allocated %d bytes for a 100-byte input", grew)
	}
}

// TestParseNumMatchesParseFloat checks the number parser shared by the VCF
// and BCF paths against strconv.ParseFloat (correctly rounded, Go standard
// library): BCF floats go through their shortest decimal and this parser,
// so any rounding error would show as a likelihood off by one.
func TestParseNumMatchesParseFloat(t *testing.T) {
	cases := []string{"2.95", "-2.95", "0.3", "0", "-0", "00012.5000", "999999999999999",
		"0.000000000000001", "1234567890123456", "1.", ".5", "1e5", "-0.45", "0.0238095", "nan", "-", "1,2"}
	r := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 20000; i++ {
		cases = append(cases,
			strconv.FormatFloat(r.Float64()*1000-500, 'f', r.IntN(8), 64),
			strconv.FormatFloat(float64(float32(r.NormFloat64())), 'g', -1, 32))
	}
	for _, s := range cases {
		got, ok := parseNum([]byte(s))
		want, err := strconv.ParseFloat(s, 64)
		if ok != (err == nil) || (ok && got != want && !(math.IsNaN(got) && math.IsNaN(want))) {
			t.Fatalf("parseNum(%q) = %v, %v; strconv.ParseFloat gives %v, %v", s, got, ok, want, err)
		}
	}
}

// TestBCFCharDepth checks masking by a DP declared as a String: each
// sample's text is read from its own slot (BCF 2.2 section 6.3.3: per-sample
// strings padded with NUL to the longest).
func TestBCFCharDepth(t *testing.T) {
	gt := []byte{0x11, 3, 2<<4 | bcfTypeInt8, 2, 4, 2, 4, 2, 4}
	dp := []byte{0x11, 5, 2<<4 | bcfTypeChar, '9', 0, '1', '2', '.', 0} // "9", "12", "."
	d := newBCFDecoder(bcfTestHeader, nil, Options{MinDP: 10})
	b := &Batch{NSamples: 3}
	kept, _, err := d.decode(bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{gt, dp}, nSample: 3}.bytes(), 0, b)
	if err != nil || !kept {
		t.Fatal(kept, err)
	}
	if want := []Geno{Missing, Heterozygous, Heterozygous}; fmt.Sprint(b.Calls(0)) != fmt.Sprint(want) || b.Masked != 1 {
		t.Errorf("calls %v masked %d, want %v and 1", b.Calls(0), b.Masked, want)
	}
}
