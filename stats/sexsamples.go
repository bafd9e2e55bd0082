package stats

import (
	"fgauge/internal/numfmt"
	"fgauge/stats/sexcheck"
)

// SexView is the cohort's sex check: every sample's inferred sex with its
// evidence, whether Y calls were used, and the sex each sample takes in
// the X tests (given, else inferred; Unknown leaves it out).
type SexView struct {
	Calls []sexcheck.Call
	Y     sexcheck.YUse
	Test  []sexcheck.Sex
}

// HasSexCheck reports whether the data had non-PAR X or Y sites, so that
// samples.tsv carries the sex columns and run.json the sex section.
func (t *Totals) HasSexCheck() bool { return t.Sex.Sites.X+t.Sex.Sites.Y > 0 }

// Sexes decides every sample's sex from the merged evidence
// (sexcheck.DecideAll with the run's thresholds). It is a pure function
// of the totals, so a merge decides as one pass does.
func (t *Totals) Sexes() *SexView {
	calls, y := sexcheck.DecideAll(t.Sex.Acc, t.Sex.Sites, t.Sex.Thresholds)
	v := &SexView{Calls: calls, Y: y, Test: make([]sexcheck.Sex, len(calls))}
	for i := range calls {
		v.Test[i] = calls[i].Sex
		if g := t.given(i); g.Known() {
			v.Test[i] = g
		}
	}
	return v
}

func (t *Totals) given(i int) sexcheck.Sex {
	if t.Sex.Given == nil {
		return sexcheck.Unknown
	}
	return t.Sex.Given[i]
}

// sexFlags returns sample i's sex flags.
func (t *Totals) sexFlags(v *SexView, i int) SampleFlags {
	var f SampleFlags
	if sexcheck.Mismatch(t.given(i), v.Calls[i].Sex) {
		f |= FlagSexMismatch
	}
	if v.Calls[i].Neither {
		f |= FlagSexNeither
	}
	return f
}

// sexColumns returns sample i's sex columns, in the order of their
// declaration (sex_given only when sexes were given).
func (t *Totals) sexColumns(v *SexView, i int) []string {
	a := &t.Sex.Acc[i]
	c := &v.Calls[i]
	var row []string
	if t.Sex.Given != nil {
		row = append(row, t.Sex.Given[i].String())
	}
	errs := numfmt.NA
	if v.Test[i] == sexcheck.Male {
		errs = itoa(a.XHet)
	}
	return append(row, c.Sex.String(), c.Reason, itoa(a.XCalled), ftoa(c.FX), ftoa(c.FXSE), ftoa(c.YRel), errs)
}

// sexColumnNames are the samples.tsv columns sexColumns fills.
var sexColumnNames = []string{"sex_given", "sex_inferred", "sex_evidence", "x_sites_called", "x_f", "x_f_se", "y_call_ratio", "x_male_het_errors"}

// SexSummary is the run.json "sex" section.
type SexSummary struct {
	FitsNeither       int              `json:"fits_neither"`
	GivenSource       string           `json:"given_source"` // "" when no sex was given
	Inferred          map[string]int   `json:"inferred"`     // samples by inferred sex
	MaleHetErrors     int64            `json:"male_het_errors"`
	Mismatches        int              `json:"mismatches"`
	MTSites           int64            `json:"mt_sites"`
	PAR               PARSummary       `json:"par"`
	SamplesGiven      int              `json:"samples_given"` // samples with a given male or female sex
	Thresholds        SexThresholdsDoc `json:"thresholds"`
	UnknownInXTests   int              `json:"unknown_sex_left_out_of_x_tests"`
	XInformativeSites int64            `json:"x_informative_sites"`
	XSites            int64            `json:"x_sites"` // non-PAR X sites
	XTestSexes        string           `json:"x_test_sexes"`
	YSites            int64            `json:"y_sites"` // non-PAR Y sites
	YUse              YUseSummary      `json:"y_use"`
}

// PARSummary says which pseudo-autosomal regions were used and why.
type PARSummary struct {
	Reason  string   `json:"reason"`
	Regions []string `json:"regions"`
}

// YUseSummary says whether Y calls were used for the sex check and why.
type YUseSummary struct {
	Reason string `json:"reason"`
	Used   bool   `json:"used"`
}

// SexThresholdsDoc is the thresholds of the sex check with their text.
type SexThresholdsDoc struct {
	Description    string  `json:"description"`
	ExcessMaxF     float64 `json:"excess_max_f"`
	ExcessZ        float64 `json:"excess_z"`
	FemaleMaxF     float64 `json:"female_max_f"`
	IntermediateZ  float64 `json:"intermediate_z"`
	MaleMinF       float64 `json:"male_min_f"`
	MinExpectedHet float64 `json:"min_expected_het"`
	MinMAF         float64 `json:"min_maf"`
	MinYSites      int64   `json:"min_y_sites"`
	YAbsentMax     float64 `json:"y_absent_max"`
	YPresentMin    float64 `json:"y_present_min"`
}

// SexSummary returns the run.json sex section, nil without non-PAR X or
// Y sites.
func (t *Totals) SexSummary() *SexSummary {
	if !t.HasSexCheck() {
		return nil
	}
	v := t.Sexes()
	th := t.Sex.Thresholds
	regions := t.Sex.PARRegions
	if regions == nil {
		regions = []string{}
	}
	s := &SexSummary{
		GivenSource: t.Sex.GivenSource,
		Inferred:    map[string]int{"male": 0, "female": 0, "unknown": 0},
		MTSites:     t.Sex.MTSites,
		PAR:         PARSummary{Reason: t.Sex.PARReason, Regions: regions},
		Thresholds: SexThresholdsDoc{Description: th.Describe(), ExcessMaxF: th.ExcessMaxF, ExcessZ: th.ExcessZ, FemaleMaxF: th.FemaleMaxF,
			IntermediateZ: th.IntermediateZ, MaleMinF: th.MaleMinF, MinExpectedHet: th.MinExpectedHet, MinMAF: th.MinMAF,
			MinYSites: th.MinYSites, YAbsentMax: th.YAbsentMax, YPresentMin: th.YPresentMin},
		XInformativeSites: t.Sex.Sites.XInformative,
		XSites:            t.Sex.Sites.X,
		XTestSexes:        "given sex where known, else the inferred sex; samples of unknown sex are left out of the X tests",
		YSites:            t.Sex.Sites.Y,
		YUse:              YUseSummary{Reason: v.Y.Reason, Used: v.Y.Used},
	}
	for i, c := range v.Calls {
		s.Inferred[c.Sex.String()]++
		if t.given(i).Known() {
			s.SamplesGiven++
		}
		if sexcheck.Mismatch(t.given(i), c.Sex) {
			s.Mismatches++
		}
		if c.Neither {
			s.FitsNeither++
		}
		switch v.Test[i] {
		case sexcheck.Male:
			s.MaleHetErrors += t.Sex.Acc[i].XHet
		case sexcheck.Unknown:
			s.UnknownInXTests++
		}
	}
	return s
}
