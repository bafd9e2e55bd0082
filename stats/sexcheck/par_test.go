package sexcheck

import (
	"errors"
	"strings"
	"testing"

	"fgauge/vcfscan"
)

func TestKindOf(t *testing.T) {
	for name, want := range map[string]Kind{"X": ChromX, "chrX": ChromX, "23": ChromX, "Y": ChromY, "chrY": ChromY,
		"MT": ChromMT, "chrM": ChromMT, "1": Autosome, "chr22": Autosome, "NC_030837.1": Autosome, "Xq": Autosome} {
		if got := KindOf(name); got != want {
			t.Errorf("%s: %v, want %v", name, got, want)
		}
	}
}

// TestHumanPAR: build recognition from the X length and PAR boundaries
// (coordinates from memory of the GRCh37/GRCh38 assembly reports, as in
// par.go; the test checks the recognition logic and the boundaries'
// inclusiveness, not the values' provenance).
func TestHumanPAR(t *testing.T) {
	p, ok := HumanPAR([]vcfscan.Contig{{Name: "chr1", Length: 248956422}, {Name: "chrX", Length: 156040895}, {Name: "chrY", Length: 57227415}})
	if !ok || !strings.HasPrefix(p.Reason, "GRCh38 recognised from X length 156040895") {
		t.Fatalf("%v %q", ok, p.Reason)
	}
	for _, tc := range []struct {
		chrom string
		pos   int64
		in    bool
	}{
		{"chrX", 10000, false}, {"chrX", 10001, true}, {"chrX", 2781479, true}, {"chrX", 2781480, false},
		{"chrX", 155701382, false}, {"chrX", 155701383, true}, {"chrX", 156030895, true}, {"chrX", 156030896, false},
		{"chrY", 10001, true}, {"chrY", 56887903, true}, {"chrY", 3000000, false}, {"chr1", 20000, false},
	} {
		if got := p.Contains(tc.chrom, tc.pos); got != tc.in {
			t.Errorf("%s:%d in PAR = %v, want %v", tc.chrom, tc.pos, got, tc.in)
		}
	}
	p37, ok := HumanPAR([]vcfscan.Contig{{Name: "X", Length: 155270560}})
	if !ok || !strings.HasPrefix(p37.Reason, "GRCh37") || !p37.Contains("X", 60001) || p37.Contains("X", 60000) || len(p37.Regions()) != 2 {
		t.Fatalf("GRCh37: %v %q %v", ok, p37.Reason, p37.Regions())
	}
	for _, cs := range [][]vcfscan.Contig{nil, {{Name: "X"}}, {{Name: "X", Length: 12345}}} {
		p, ok := HumanPAR(cs)
		if ok || p.Reason == "" || p.Contains("X", 20000) {
			t.Errorf("%v: %v %q", cs, ok, p.Reason)
		}
	}
}

func TestParsePAR(t *testing.T) {
	p, err := ParsePAR([]string{"X:1-5,000", "X:4001-9000", "X:100000-", "Y:10-20"}, "--par")
	if err != nil {
		t.Fatal(err)
	}
	for pos, want := range map[int64]bool{1: true, 9000: true, 9001: false, 99999: false, 100000: true, 1 << 40: true} {
		if got := p.Contains("X", pos); got != want {
			t.Errorf("X:%d %v", pos, got)
		}
	}
	if !p.Spans("Y").Contains(15) || p.Spans("Z").Contains(15) {
		t.Error("Y/Z spans")
	}
	if _, err := ParsePAR([]string{"X:9-1"}, "x"); !errors.Is(err, vcfscan.ErrBadRegion) {
		t.Errorf("bad region: %v", err)
	}
	var none *PAR
	if none.Contains("X", 5) {
		t.Error("nil PAR contains")
	}
}

func TestContigKindAt(t *testing.T) {
	p, _ := HumanPAR([]vcfscan.Contig{{Name: "X", Length: 155270560}, {Name: "Y"}, {Name: "MT"}})
	x := p.Contig("X", KindOf("X"))
	y := p.Contig("Y", KindOf("Y"))
	mt := p.Contig("MT", KindOf("MT"))
	a := p.Contig("7", KindOf("7"))
	for _, tc := range []struct {
		c    Contig
		pos  int64
		want Kind
	}{
		{x, 100000, Autosome}, {x, 5000000, ChromX}, {x, 155000000, Autosome},
		{y, 20000, Autosome}, {y, 20000000, ChromY}, {mt, 100, ChromMT}, {a, 100000, Autosome},
	} {
		if got := tc.c.KindAt(tc.pos); got != tc.want {
			t.Errorf("%+v at %d: %v, want %v", tc.c.Kind, tc.pos, got, tc.want)
		}
	}
}

// TestKindByName: the human numbers 23/24/26 name X/Y/MT only when asked
// (cattle chromosome 23 is an autosome; karyotype numbering from memory,
// common practice); names do in any species.
func TestKindByName(t *testing.T) {
	for _, c := range []struct {
		name  string
		human bool
		want  Kind
	}{
		{"X", false, ChromX}, {"chrX", false, ChromX}, {"Y", false, ChromY}, {"MT", false, ChromMT}, {"chrM", false, ChromMT},
		{"23", false, Autosome}, {"chr23", false, Autosome}, {"24", false, Autosome}, {"26", false, Autosome},
		{"23", true, ChromX}, {"24", true, ChromY}, {"26", true, ChromMT}, {"22", true, Autosome}, {"1", false, Autosome},
	} {
		if got := KindByName(c.name, c.human); got != c.want {
			t.Errorf("KindByName(%q, %v) = %v, want %v", c.name, c.human, got, c.want)
		}
	}
}
