package roh

import (
	"fmt"
	"math"
	"strconv"
)

// AgeRunColumns are the runs.tsv columns of the age-class model, written
// after the other runs.tsv columns when the age classes are on.
var AgeRunColumns = []string{"age_class_generations", "age_class_posterior"}

// ageColumns document AgeRunColumns.
var ageColumns = []ColumnDoc{
	{"runs.tsv", "age_class_generations", "age-class model (Druet & Gautier 2017, Mol Ecol 26:5820): the autozygous class with the highest mean posterior over the run's sites, as its generation bound G = R_k/2 (class rate R_k per Morgan, segments about 100/R_k cM long, common ancestor about G generations back); NA for the rule-based detector or with --no-age-classes"},
	{"runs.tsv", "age_class_posterior", "mean posterior probability of that class over the run's sites (the other classes share the rest); NA where age_class_generations is"},
}

// AgeColumnDoc explains the f_within_<G>g column of generation bound g.
func AgeColumnDoc(g int) ColumnDoc {
	return ColumnDoc{"samples.tsv", AgeColumn(g), fmt.Sprintf(
		"expected share of the covered autosomal length autozygous from common ancestors at most %d generations back: "+
			"the age-class model's (Druet & Gautier 2017, Mol Ecol 26:5820) posterior of the autozygous classes with rate R_k <= %d per Morgan "+
			"(class k stands for G = R_k/2 generations; grid G = 2, 4, ..., 256), averaged over the covered length; "+
			"an inbreeding coefficient relative to a base population %d generations back, so it grows with G; NA for the rule-based detector", g, 2*g, g)}
}

// appendAge appends the age columns of one run (with their leading tabs).
func (r *Result) appendAge(buf []byte, run Run) []byte {
	buf = append(buf, '\t')
	if run.AgeClass < 1 || run.AgeClass > len(r.AgeRates) {
		return append(append(buf, "NA\t"...), "NA"...)
	}
	buf = appendF(buf, r.AgeRates[run.AgeClass-1]/2)
	buf = append(buf, '\t')
	return appendF(buf, run.AgePosterior)
}

// AgeClassBP returns, per sample, the per-class posterior lengths summed
// over chromosomes (units of 1/AgeUnit bp, K+1 classes, the
// non-autozygous last), or nil when some chromosome has no age fit (the
// rules detector, or the age classes off).
func (r *Result) AgeClassBP() [][]int64 {
	if r.AgeRates == nil || len(r.Chroms) == 0 {
		return nil
	}
	m := len(r.AgeRates) + 1
	out := make([][]int64, len(r.Samples))
	for s := range out {
		out[s] = make([]int64, m)
	}
	for _, c := range r.Chroms {
		if len(c.AgeBP) != m*len(r.Samples) {
			return nil
		}
		for s := range out {
			for l := 0; l < m; l++ {
				out[s][l] += c.AgeBP[s*m+l]
			}
		}
	}
	return out
}

// FWithin returns f_within_<G>g for each G of AgeGenerations (outer) and
// each sample (inner); NaN everywhere when the age model was not fitted.
func (r *Result) FWithin() [][]float64 {
	out := make([][]float64, len(AgeGenerations))
	cov, _ := r.Covered()
	bp := r.AgeClassBP()
	for j := range out {
		out[j] = make([]float64, len(r.Samples))
		for s := range out[j] {
			out[j][s] = math.NaN()
		}
	}
	if bp == nil {
		return out
	}
	for s := range r.Samples {
		fw := FWithin(bp[s], r.AgeRates, cov)
		for j := range out {
			out[j][s] = fw[j]
		}
	}
	return out
}

// AgeSummary is the "age_classes" object of run.json's "roh".
type AgeSummary struct {
	// Generations are the classes' generation bounds R_k/2, youngest first.
	Generations []float64 `json:"generations"`
	// Columns are the samples.tsv columns f_within_<G>g, in the order of
	// AgeGenerations.
	Columns         []string `json:"columns"`
	MarginCM        float64  `json:"margin_cm"`
	WholeChromosome bool     `json:"whole_chromosome"`
	// WholeShare: samples whose windows covered at least this share of a
	// chromosome were fitted on the whole chromosome.
	WholeShare        float64   `json:"whole_chromosome_share"`
	MeanRounds        float64   `json:"-"`
	CohortMeanByClass []float64 `json:"cohort_mean_by_class"` // per class, mean over samples of its share of the covered length (NaN -> null omitted)
}

// ageSummary fills the age part of the run.json summary.
func (r *Result) ageSummary() *AgeSummary {
	if r.AgeRates == nil {
		return nil
	}
	a := &AgeSummary{MarginCM: r.AgeMarginCM, WholeChromosome: r.AgeWhole, WholeShare: r.AgeWholeShare}
	for _, x := range r.AgeRates {
		a.Generations = append(a.Generations, x/2)
	}
	for _, g := range AgeGenerations {
		a.Columns = append(a.Columns, AgeColumn(g))
	}
	cov, _ := r.Covered()
	bp := r.AgeClassBP()
	a.CohortMeanByClass = make([]float64, len(r.AgeRates))
	if bp == nil || cov <= 0 || len(r.Samples) == 0 {
		a.CohortMeanByClass = nil
		return a
	}
	for k := range r.AgeRates {
		var t float64
		for s := range bp {
			t += float64(bp[s][k]) / AgeUnit / float64(cov)
		}
		a.CohortMeanByClass[k] = t / float64(len(bp))
	}
	return a
}

// ParseAgeColumn returns G of an f_within_<G>g column name.
func ParseAgeColumn(col string) (int, bool) {
	const pre, suf = "f_within_", "g"
	if len(col) <= len(pre)+len(suf) || col[:len(pre)] != pre || col[len(col)-1:] != suf {
		return 0, false
	}
	g, err := strconv.Atoi(col[len(pre) : len(col)-1])
	if err != nil || AgeColumn(g) != col {
		return 0, false
	}
	return g, true
}
