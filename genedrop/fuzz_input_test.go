package genedrop

import (
	"errors"
	"math"
	"testing"
)

// FuzzParseChromosomes: any accepted chromosome list has names and
// finite, positive lengths; rejections wrap ErrConfig.
func FuzzParseChromosomes(f *testing.F) {
	for _, s := range []string{"1:1e8", "1:100000000:100,2:8e7", "x:5", "1:NaN", "1:1e8:Inf", "", ":", "1:2:3:4"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		cs, err := ParseChromosomes(s)
		if err != nil {
			if !errors.Is(err, ErrConfig) {
				t.Fatalf("error %v does not wrap ErrConfig", err)
			}
			return
		}
		for _, c := range cs {
			if c.Name == "" || c.LengthBP < 1 || !(c.LengthCM > 0) || math.IsInf(c.LengthCM, 0) {
				t.Fatalf("%q accepted as %+v", s, c)
			}
		}
	})
}

// FuzzParseDesign: any accepted design is known and has positive sizes;
// rejections wrap ErrConfig.
func FuzzParseDesign(f *testing.F) {
	for _, s := range []string{"selfing:5", "full_sib:2", "closed_herd:10:40:2", "half_sib", "closed_herd:1:1:1", "x", ""} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		d, err := ParseDesign(s)
		if err != nil {
			if !errors.Is(err, ErrConfig) {
				t.Fatalf("error %v does not wrap ErrConfig", err)
			}
			return
		}
		if _, ok := DesignKinds[d.Kind]; !ok || d.Generations < 1 || d.HerdSize < 1 || d.Sires < 1 {
			t.Fatalf("%q accepted as %+v", s, d)
		}
	})
}

// FuzzParseEpochs: any accepted epoch list has positive sizes and shares
// summing to at most 1; rejections wrap ErrConfig.
func FuzzParseEpochs(f *testing.F) {
	for _, s := range []string{"16:20:0.3,64:10:0.3,256:5:0.3", "8:1:1", "8:10", "0:1:0.5", "8:10:NaN", "8:10:0.7,9:9:0.7", ""} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		es, err := ParseEpochs(s)
		if err != nil {
			if !errors.Is(err, ErrConfig) {
				t.Fatalf("error %v does not wrap ErrConfig", err)
			}
			return
		}
		var sum float64
		for _, e := range es {
			if e.Generations < 1 || e.Haplotypes < 1 || !(e.Share > 0 && e.Share <= 1) {
				t.Fatalf("%q accepted as %+v", s, e)
			}
			sum += e.Share
		}
		if sum > 1+1e-9 {
			t.Fatalf("%q accepted with shares summing to %v", s, sum)
		}
	})
}
