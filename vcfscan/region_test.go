package vcfscan

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/biogo/hts/bgzf"
)

func TestParseRegion(t *testing.T) {
	cases := []struct {
		in   string
		want Region
		err  bool
	}{
		{"chr1", Region{Chrom: "chr1"}, false},
		{"22:50300078-50400000", Region{Chrom: "22", Start: 50300078, End: 50400000}, false},
		{"22:1,000-2,000", Region{Chrom: "22", Start: 1000, End: 2000}, false},
		{"X:5-", Region{Chrom: "X", Start: 5}, false},
		{"X:7", Region{Chrom: "X", Start: 7, End: 7}, false},
		{" chr2:1-1 ", Region{Chrom: "chr2", Start: 1, End: 1}, false},
		{"HLA-A*01:01:1-100", Region{Chrom: "HLA-A*01:01", Start: 1, End: 100}, false},
		{"", Region{}, true},
		{":1-2", Region{}, true},
		{"chr1:0-5", Region{}, true},
		{"chr1:10-5", Region{}, true},
		{"chr1:a-5", Region{}, true},
		{"chr1:5-b", Region{}, true},
		{"chr1:-5", Region{}, true},
	}
	for _, c := range cases {
		got, err := ParseRegion(c.in)
		if c.err {
			if !errors.Is(err, ErrBadRegion) || !strings.Contains(err.Error(), fmt.Sprintf("%q", c.in)) {
				t.Errorf("ParseRegion(%q): error %v, want ErrBadRegion naming the input", c.in, err)
			}
			continue
		}
		if err != nil || got != c.want {
			t.Errorf("ParseRegion(%q) = %+v, %v; want %+v", c.in, got, err, c.want)
		}
	}
}

func TestReadRegions(t *testing.T) {
	cases := []struct {
		name, text string
		bed        bool
		want       []Region
		errLine    int
	}{
		{"region list", "# comment\n\nchr1:10-20\nchr2:5\nchr3\nchr4:1,000-\n", false,
			[]Region{{"chr1", 10, 20}, {"chr2", 5, 5}, {"chr3", 0, 0}, {"chr4", 1000, 0}}, 0},
		// BED is 0-based half-open (UCSC BED definition): [9,20) is 10..20 1-based.
		{"bed by name", "track name=x\nbrowser position chr1\nchr1\t9\t20\tname\t0\t+\nchr2\t0\t1\n", true,
			[]Region{{"chr1", 10, 20}, {"chr2", 1, 1}}, 0},
		{"bed by content", "# c\nchr1\t9\t20\nchr2\t0\t1\tname\n", false,
			[]Region{{"chr1", 10, 20}, {"chr2", 1, 1}}, 0},
		{"bed by track line", "track name=x\nchr1\t9\t20\n", false, []Region{{"chr1", 10, 20}}, 0},
		{"bed needs three columns", "chr1\t9\t20\nchr1\t5\n", true, nil, 2},
		{"bed empty interval", "chr1\t9\t9\n", true, nil, 1},
		{"bed bad number", "chr1\t10\t20\nchr1\tx\t20\n", false, nil, 2},
		{"two fields are not a layout", "chr1\t10\n", false, nil, 1},
		{"spaces are not BED", "chr1 10 20\n", false, nil, 1},
		{"list then BED line", "chr1:1-5\nchr1\t9\t20\n", false, nil, 2},
		{"zero start", "chr1:0-20\n", false, nil, 1},
		{"end before start", "chr1:30-20\n", false, nil, 1},
	}
	for _, c := range cases {
		got, err := readRegions(strings.NewReader(c.text), "r.txt", c.bed)
		if c.errLine > 0 {
			if !errors.Is(err, ErrBadRegion) || !strings.Contains(err.Error(), fmt.Sprintf("r.txt:%d:", c.errLine)) {
				t.Errorf("%s: error %v, want ErrBadRegion at r.txt:%d", c.name, err, c.errLine)
			}
			continue
		}
		if err != nil || fmt.Sprint(got) != fmt.Sprint(c.want) {
			t.Errorf("%s: got %v, %v; want %v", c.name, got, err, c.want)
		}
	}
}

func TestRegionSetOverlaps(t *testing.T) {
	s := newRegionSet([]Region{{"a", 10, 20}, {"a", 15, 30}, {"a", 40, 40}, {"b", 5, 0}, {"c", 0, 0}})
	cases := []struct {
		chrom  string
		lo, hi int64
		want   bool
	}{
		{"a", 9, 9, false}, {"a", 10, 10, true}, {"a", 30, 30, true}, {"a", 31, 39, false},
		{"a", 31, 40, true}, {"a", 41, 41, false}, {"a", 5, 12, true},
		{"b", 4, 4, false}, {"b", 5, 5, true}, {"b", 1 << 40, 1 << 40, true},
		{"c", 1, 1, true}, {"d", 1, 1, false},
	}
	for _, c := range cases {
		if got := s.overlaps(c.chrom, c.lo, c.hi); got != c.want {
			t.Errorf("overlaps(%s, %d, %d) = %v", c.chrom, c.lo, c.hi, got)
		}
	}
}

// rawRecord is the chromosome and position of any record, kept or not.
type rawRecord struct {
	chrom string
	pos   int64
}

// chunkRecords reads every record inside chunks (all records when chunks
// is nil) of a BGZF VCF or BCF file, without any site policy.
func chunkRecords(t *testing.T, path string, chunks []bgzf.Chunk) []rawRecord {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	isBCF := strings.HasSuffix(path, ".bcf")
	var contigs []string
	if isBCF {
		h, _ := bcfFixtureRecords(t, path) // reads through its own file handle
		_, contigs, _ = bcfDictionaries(h.Meta)
	}
	if chunks != nil && len(chunks) == 0 {
		return nil
	}
	z, err := newBGZFReader(f, path, 1, 0, chunks)
	if err != nil {
		t.Fatal(err)
	}
	defer z.Close()
	br := bufio.NewReader(z)
	var out []rawRecord
	if isBCF {
		if chunks == nil {
			if _, err := readBCFHeader(br, path, Limits{}, nil); err != nil {
				t.Fatal(err)
			}
		}
		for {
			rec, err := readBCFRecord(br, nil, 0)
			if err == io.EOF {
				return out
			}
			if err != nil {
				t.Fatalf("%s: chunks %v: record %d: %v", path, chunks, len(out), err)
			}
			chrom := binary.LittleEndian.Uint32(rec[8:])
			pos := int32(binary.LittleEndian.Uint32(rec[12:]))
			out = append(out, rawRecord{contigs[chrom], int64(pos) + 1})
		}
	}
	for {
		line, err := br.ReadString('\n')
		if len(line) > 0 && line[0] != '#' {
			fs := strings.SplitN(line, "\t", 3)
			pos, ok := parsePos([]byte(fs[1]))
			if !ok {
				t.Fatalf("bad line %q", line)
			}
			out = append(out, rawRecord{fs[0], pos})
		}
		if err == io.EOF {
			return out
		}
		if err != nil {
			t.Fatal(err)
		}
	}
}

// regionCases builds region lists from the positions of a file's records:
// a stretch in the middle, a single record, a gap with no record, the tail
// "to the end", the whole chromosome, overlapping and unordered lists.
func regionCases(recs []rawRecord) map[string][]Region {
	n := len(recs)
	first, mid := recs[0], recs[n/2]
	q1, q3 := recs[n/4], recs[3*n/4]
	middleEnd := q3.pos
	if q3.chrom != q1.chrom {
		middleEnd = 0
	}
	cases := map[string][]Region{
		"middle":      {{q1.chrom, q1.pos, middleEnd}},
		"one_record":  {{mid.chrom, mid.pos, mid.pos}},
		"before_all":  {{first.chrom, 1, first.pos - 1}},
		"tail":        {{q3.chrom, q3.pos, 0}},
		"whole":       {{mid.chrom, 0, 0}},
		"overlapping": {{mid.chrom, mid.pos - 100, mid.pos}, {mid.chrom, max(mid.pos-10, 1), mid.pos + 5}, {mid.chrom, mid.pos, mid.pos}},
		"unordered":   {{recs[n-1].chrom, recs[n-1].pos, recs[n-1].pos + 1000}, {recs[1].chrom, recs[1].pos, recs[1].pos}},
	}
	for i := 1; i < n; i++ {
		if recs[i].pos-recs[i-1].pos > 2 && recs[i].chrom == recs[i-1].chrom {
			cases["gap"] = []Region{{recs[i].chrom, recs[i-1].pos + 1, recs[i].pos - 1}}
			break
		}
	}
	return cases
}

// TestRegionChunks checks the index lookup on its own: the records inside
// the returned chunks must include every record of the file that overlaps
// a region (hts-specs tabix/CSI: a query returns a superset, filtered by
// the reader). The indexes were written by htslib (tabix for the VCF
// fixtures upstream, CSI by python3-pysam 0.20.0 for the BCF twins).
func TestRegionChunks(t *testing.T) {
	// The VCF with a CSI index (tabix-style names in the auxiliary field),
	// written by python3-pysam 0.20.0, next to a copy of its data file.
	vcfCSI := filepath.Join(t.TempDir(), "chr22_1000g.vcf.gz")
	for _, c := range [][2]string{{"../testdata/chr22_1000g.vcf.gz", vcfCSI}, {"../testdata/bcf/chr22_1000g.vcf.gz.csi", vcfCSI + ".csi"}} {
		b, err := os.ReadFile(c[0])
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(c[1], b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, path := range []string{
		vcfCSI,
		"../testdata/chr22_1000g.vcf.gz", "../testdata/bcf/chr22_1000g.bcf",
		"../testdata/cohort189.vcf.gz", "../testdata/bcf/cohort189.bcf",
		"../testdata/bcf/test-haploidX.bcf", "../testdata/bcf/test.mnp.bcf",
	} {
		all := chunkRecords(t, path, nil)
		if len(all) < 6 {
			t.Fatalf("%s: %d records", path, len(all))
		}
		h := &Header{}
		if strings.HasSuffix(path, ".bcf") {
			h = bcfTestFileHeader(t, path)
		}
		for name, regs := range regionCases(all) {
			chunks, err := regionChunks(path, h, regs)
			if err != nil {
				t.Fatalf("%s %s: %v", path, name, err)
			}
			got := map[rawRecord]bool{}
			for _, r := range chunkRecords(t, path, chunks) {
				got[r] = true
			}
			set := newRegionSet(regs)
			want := 0
			for _, r := range all {
				if set.overlaps(r.chrom, r.pos, r.pos) {
					want++
					if !got[r] {
						t.Errorf("%s %s: record %s:%d in region but not in chunks", path, name, r.chrom, r.pos)
					}
				}
			}
			if name == "middle" && (len(got) >= len(all) && len(all) > 1000) {
				t.Errorf("%s %s: chunks hold all %d records; the index is not narrowing", path, name, len(all))
			}
			if name != "before_all" && name != "gap" && want == 0 {
				t.Errorf("%s %s: no record in the region; the case proves nothing", path, name)
			}
		}
	}
}

func bcfTestFileHeader(t *testing.T, path string) *Header {
	t.Helper()
	h, _ := bcfFixtureRecords(t, path)
	return h
}

func TestRegionIndexErrors(t *testing.T) {
	dir := t.TempDir()
	copyFile := func(src, dst string) {
		b, err := os.ReadFile(src)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(dst, b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	bcf := filepath.Join(dir, "c.bcf")
	copyFile("../testdata/bcf/cohort189.bcf", bcf)
	h := bcfTestFileHeader(t, bcf)
	reg := []Region{{Chrom: "1", Start: 10000, End: 11000}}

	if _, err := regionChunks(bcf, h, reg); !errors.Is(err, ErrNoIndex) || !strings.Contains(err.Error(), "c.bcf.csi") {
		t.Errorf("missing index: %v, want ErrNoIndex naming c.bcf.csi", err)
	}

	copyFile("../testdata/bcf/cohort189.bcf.csi", bcf+".csi")
	old := time.Now().Add(-time.Hour)
	if err := os.Chtimes(bcf+".csi", old, old); err != nil {
		t.Fatal(err)
	}
	if _, err := regionChunks(bcf, h, reg); !errors.Is(err, ErrStaleIndex) || !strings.Contains(err.Error(), "c.bcf.csi") {
		t.Errorf("stale index: %v, want ErrStaleIndex naming the index", err)
	}
	now := time.Now().Add(time.Minute)
	if err := os.Chtimes(bcf+".csi", now, now); err != nil {
		t.Fatal(err)
	}
	if cs, err := regionChunks(bcf, h, reg); err != nil || len(cs) == 0 {
		t.Errorf("fresh index: %v, %d chunks", err, len(cs))
	}
	// "chr1" is not a contig of this file (it uses "1").
	if _, err := regionChunks(bcf, h, []Region{{Chrom: "chr1"}}); !errors.Is(err, ErrUnknownContig) || !strings.Contains(err.Error(), `"chr1"`) {
		t.Errorf("unknown contig: %v, want ErrUnknownContig", err)
	}
	// "2" is declared in the header but has no records: no chunks, no error.
	if cs, err := regionChunks(bcf, h, []Region{{Chrom: "2"}}); err != nil || len(cs) != 0 {
		t.Errorf("declared contig without records: %v, %d chunks", err, len(cs))
	}
	// A corrupt index is an error naming it.
	if err := os.WriteFile(bcf+".csi", []byte("not an index at all"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Chtimes(bcf+".csi", now, now); err != nil {
		t.Fatal(err)
	}
	if _, err := regionChunks(bcf, h, reg); !errors.Is(err, ErrMalformed) {
		t.Errorf("corrupt index: %v, want ErrMalformed", err)
	}

	// VCF with a .tbi: unknown contig, listing the index's names.
	vcf := filepath.Join(dir, "c.vcf.gz")
	copyFile("../testdata/chr22_1000g.vcf.gz", vcf)
	copyFile("../testdata/chr22_1000g.vcf.gz.tbi", vcf+".tbi")
	if err := os.Chtimes(vcf+".tbi", now, now); err != nil {
		t.Fatal(err)
	}
	if _, err := regionChunks(vcf, &Header{}, []Region{{Chrom: "chr22"}}); !errors.Is(err, ErrUnknownContig) || !strings.Contains(err.Error(), "22") {
		t.Errorf("unknown contig in tbi: %v", err)
	}
	// Beyond the last record: no chunks, no error.
	if cs, err := regionChunks(vcf, &Header{}, []Region{{Chrom: "22", Start: 400_000_000}}); err != nil || len(cs) != 0 {
		t.Errorf("region past the end: %v, %d chunks", err, len(cs))
	}
}

func TestMergeChunks(t *testing.T) {
	o := func(f int64, b uint16) bgzf.Offset { return bgzf.Offset{File: f, Block: b} }
	in := []bgzf.Chunk{
		{Begin: o(100, 5), End: o(200, 0)},
		{Begin: o(0, 10), End: o(50, 3)},
		{Begin: o(50, 3), End: o(60, 0)},   // touches the previous
		{Begin: o(150, 0), End: o(180, 0)}, // inside the first
		{Begin: o(300, 0), End: o(400, 0)},
	}
	got := mergeChunks(in)
	want := []bgzf.Chunk{{Begin: o(0, 10), End: o(60, 0)}, {Begin: o(100, 5), End: o(200, 0)}, {Begin: o(300, 0), End: o(400, 0)}}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("mergeChunks = %v, want %v", got, want)
	}
	if mergeChunks(nil) != nil {
		t.Error("mergeChunks(nil) should be nil")
	}
}

func TestCSINames(t *testing.T) {
	// Tabix-style auxiliary data (hts-specs CSI: "aux" holds the tabix
	// header for text files): format, col_seq, col_beg, col_end, meta,
	// skip, l_nm, then NUL-terminated names.
	var aux bytes.Buffer
	for _, v := range []int32{2, 1, 2, 0, '#', 0} {
		binary.Write(&aux, binary.LittleEndian, v)
	}
	names := "chr1\x00chrX\x00"
	binary.Write(&aux, binary.LittleEndian, int32(len(names)))
	aux.WriteString(names)
	if got := csiNames(aux.Bytes()); fmt.Sprint(got) != "[chr1 chrX]" {
		t.Errorf("csiNames = %v", got)
	}
	if got := csiNames(nil); got != nil {
		t.Errorf("csiNames(nil) = %v", got)
	}
}

func ExampleParseRegion() {
	r, err := ParseRegion("22:50,300,078-50,400,000")
	fmt.Println(r.Chrom, r.Start, r.End, err)
	r, _ = ParseRegion("X:2700000-")
	fmt.Println(r.Chrom, r.Start, r.End == 0)
	_, err = ParseRegion("22:500-100")
	fmt.Println(err)
	// Output:
	// 22 50300078 50400000 <nil>
	// X 2700000 true
	// bad region "22:500-100": end is before start
}

func ExampleReadRegionList() {
	// The file name ends in .bed, so its lines are 0-based, half-open.
	regs, err := ReadRegionList("../testdata/bcf/example_regions.bed")
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range regs {
		fmt.Printf("%s:%d-%d\n", r.Chrom, r.Start, r.End)
	}
	// Output:
	// 22:50300001-50400000
	// 22:50800001-50900000
}

// FuzzParseRegion checks that ParseRegion never panics and that what it
// accepts is a valid 1-based region that prints back to itself.
func FuzzParseRegion(f *testing.F) {
	for _, s := range []string{"chr1", "22:50300078-50400000", "X:5-", "X:7", "a:1,000-2,000", "HLA-A*01:01:1-100", ":", "c:-", "c:9999999999999999999-1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		r, err := ParseRegion(s)
		if err != nil {
			if !errors.Is(err, ErrBadRegion) {
				t.Fatalf("error %v does not wrap ErrBadRegion", err)
			}
			return
		}
		hasRange := strings.Contains(s, ":")
		wholeOK := !hasRange && r.Start == 0 && r.End == 0
		rangeOK := hasRange && r.Start >= 1 && (r.End == 0 || r.End >= r.Start)
		if r.Chrom == "" || !(wholeOK || rangeOK) {
			t.Fatalf("%q gave invalid region %+v", s, r)
		}
		text := r.Chrom
		if hasRange {
			text = fmt.Sprintf("%s:%d-", r.Chrom, r.Start)
			if r.End != 0 {
				text += fmt.Sprint(r.End)
			}
		}
		if r2, err := ParseRegion(text); err != nil || r2 != r {
			t.Fatalf("%q -> %+v -> %q -> %+v, %v", s, r, text, r2, err)
		}
	})
}

// FuzzReadRegions checks that the region list reader never panics and
// accepts only valid regions, in both coordinate conventions.
func FuzzReadRegions(f *testing.F) {
	f.Add("chr1:10-20\n# c\nchr2:5\nchr3\n", false)
	f.Add("chr1\t10\t20\n# c\nchr2\t5\t9\n", false)
	f.Add("track x\nchr1\t9\t20\tname\n", true)
	f.Fuzz(func(t *testing.T, text string, bed bool) {
		regs, err := readRegions(strings.NewReader(text), "f", bed)
		if err != nil {
			return
		}
		for _, r := range regs {
			if r.Chrom == "" || r.Start < 0 || (r.End != 0 && r.End < r.Start) || (bed && (r.Start < 1 || r.End < r.Start)) {
				t.Fatalf("invalid region %+v from %q", r, text)
			}
		}
	})
}
