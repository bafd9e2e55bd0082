package mating

import (
	"math"

	"fgauge/stats"
	"fgauge/vcfscan"
)

// FreqSource gives, for each record of a batch, the alternate-allele
// frequency that centres the genotypes of the genomic coancestry.
type FreqSource interface {
	// Fill sets p[i] to the frequency for record i of b, or NaN to leave
	// the site out. p has room for len(b.Records) values. Fill is called
	// with the batches in input order, from one goroutine.
	Fill(b *vcfscan.Batch, p []float64)
}

// CohortFreqs is the default frequency source: at each site, the
// alternate-allele count over twice the number of diploid calls of every
// sample in the batch (so every sample of the input when the reader keeps
// them all, as fgauge mate does). This is the definition of the scan's
// cohort frequency (stats.FreqCohort); a test checks the two agree. A site
// with no diploid call gets NaN and is left out.
type CohortFreqs struct{}

// Fill implements FreqSource.
func (CohortFreqs) Fill(b *vcfscan.Batch, p []float64) {
	for i := range b.Records {
		var n [6]int64
		for _, g := range b.Calls(i) {
			n[g]++
		}
		called := n[vcfscan.HomRef] + n[vcfscan.Heterozygous] + n[vcfscan.HomAlt]
		if called == 0 {
			p[i] = math.NaN()
			continue
		}
		p[i] = float64(n[vcfscan.Heterozygous]+2*n[vcfscan.HomAlt]) / float64(2*called)
	}
}

// StatsFreqs takes the frequencies from a stats.Worker, so that fgauge mate
// uses exactly the frequencies a scan with the same options uses: an INFO
// key (stats.FreqInfo, with the reader's Options.InfoKey set) or an
// external panel (stats.FreqPanel; sites absent from the panel, or whose
// alleles do not match it, are left out). The worker also accumulates the
// scan's per-sample statistics, which are ignored: this costs time, so the
// cohort default uses CohortFreqs instead.
type StatsFreqs struct {
	w *stats.Worker
}

// NewStatsFreqs returns a frequency source for cfg, which must pass
// Validate; contigName maps vcfscan chromosome ids to names (for panel
// look-ups).
func NewStatsFreqs(cfg *stats.Config, contigName func(id int) string) (*StatsFreqs, error) {
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	return &StatsFreqs{w: stats.NewWorker(cfg, contigName)}, nil
}

// Fill implements FreqSource.
func (s *StatsFreqs) Fill(b *vcfscan.Batch, p []float64) {
	s.w.ProcessBatch(b, nil, nil, p)
}

// Totals returns the worker's totals; its Freq field counts the sites an
// INFO key or a panel did not cover.
func (s *StatsFreqs) Totals() *stats.Totals { return s.w.Totals() }
