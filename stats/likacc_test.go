package stats

import (
	"bytes"
	"encoding/gob"
	"math"
	"reflect"
	"testing"
)

// TestLikAccSplitMerge: records spread over three LikAccs (threads or
// shards), sent through gob (shard state files) and merged in another
// order, give the state of one LikAcc over all records, and the f_lik of
// the one-sample path (likF) exactly.
func TestLikAccSplitMerge(t *testing.T) {
	c := simulateLowcov(11, 1500, 3, 0.01)
	whole := NewLikAcc(c.nSamples)
	parts := []*LikAcc{NewLikAcc(c.nSamples), NewLikAcc(c.nSamples), NewLikAcc(c.nSamples)}
	for s := range c.pl {
		fr := whole.AddRecord(c.pl[s], nil, nil)
		whole.AddDP(c.dp[s])
		parts[s%3].AddRecord(c.pl[s], nil, nil)
		parts[s%3].AddDP(c.dp[s])
		var em SiteFreqEM
		if want := em.Estimate(c.pl[s]); math.Float64bits(fr.AltFreq) != math.Float64bits(want.AltFreq) {
			t.Fatalf("site %d: AddRecord frequency %v, SiteFreqEM %v", s, fr.AltFreq, want.AltFreq)
		}
	}
	merged := NewLikAcc(c.nSamples)
	for _, k := range []int{2, 0, 1} {
		var buf bytes.Buffer
		if err := gob.NewEncoder(&buf).Encode(parts[k]); err != nil {
			t.Fatal(err)
		}
		var back LikAcc
		if err := gob.NewDecoder(&buf).Decode(&back); err != nil {
			t.Fatal(err)
		}
		if err := merged.Merge(&back); err != nil {
			t.Fatal(err)
		}
	}
	if !reflect.DeepEqual(merged.FLik, whole.FLik) || !reflect.DeepEqual(merged.Depth, whole.Depth) ||
		merged.Records != whole.Records || merged.NoFreq != whole.NoFreq || merged.NotConverged != whole.NotConverged {
		t.Fatal("merged state differs from the whole")
	}
	_, direct := c.likF()
	if !reflect.DeepEqual(direct, whole.FLik) {
		t.Fatal("LikAcc and the direct FLikSite path differ")
	}
	if err := merged.Merge(NewLikAcc(3)); err == nil {
		t.Fatal("merging different sample counts must fail")
	}
	if m, src := whole.Depth[0].Mean(); src != DepthDP || !(m > 2.5 && m < 3.5) {
		t.Errorf("sample 0 depth %v from %v", m, src)
	}
}

// TestLikAccGroups: with group frequencies, each sample uses its group's
// frequency; a NaN group and a sample outside any group add nothing.
func TestLikAccGroups(t *testing.T) {
	c := simulateLowcov(12, 300, 3, 0.01)
	groupOf := make([]int32, c.nSamples)
	for i := range groupOf {
		groupOf[i] = int32(i % 3)
	}
	groupOf[5] = -1
	acc := NewLikAcc(c.nSamples)
	want := make([]FLikSummary, c.nSamples)
	var site FLikSite
	for s := range c.pl {
		freqs := []float64{0.2, 0.6, math.NaN()}
		acc.AddRecord(c.pl[s], groupOf, freqs)
		for i := range want {
			if g := groupOf[i]; g >= 0 && site.Set(freqs[g]) {
				want[i].Add(&site, c.pl[s][3*i], c.pl[s][3*i+1], c.pl[s][3*i+2])
			}
		}
	}
	if !reflect.DeepEqual(acc.FLik, want) {
		t.Fatal("group frequencies not applied per sample")
	}
	if acc.FLik[2].Sites != 0 || acc.FLik[5].Sites != 0 || acc.FLik[0].Sites == 0 {
		t.Errorf("sites: NaN group %d, no group %d, group 0 %d", acc.FLik[2].Sites, acc.FLik[5].Sites, acc.FLik[0].Sites)
	}
}
