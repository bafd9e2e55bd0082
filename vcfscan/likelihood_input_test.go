package vcfscan

import (
	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"math"
	"math/rand/v2"
	"reflect"
	"strconv"
	"strings"
	"testing"
)

// TestBadLikelihoods is the table of likelihood values the VCF
// specification (VCF 4.4 section 1.6.2: PL Number=G Type=Integer,
// phred-scaled; GL Number=G Type=Float, log10; "." for a missing value)
// does not allow: each is an error naming the file and line, wrapping
// ErrMalformed. "." elements are allowed: the call's likelihoods become
// missing (zeros) and are counted in a warning.
func TestBadLikelihoods(t *testing.T) {
	const hdr = "##fileformat=VCFv4.3\n##contig=<ID=1>\n" +
		"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\ts1\ts2\n"
	good := "1\t1\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:0,10,100\t0/1:20,0,20\n"
	cases := []struct {
		name, line string
		field      string // "" : no error
		msg        string
		pl         []uint16 // of the bad line when accepted
		missing    bool
	}{
		{"negative PL", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:0,-3,30\t0/1:20,0,20", "PL", "negative", nil, false},
		{"non-numeric PL", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:0,x,30\t0/1:20,0,20", "PL", "not a number", nil, false},
		{"nan PL", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:0,nan,30\t0/1:20,0,20", "PL", "not a number", nil, false},
		{"decimal PL", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:0,2.5,30\t0/1:20,0,20", "PL", "not an integer", nil, false},
		{"infinite PL", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:0,inf,30\t0/1:20,0,20", "PL", "not an integer", nil, false},
		{"two PL for a diploid call", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:0,30\t0/1:20,0,20", "PL", "2 values for a diploid call", nil, false},
		{"four PL for a diploid call", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:0,30,40,50\t0/1:20,0,20", "PL", "4 values for a diploid call", nil, false},
		{"three PL for a haploid call", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t1:30,3,0\t0/1:20,0,20", "PL", "3 values for a haploid call", nil, false},
		{"GL above 0", "1\t2\t.\tA\tG\t.\t.\t.\tGT:GL\t0/0:0.5,-1,-3\t0/1:-2,0,-2", "GL", "above 0", nil, false},
		{"non-numeric GL", "1\t2\t.\tA\tG\t.\t.\t.\tGT:GL\t0/0:0,-1,abc\t0/1:-2,0,-2", "GL", "not a number", nil, false},
		// Accepted: "." elements (missing, counted), a whole ".", PL
		// beyond 16 bits (stored relative to the smallest, capped), GL
		// -inf (an impossible genotype).
		{"missing element", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:0,.,30\t0/1:20,0,20", "", "", []uint16{0, 0, 0, 20, 0, 20}, true},
		{"whole value missing", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:.\t0/1:20,0,20", "", "", []uint16{0, 0, 0, 20, 0, 20}, false},
		{"PL overflow", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0:70000,70010,200000\t0/1:20,0,20", "", "", []uint16{0, 10, 65534, 20, 0, 20}, false},
		{"GL minus infinity", "1\t2\t.\tA\tG\t.\t.\t.\tGT:GL\t0/0:0,-1,-inf\t0/1:-2,0,-2", "", "", []uint16{0, 10, 65534, 20, 0, 20}, false},
		{"missing call with PL", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t./.:0,3,6\t0/1:20,0,20", "", "", []uint16{0, 3, 6, 20, 0, 20}, false},
		{"polyploid call", "1\t2\t.\tA\tG\t.\t.\t.\tGT:PL\t0/0/1:0,3,6,9\t0/1:20,0,20", "", "", []uint16{0, 0, 0, 20, 0, 20}, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			data := []byte(hdr + good + c.line + "\n")
			r, err := NewReader(bytes.NewReader(data), "low.vcf", Options{Threads: 1, WantPL: true})
			if err != nil {
				t.Fatal(err)
			}
			defer r.Close()
			var pls []uint16
			for {
				b, err := r.Next()
				if err != nil {
					if c.field == "" && err == io.EOF {
						break
					}
					var pe *ParseError
					if c.field == "" || !errors.Is(err, ErrMalformed) || !errors.As(err, &pe) {
						t.Fatalf("error %v, want %s problem as ParseError", err, c.field)
					}
					if pe.Line != 5 || pe.Field != c.field || !strings.Contains(err.Error(), "low.vcf:5") || !strings.Contains(err.Error(), c.msg) {
						t.Fatalf("error %q (line %d field %s), want low.vcf:5, field %s, %q", err, pe.Line, pe.Field, c.field, c.msg)
					}
					return
				}
				pls = append(pls, b.PL...)
				r.Release(b)
			}
			if c.field != "" {
				t.Fatalf("no error, want %s problem", c.field)
			}
			if got := pls[6:]; !reflect.DeepEqual(got, c.pl) {
				t.Errorf("PL %v, want %v", got, c.pl)
			}
			gotMissing := false
			for _, w := range r.Warnings() {
				if w.Kind == warnNames[warnLikMissing] {
					gotMissing = w.Count == 1 && strings.Contains(w.Example, "low.vcf:5")
				}
			}
			if gotMissing != c.missing {
				t.Errorf("missing-element warning %v, want %v (warnings %v)", gotMissing, c.missing, r.Warnings())
			}
		})
	}
}

// TestBCFBadLikelihoods is TestBadLikelihoods for BCF 2.2 records made by
// hand (hts-specs section 6.3.3: int8 missing 0x80, end of vector 0x81;
// float missing 0x7F800001): the error names the record.
func TestBCFBadLikelihoods(t *testing.T) {
	gt := func(vals ...byte) []byte { return append([]byte{0x11, 3, 2<<4 | bcfTypeInt8}, vals...) }
	pl8 := func(vals ...byte) []byte { return append([]byte{0x11, 6, 3<<4 | bcfTypeInt8}, vals...) }
	cases := []struct {
		name string
		fmt  [][]byte
		err  bool
		pl   []uint16
	}{
		{"negative PL", [][]byte{gt(2, 2, 2, 4, 4, 4), pl8(0, 10, 0xF6, 5, 0, 5, 9, 9, 0)}, true, nil},
		{"two PL for a diploid call", [][]byte{gt(2, 2, 2, 4, 4, 4), pl8(0, 10, 0x81, 5, 0, 5, 9, 9, 0)}, true, nil},
		{"missing element", [][]byte{gt(2, 2, 2, 4, 4, 4), pl8(0, 0x80, 20, 5, 0, 5, 9, 9, 0)}, false, []uint16{0, 0, 0, 5, 0, 5, 9, 9, 0}},
		{"whole value missing", [][]byte{gt(2, 2, 2, 4, 4, 4), pl8(0x80, 0x81, 0x81, 5, 0, 5, 9, 9, 0)}, false, []uint16{0, 0, 0, 5, 0, 5, 9, 9, 0}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d := newBCFDecoder(bcfTestHeader, nil, Options{WantPL: true})
			d.name = "low.bcf"
			b := &Batch{NSamples: 3}
			_, _, err := d.decode(bcfRec{alleles: []string{"A", "G"}, fmt: c.fmt, nSample: 3}.bytes(), 7, b)
			if c.err {
				var pe *ParseError
				if !errors.Is(err, ErrMalformed) || !errors.As(err, &pe) || pe.Record != 7 || pe.Field != "PL" || !strings.Contains(err.Error(), "low.bcf: record 7") {
					t.Fatalf("error %v, want a PL ParseError at record 7", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(b.PL, c.pl) {
				t.Errorf("PL %v, want %v", b.PL, c.pl)
			}
		})
	}
	// GL as float above 0.
	glHdr := *bcfTestHeader
	glHdr.Meta = append(append([]string(nil), bcfTestHeader.Meta[:6]...), `FORMAT=<ID=GL,Number=G,Type=Float,Description="l">`, `contig=<ID=chr1>`)
	gl := []byte{0x11, 7, 3<<4 | bcfTypeFloat}
	for _, x := range []float32{0.5, -1, -2, -1, 0, -1, -1, 0, -1} {
		gl = binary.LittleEndian.AppendUint32(gl, math.Float32bits(x))
	}
	d := newBCFDecoder(&glHdr, nil, Options{WantPL: true})
	d.name = "low.bcf"
	_, _, err := d.decode(bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{gt(2, 2, 2, 4, 4, 4), gl}, nSample: 3}.bytes(), 3, &Batch{NSamples: 3})
	if !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), "GL") || !strings.Contains(err.Error(), "above 0") {
		t.Fatalf("GL 0.5: error %v, want a GL ParseError", err)
	}
}

// TestDepthDecoding checks Batch.DP with WantDP for VCF and BCF: one depth
// per call, -1 for "." and for records without DP; empty when no record
// of the batch has DP; calls masked by MinDP lose their likelihoods.
func TestDepthDecoding(t *testing.T) {
	data := mini(
		"1\t1\t.\tA\tG\t.\t.\t.\tGT:DP:PL\t0/0:9:0,30,300\t0/1:.:40,0,50\t1/1:2:300,30,0",
		"1\t2\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1",
		"1\t3\t.\tA\tG\t.\t.\t.\tGT:DP\t0/0:0\t0/1:12\t./.:4",
	)
	r, err := NewReader(bytes.NewReader(data), "dp.vcf", Options{Threads: 1, WantDP: true, WantPL: true, MinDP: 3})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	b, err := r.Next()
	if err != nil {
		t.Fatal(err)
	}
	if want := []int32{9, -1, 2, -1, -1, -1, 0, 12, 4}; !reflect.DeepEqual(b.DP, want) {
		t.Errorf("DP %v, want %v", b.DP, want)
	}
	if want := []bool{true, false, true}; !reflect.DeepEqual(b.HasDP, want) {
		t.Errorf("HasDP %v, want %v", b.HasDP, want)
	}
	if want := []uint16{0, 30, 300, 40, 0, 50, 0, 0, 0}; !reflect.DeepEqual(b.PL[:9], want) {
		t.Errorf("PL %v, want %v (third call masked by DP 2 < 3)", b.PL[:9], want)
	}
	// GT-only input: nothing allocated.
	r2, err := NewReader(bytes.NewReader(mini("1\t2\t.\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1")), "gt.vcf", Options{Threads: 1, WantDP: true})
	if err != nil {
		t.Fatal(err)
	}
	defer r2.Close()
	b2, err := r2.Next()
	if err != nil {
		t.Fatal(err)
	}
	if len(b2.DP) != 0 || !reflect.DeepEqual(b2.HasDP, []bool{false}) {
		t.Errorf("GT-only: DP %v HasDP %v, want empty and [false]", b2.DP, b2.HasDP)
	}
	// BCF: DP int8 with a missing value.
	gt := append([]byte{0x11, 3, 2<<4 | bcfTypeInt8}, 2, 2, 2, 4, 4, 4)
	dp := []byte{0x11, 5, 1<<4 | bcfTypeInt8, 7, 0x80, 3}
	d := newBCFDecoder(bcfTestHeader, nil, Options{WantDP: true})
	d.name = "dp.bcf"
	bb := &Batch{NSamples: 3}
	if _, _, err := d.decode(bcfRec{alleles: []string{"A", "G"}, fmt: [][]byte{gt, dp}, nSample: 3}.bytes(), 0, bb); err != nil {
		t.Fatal(err)
	}
	if want := []int32{7, -1, 3}; !reflect.DeepEqual(bb.DP, want) {
		t.Errorf("BCF DP %v, want %v", bb.DP, want)
	}
}

// TestPLTripleFastPath: the integer fast path of decodeLikelihoods stores
// exactly what the general path stores, for random and edge-case values
// (the general path is the reference: parseNum, then the checks).
func TestPLTripleFastPath(t *testing.T) {
	vals := []string{"0", "7", "007", "65534", "65535", "99999", "100000", "", ".", "-1", "2.5", "1e3", " 3"}
	rng := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 20000; i++ {
		var parts []string
		for k := 0; k < 2+rng.IntN(3); k++ {
			if rng.IntN(3) == 0 {
				parts = append(parts, vals[rng.IntN(len(vals))])
			} else {
				parts = append(parts, strconv.Itoa(rng.IntN(70000)))
			}
		}
		s := []byte(strings.Join(parts, ","))
		for _, code := range []Geno{HomRef, Heterozygous, HomAlt, Missing, HaploidAlt} {
			var a, b [3]uint16
			ma, pa := decodeLikelihoods(a[:], s, false, code)
			mb, pb := decodeLikelihoodsGeneral(b[:], s, false, code)
			if a != b || ma != mb || pa != pb {
				t.Fatalf("%q code %d: fast %v %v %q, general %v %v %q", s, code, a, ma, pa, b, mb, pb)
			}
		}
	}
}

// BenchmarkDecodeLikelihoods: the integer fast path against the general
// path on typical PL values.
func BenchmarkDecodeLikelihoods(b *testing.B) {
	vals := [][]byte{[]byte("0,36,400"), []byte("120,0,110"), []byte("300,27,0"), []byte("0,3,6")}
	var dst [3]uint16
	b.Run("fast", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			decodeLikelihoods(dst[:], vals[i&3], false, HomRef)
		}
	})
	b.Run("general", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			decodeLikelihoodsGeneral(dst[:], vals[i&3], false, HomRef)
		}
	})
}
