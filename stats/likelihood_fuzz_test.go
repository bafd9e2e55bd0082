package stats

import (
	"encoding/binary"
	"math"
	"testing"
)

// FuzzFLikSiteCache compares the per-site term cache of FLikSummary.Add
// (the fast path) with the obviously-correct path, AddRatio of the call's
// FLikSite.Ratio: both must give the same integers, whatever the triples
// and however crowded the cache.
func FuzzFLikSiteCache(f *testing.F) {
	f.Add(uint16(5000), []byte{0, 0, 0, 30, 1, 44, 0, 0, 0, 0, 0, 0})
	f.Add(uint16(30000), []byte{19, 136, 0, 0, 19, 136, 0, 0, 0, 3, 0, 30, 0, 30, 0, 3, 0, 0})
	f.Fuzz(func(t *testing.T, freq uint16, data []byte) {
		p := float64(freq) / 65536
		var site FLikSite
		var fast, simple FLikSummary
		for rep := 0; rep < 2; rep++ { // a second site: the cache is reset
			site.Set(p)
			for i := 0; i+6 <= len(data); i += 6 {
				pl0 := binary.BigEndian.Uint16(data[i:])
				pl1 := binary.BigEndian.Uint16(data[i+2:])
				pl2 := binary.BigEndian.Uint16(data[i+4:])
				fast.Add(&site, pl0, pl1, pl2)
				if r, ok := site.Ratio(pl0, pl1, pl2); ok {
					simple.AddRatio(r)
				}
			}
		}
		if fast != simple {
			t.Fatalf("cached and direct summaries differ")
		}
		if e := fast.Estimate(); !(math.IsNaN(e.F) || (e.F >= 0 && e.F <= 1)) {
			t.Fatalf("F = %v outside [0, 1]", e.F)
		}
	})
}

// FuzzSiteFreqEM compares the grouped site EM with a plain per-sample EM
// (same start, same stopping rule): within 1e-9.
func FuzzSiteFreqEM(f *testing.F) {
	f.Add([]byte{0, 0, 0, 30, 1, 44, 0, 30, 0, 0, 0, 30, 1, 44, 0, 30, 0, 0})
	f.Add([]byte{0, 3, 0, 0, 0, 30, 0, 3, 0, 0, 0, 30, 0, 0, 0, 3, 0, 33})
	f.Fuzz(func(t *testing.T, data []byte) {
		var pl []uint16
		for i := 0; i+2 <= len(data); i += 2 {
			pl = append(pl, binary.BigEndian.Uint16(data[i:]))
		}
		pl = pl[:len(pl)/3*3]
		var em SiteFreqEM
		got := em.Estimate(pl)
		want := plainSiteEM(pl)
		if math.IsNaN(want) != math.IsNaN(got.AltFreq) {
			t.Fatalf("grouped %v, plain %v", got.AltFreq, want)
		}
		if !math.IsNaN(want) && got.Converged && math.Abs(got.AltFreq-want) > 1e-9 {
			t.Fatalf("grouped %.15g, plain %.15g", got.AltFreq, want)
		}
	})
}

// plainSiteEM is the site EM without grouping, one sample at a time.
func plainSiteEM(pl []uint16) float64 {
	var liks [][3]float64
	for i := 0; i+2 < len(pl); i += 3 {
		if l, ok := likelihoods(pl[i], pl[i+1], pl[i+2]); ok {
			liks = append(liks, l)
		}
	}
	if len(liks) == 0 {
		return math.NaN()
	}
	var f float64
	for _, l := range liks {
		f += (l[1] + 2*l[2]) / (l[0] + l[1] + l[2])
	}
	f /= 2 * float64(len(liks))
	for it := 0; it < SiteEMMaxIter; it++ {
		var num float64
		for _, l := range liks {
			a0, a1, a2 := (1-f)*(1-f)*l[0], 2*f*(1-f)*l[1], f*f*l[2]
			num += (a1 + 2*a2) / (a0 + a1 + a2)
		}
		nf := num / (2 * float64(len(liks)))
		d := nf - f
		f = nf
		if math.Abs(d) <= SiteEMTolerance {
			break
		}
	}
	return f
}
