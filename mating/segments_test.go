package mating

import (
	"context"
	"math"
	"strings"
	"testing"

	"fgauge/vcfscan"
)

// segBatch builds one chromosome of n sites 100 kb apart; geno[a][k] is
// animal a's code at site k.
func segBatch(chrom int, geno ...[]vcfscan.Geno) *vcfscan.Batch {
	n := len(geno[0])
	b := &vcfscan.Batch{NSamples: len(geno), Records: make([]vcfscan.Record, n), GT: make([]vcfscan.Geno, n*len(geno))}
	for k := 0; k < n; k++ {
		b.Records[k] = vcfscan.Record{ChromID: chrom, Pos: int64(k)*100_000 + 1}
		for a := range geno {
			b.GT[k*len(geno)+a] = geno[a][k]
		}
	}
	return b
}

// pattern repeats codes to n sites.
func pattern(n int, codes ...vcfscan.Geno) []vcfscan.Geno {
	out := make([]vcfscan.Geno, n)
	for k := range out {
		out[k] = codes[k%len(codes)]
	}
	return out
}

// TestSharedSegmentsStates: the pairing share of each state (definition of
// coancestry as the mean over the four pairings of copies, common
// practice): both copies shared 1/2, one parent autozygous 1/2, both
// autozygous on the same copy 1, one copy shared 1/4, and opposite
// homozygotes every few sites (no long shared stretch) 0.
func TestSharedSegmentsStates(t *testing.T) {
	const n = 200 // 19.9 Mb: one stretch well above 3 Mb
	const H, R, A, M = vcfscan.Heterozygous, vcfscan.HomRef, vcfscan.HomAlt, vcfscan.Missing
	het := pattern(n, H, R, A, H, R)
	oneCopy := pattern(n, R, R, A, H, H) // shares a copy with het, never equal everywhere
	for _, c := range []struct {
		name string
		x, y []vcfscan.Geno
		want float64
	}{
		{"both copies", het, het, 0.5},
		{"both copies, missing calls", het, pattern(n, H, M, A, H, R), 0.5},
		{"one copy", het, oneCopy, 0.25},
		{"sire autozygous", pattern(n, R, R, A, A, R), het, 0.5},
		{"both autozygous, same copy", pattern(n, R, A), pattern(n, R, A), 1},
		{"unrelated", pattern(n, R, A, H, R, A, A, R, H), pattern(n, A, A, H, R, R, R, A, H), 0},
	} {
		p := NewSegmentPacker([]int{0}, []int{1})
		p.Add(segBatch(0, c.x, c.y))
		m, err := p.SharedSegments(context.Background(), 2, SegmentOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(m.V[0]-c.want) > 1e-12 {
			t.Errorf("%s: %v, want %v", c.name, m.V[0], c.want)
		}
	}
}

// TestSharedSegmentsStretches: opposite homozygotes cut stretches; only
// stretches of at least MinBP count, and the share is of the whole span.
func TestSharedSegmentsStretches(t *testing.T) {
	const H, R, A = vcfscan.Heterozygous, vcfscan.HomRef, vcfscan.HomAlt
	x := pattern(300, H, R, A)
	y := append([]vcfscan.Geno{}, x...)
	y[100] = A // x is R at 100 (100 % 3 == 1): opposite homozygote
	x[200] = R
	y[200] = A
	// Stretches: sites 0-99 (9.9 Mb), 101-199 (9.8 Mb), 201-299 (9.8 Mb).
	p := NewSegmentPacker([]int{0}, []int{1})
	p.Add(segBatch(0, x, y))
	span := 299 * 100_000.0
	m, _ := p.SharedSegments(context.Background(), 1, SegmentOptions{})
	if want := 0.5 * (9.9e6 + 9.8e6 + 9.8e6) / span; math.Abs(m.V[0]-want) > 1e-12 {
		t.Errorf("three stretches: %v, want %v", m.V[0], want)
	}
	m, _ = p.SharedSegments(context.Background(), 1, SegmentOptions{MinBP: 9_850_000})
	if want := 0.5 * 9.9e6 / span; math.Abs(m.V[0]-want) > 1e-12 {
		t.Errorf("MinBP 9.85 Mb: %v, want %v", m.V[0], want)
	}
	// A chromosome met again after another one is refused.
	q := NewSegmentPacker([]int{0}, []int{1})
	q.Add(segBatch(0, x[:10], y[:10]))
	q.Add(segBatch(1, x[:10], y[:10]))
	q.Add(segBatch(0, x[:10], y[:10]))
	if _, err := q.SharedSegments(context.Background(), 1, SegmentOptions{}); err == nil || !strings.Contains(err.Error(), "one block") {
		t.Errorf("unsorted chromosomes: %v", err)
	}
}
