package stats

import (
	"bytes"
	"math"
	"reflect"
	"sync"
	"testing"

	"fgauge/vcfscan"
)

// lowcovBatches cuts a simulated low-depth cohort (lowcov_sim_test.go)
// into batches of size records, with GT, PL and DP as vcfscan fills them.
func lowcovBatches(c *lowcovCohort, size int) []*vcfscan.Batch {
	var out []*vcfscan.Batch
	for s := 0; s < len(c.pl); s += size {
		b := &vcfscan.Batch{Seq: int64(len(out)), NSamples: c.nSamples}
		for k := s; k < min(s+size, len(c.pl)); k++ {
			b.Records = append(b.Records, vcfscan.Record{Pos: int64(k + 1), Ref: []byte("A"), Alt: []byte("G"), InfoValue: math.NaN()})
			b.GT = append(b.GT, c.calls[k]...)
			b.PL = append(b.PL, c.pl[k]...)
			b.HasPL = append(b.HasPL, true)
			b.DP = append(b.DP, c.dp[k]...)
			b.HasDP = append(b.HasDP, true)
		}
		out = append(out, b)
	}
	return out
}

func lowcovNames(n int) []string {
	names := make([]string, n)
	for i := range names {
		names[i] = string(rune('A'+i%26)) + string(rune('a'+i/26))
	}
	return names
}

// TestWorkerLikelihoods: workers feeding one LikShared, batches spread
// over 1, 2 or 3 concurrent workers, give the LikAcc of the library path
// (LikAcc.AddRecord and AddDP over every record) bit for bit, and
// sites.tsv's alt_freq_lik is the site EM frequency.
func TestWorkerLikelihoods(t *testing.T) {
	c := simulateLowcov(5, 900, 3, 0.01)
	want := NewLikAcc(c.nSamples)
	var em SiteFreqEM
	var wantFreq []float64
	for s := range c.pl {
		want.AddRecord(c.pl[s], nil, nil)
		want.AddDP(c.dp[s])
		wantFreq = append(wantFreq, em.Estimate(c.pl[s]).AltFreq)
	}
	batches := lowcovBatches(c, 64)
	cfg := &Config{Samples: lowcovNames(c.nSamples)}
	for _, threads := range []int{1, 2, 3} {
		sh := NewLikShared(c.nSamples)
		workers := make([]*Worker, threads)
		var wg sync.WaitGroup
		rows := make([]bytes.Buffer, len(batches))
		for k := range workers {
			workers[k] = NewWorker(cfg, func(int) string { return "1" })
			workers[k].ShareLikelihoods(sh)
			wg.Add(1)
			go func(k int) {
				defer wg.Done()
				for i := k; i < len(batches); i += threads {
					b := batches[i]
					workers[k].ProcessBatch(b, &rows[i], nil, make([]float64, len(b.Records)))
				}
			}(k)
		}
		wg.Wait()
		tot := workers[0].Totals()
		for _, w := range workers[1:] {
			if err := tot.Merge(w.Totals()); err != nil {
				t.Fatal(err)
			}
		}
		tot.Lik = sh.Acc()
		if !reflect.DeepEqual(tot.Lik.FLik, want.FLik) || !reflect.DeepEqual(tot.Lik.Depth, want.Depth) ||
			tot.Lik.Records != want.Records || tot.Lik.NoFreq != want.NoFreq || tot.Lik.NotConverged != want.NotConverged {
			t.Fatalf("%d threads: likelihood state differs from LikAcc's", threads)
		}
		// alt_freq_lik is the last column of every site row.
		var all bytes.Buffer
		for i := range rows {
			all.Write(rows[i].Bytes())
		}
		lines := bytes.Split(bytes.TrimSuffix(all.Bytes(), []byte("\n")), []byte("\n"))
		for s, l := range lines {
			f := bytes.Split(l, []byte("\t"))
			if got, want := string(f[len(f)-1]), ftoa(wantFreq[s]); got != want {
				t.Fatalf("site %d: alt_freq_lik %s, want %s", s, got, want)
			}
		}
		// f_lik in the table is the summary's estimate.
		h, r := tot.SampleTable()
		col := -1
		for k, name := range h {
			if name == "f_lik" {
				col = k
			}
		}
		for i := range r {
			if r[i][col] != ftoa(want.FLik[i].Estimate().F) {
				t.Fatalf("sample %d: f_lik %s, want %v", i, r[i][col], want.FLik[i].Estimate().F)
			}
		}
		if d, src := tot.CohortDepth(); src != DepthDP || !(d > 2.8 && d < 3.2) {
			t.Errorf("cohort depth %v from %v, want about 3 from DP", d, src)
		}
	}
	// --no-likelihood-f: nothing read from PL or DP.
	w := NewWorker(&Config{Samples: cfg.Samples, NoLikelihoods: true}, func(int) string { return "1" })
	for _, b := range batches {
		w.ProcessBatch(b, nil, nil, make([]float64, len(b.Records)))
	}
	if w.Totals().Lik != nil {
		t.Fatal("NoLikelihoods: likelihood state allocated")
	}
}

// TestWorkerLikelihoodFreqSources: with --freqs-from-info frequencies
// (auto) and with the hard-call cohort frequency (estimators), f_lik's
// summaries are those of LikAcc.AddRecord at that frequency; with
// "likelihood" they ignore the INFO value.
func TestWorkerLikelihoodFreqSources(t *testing.T) {
	c := simulateLowcov(9, 400, 3, 0.01)
	batches := lowcovBatches(c, 50)
	for _, b := range batches {
		for i := range b.Records {
			b.Records[i].InfoValue = 0.05 + 0.9*float64(b.Records[i].Pos%17)/17
		}
	}
	names := lowcovNames(c.nSamples)
	groupOf := make([]int32, c.nSamples)
	cases := []struct {
		name string
		cfg  Config
		freq func(site int) float64
	}{
		{"info_auto", Config{Samples: names, Freqs: FreqInfo}, func(s int) float64 { return 0.05 + 0.9*float64((s+1)%17)/17 }},
		{"info_likelihood", Config{Samples: names, Freqs: FreqInfo, LikFreqs: LikFreqEM}, nil},
		{"cohort_estimators", Config{Samples: names, LikFreqs: LikFreqEstimators}, func(s int) float64 {
			var alt, n float64
			for _, g := range c.calls[s] {
				if g <= vcfscan.HomAlt {
					alt += float64(g)
					n++
				}
			}
			return alt / (2 * n)
		}},
	}
	for _, tc := range cases {
		want := NewLikAcc(c.nSamples)
		for s := range c.pl {
			if tc.freq == nil {
				want.AddRecord(c.pl[s], nil, nil)
			} else {
				want.AddRecord(c.pl[s], groupOf, []float64{tc.freq(s)})
			}
		}
		w := NewWorker(&tc.cfg, func(int) string { return "1" })
		for _, b := range batches {
			w.ProcessBatch(b, nil, nil, make([]float64, len(b.Records)))
		}
		if got := w.Totals().Lik; got == nil || !reflect.DeepEqual(got.FLik, want.FLik) {
			t.Errorf("%s: f_lik summaries differ from LikAcc at the chosen frequency", tc.name)
		}
	}
}
