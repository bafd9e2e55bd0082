package sexcheck

import (
	"fmt"
	"sort"
	"strings"

	"fgauge/vcfscan"
)

// Kind classifies a contig for ploidy.
type Kind uint8

// Contig kinds.
const (
	Autosome Kind = iota // anything not named below
	ChromX               // X, chrX, x, chrx, 23
	ChromY               // Y, chrY, 24
	ChromMT              // MT, M, chrM, chrMT, 26
)

func (k Kind) String() string {
	return [...]string{"autosome", "X", "Y", "MT"}[k]
}

// KindOf classifies a contig by its name: "X"/"chrX"/"23" is X,
// "Y"/"chrY"/"24" is Y, "MT"/"M"/"chrM"/"chrMT"/"26" is mitochondrial
// (names compared without case; the numeric codes are the usual human
// ones, common practice). Assemblies whose sex chromosomes have other
// names (accessions, other species' numbering) need the caller to map
// them.
func KindOf(name string) Kind {
	n := strings.ToLower(name)
	n = strings.TrimPrefix(n, "chr")
	switch n {
	case "x", "23":
		return ChromX
	case "y", "24":
		return ChromY
	case "m", "mt", "26":
		return ChromMT
	}
	return Autosome
}

// humanBuild is one human assembly's X and Y lengths and PARs.
//
// Values from memory (GRCh37 and GRCh38 assembly reports as commonly
// quoted); check against the assembly report before relying on them.
type humanBuild struct {
	name       string
	xLen, yLen int64
	x, y       [2][2]int64 // PAR1, PAR2 as 1-based inclusive [start, end]
}

var humanBuilds = []humanBuild{
	{ // values from memory
		name: "GRCh37", xLen: 155270560, yLen: 59373566,
		x: [2][2]int64{{60001, 2699520}, {154931044, 155260560}},
		y: [2][2]int64{{10001, 2649520}, {59034050, 59363566}},
	},
	{ // values from memory
		name: "GRCh38", xLen: 156040895, yLen: 57227415,
		x: [2][2]int64{{10001, 2781479}, {155701383, 156030895}},
		y: [2][2]int64{{10001, 2781479}, {56887903, 57217415}},
	},
}

// PAR is a set of pseudo-autosomal regions on the X and Y contigs: sites
// inside are diploid in both sexes and treated as autosomal. Reason says
// where the regions came from, for run.json. The zero value (no regions)
// is valid. A PAR is read-only after construction and safe for concurrent
// use.
type PAR struct {
	Reason  string
	regions []vcfscan.Region
	byChrom map[string][]Span
}

// Span is one PAR interval, 1-based inclusive.
type Span struct{ Lo, Hi int64 }

// NewPAR builds a PAR set from regions (End 0 means to the end of the
// contig) with the given reason.
func NewPAR(regs []vcfscan.Region, reason string) *PAR {
	p := &PAR{Reason: reason, regions: append([]vcfscan.Region(nil), regs...), byChrom: map[string][]Span{}}
	for _, r := range regs {
		lo, hi := max(r.Start, 1), r.End
		if hi <= 0 {
			hi = 1<<63 - 1
		}
		p.byChrom[r.Chrom] = append(p.byChrom[r.Chrom], Span{lo, hi})
	}
	for c, sp := range p.byChrom {
		sort.Slice(sp, func(i, j int) bool { return sp[i].Lo < sp[j].Lo })
		merged := sp[:1]
		for _, s := range sp[1:] {
			last := &merged[len(merged)-1]
			if s.Lo <= last.Hi || s.Lo-1 == last.Hi {
				last.Hi = max(last.Hi, s.Hi)
				continue
			}
			merged = append(merged, s)
		}
		p.byChrom[c] = merged
	}
	return p
}

// ParsePAR reads a user PAR list: each entry a region in the syntax of
// vcfscan.ParseRegion ("chrom:start-end", ...), as given to --region.
// Region files are read by the caller with the region-list reader that
// --region @FILE uses, and passed to NewPAR.
func ParsePAR(specs []string, reason string) (*PAR, error) {
	regs := make([]vcfscan.Region, 0, len(specs))
	for _, s := range specs {
		r, err := vcfscan.ParseRegion(s)
		if err != nil {
			return nil, fmt.Errorf("PAR list: %w", err)
		}
		regs = append(regs, r)
	}
	return NewPAR(regs, reason), nil
}

// HumanPAR recognises GRCh37 or GRCh38 from the length of the X contig
// among contigs (the one KindOf calls X) and returns that build's PAR1 and
// PAR2 on X and, when present, on Y, named as the data names them. With
// no X contig, no X length, or an X length of neither build, it returns
// an empty PAR whose Reason says why, and ok false.
func HumanPAR(contigs []vcfscan.Contig) (p *PAR, ok bool) {
	var x, y *vcfscan.Contig
	for i := range contigs {
		switch KindOf(contigs[i].Name) {
		case ChromX:
			if x == nil {
				x = &contigs[i]
			}
		case ChromY:
			if y == nil {
				y = &contigs[i]
			}
		}
	}
	switch {
	case x == nil:
		return NewPAR(nil, "no X contig in the header: no PAR used"), false
	case x.Length <= 0:
		return NewPAR(nil, fmt.Sprintf("X contig %s has no length in the header: build not recognised, no PAR used", x.Name)), false
	}
	for _, b := range humanBuilds {
		if x.Length != b.xLen {
			continue
		}
		var regs []vcfscan.Region
		for _, r := range b.x {
			regs = append(regs, vcfscan.Region{Chrom: x.Name, Start: r[0], End: r[1]})
		}
		reason := fmt.Sprintf("%s recognised from X length %d (PAR coordinates from memory of the assembly report)", b.name, x.Length)
		if y != nil {
			for _, r := range b.y {
				regs = append(regs, vcfscan.Region{Chrom: y.Name, Start: r[0], End: r[1]})
			}
			if y.Length > 0 && y.Length != b.yLen {
				reason += fmt.Sprintf("; Y length %d differs from %s's %d", y.Length, b.name, b.yLen)
			}
		}
		return NewPAR(regs, reason), true
	}
	return NewPAR(nil, fmt.Sprintf("X length %d is neither GRCh37 (%d) nor GRCh38 (%d): no PAR used; give --par", x.Length, humanBuilds[0].xLen, humanBuilds[1].xLen)), false
}

// Regions returns the regions of the set as built (for run.json).
func (p *PAR) Regions() []vcfscan.Region { return append([]vcfscan.Region(nil), p.regions...) }

// Contains reports whether chrom:pos lies in a PAR.
func (p *PAR) Contains(chrom string, pos int64) bool {
	return p.Spans(chrom).Contains(pos)
}

// Spans returns the PAR intervals of one contig (nil when none), for a
// caller that looks the contig up once and then tests many positions.
func (p *PAR) Spans(chrom string) Spans {
	if p == nil {
		return nil
	}
	return p.byChrom[chrom]
}

// Spans is the sorted, merged PAR intervals of one contig.
type Spans []Span

// Contains reports whether pos lies in one of the intervals (binary
// search; a contig has at most a handful).
func (s Spans) Contains(pos int64) bool {
	i := sort.Search(len(s), func(i int) bool { return s[i].Hi >= pos })
	return i < len(s) && s[i].Lo <= pos
}

// Contig is how one contig's sites are treated, looked up once per
// contig by the worker: its kind and its PAR intervals.
type Contig struct {
	Kind Kind
	PAR  Spans
}

// Contig returns the treatment of contig name, whose kind the caller
// gives (KindOf(name), or a user's mapping for other assemblies).
func (p *PAR) Contig(name string, kind Kind) Contig {
	c := Contig{Kind: kind}
	if kind == ChromX || kind == ChromY {
		c.PAR = p.Spans(name)
	}
	return c
}

// KindAt returns the treatment of the site at pos: ChromX or ChromY
// outside the PARs (hemizygous in males), ChromMT, or Autosome for
// autosomes and for PAR sites (diploid in both sexes).
func (c Contig) KindAt(pos int64) Kind {
	if (c.Kind == ChromX || c.Kind == ChromY) && c.PAR.Contains(pos) {
		return Autosome
	}
	return c.Kind
}

// KindByName classifies a contig by name like KindOf, but accepts the
// human numeric codes (23, 24, 26) only when numericHuman is set: in other
// species those numbers are autosomes (cattle chromosome 23, for one).
func KindByName(name string, numericHuman bool) Kind {
	k := KindOf(name)
	if k != Autosome && !numericHuman {
		n := strings.TrimPrefix(strings.ToLower(name), "chr")
		if n != "" && n[0] >= '0' && n[0] <= '9' {
			return Autosome
		}
	}
	return k
}
