package sexcheck

import (
	"fmt"
	"math"
	"slices"
)

// Thresholds drive Decide. Our own choices, reasoned from the expected
// values of F_X rather than taken from any program:
//
//   - A hemizygous male has no true heterozygous X calls: his F_X is
//     1 - e/H, with e his rate of spurious heterozygous calls and H the
//     mean 2pq of the informative sites (H >= 0.095 with DefaultMinMAF,
//     typically 0.2-0.35). MaleMinF = 0.9 accepts spurious-het rates up
//     to a tenth of H (about 1% at the lowest H, 3% at typical ones).
//   - A female's F_X estimates her X-linked inbreeding. The X-linked
//     coefficient of a daughter of full sibs is 3/8 (value from memory,
//     common practice), and cohorts studied for inbreeding contain such
//     animals, so FemaleMaxF = 0.5 sits above one generation of full-sib
//     mating plus sampling noise; the usual heterozygosity check
//     (Anderson et al. 2010) uses a lower female bound that would call
//     inbred females ambiguous.
//   - Between the two bands the sample is ambiguous (Unknown): mosaicism,
//     contamination, extreme inbreeding or poor data.
//   - MinExpectedHet = 50: a non-inbred female would show 50 heterozygous
//     calls at the sample's informative sites; a female with F_X = 0.5
//     then expects 25, and reads as male (at most 5) with Poisson
//     probability about 1e-6. Fewer: too few X sites (Unknown).
//   - An X heterozygosity excess no sex explains, F_X below ExcessMaxF =
//     -0.25 and below -ExcessZ = -4 standard errors (crossbred females
//     rarely fall below -0.2), suggests contamination: Unknown, and the
//     sample is flagged as fitting neither sex. So is an intermediate F_X
//     that lies more than IntermediateZ = 4 standard errors from both
//     bands in a sample that carries Y (a male with extra X material);
//     without Y evidence an intermediate F_X is only ambiguous, since a
//     female after repeated close mating can reach it.
//   - Y: a sample's Y call rate is taken relative to its X call rate
//     (so that a weak sample is not read as Y-less). It is at least
//     YPresentMin = 0.5 for a Y carrier and at most YAbsentMax = 0.1
//     without Y, midpoints chosen by us between the ideal 1 and 0 that
//     leave room for spurious calls in X-transposed or repeated Y
//     sequence. Y is used only with at least MinYSites = 10 Y sites and
//     when the cohort's Y calls do separate the sexes that X assigns (see
//     DecideAll): pipelines that call every sample on Y make it useless.
//     When Y is used, an X-female with Y present (XXY-like, or a male
//     contaminated with female DNA) and an X-male without Y (X0-like, or Y
//     loss) fit neither sex; a sample with too few X sites takes the sex
//     its Y says.
type Thresholds struct {
	MinMAF                  float64 // X sites used for F_X (pass to NewXSite); DefaultMinMAF
	MaleMinF, FemaleMaxF    float64
	MinExpectedHet          float64
	ExcessMaxF, ExcessZ     float64
	IntermediateZ           float64
	YPresentMin, YAbsentMax float64
	MinYSites               int64
	MinGroupForY            int // samples of one X-sex needed to judge whether Y separates
}

// DefaultThresholds returns the values documented on Thresholds.
func DefaultThresholds() Thresholds {
	return Thresholds{
		MinMAF:   DefaultMinMAF,
		MaleMinF: 0.9, FemaleMaxF: 0.5,
		MinExpectedHet: 50,
		ExcessMaxF:     -0.25, ExcessZ: 4,
		IntermediateZ: 4,
		YPresentMin:   0.5, YAbsentMax: 0.1,
		MinYSites:    10,
		MinGroupForY: 3,
	}
}

// Reasons a Call gives, in words for run.json and the report.
const (
	ReasonXHemizygous   = "x_hemizygous"           // male: F_X in the male band
	ReasonXDiploid      = "x_diploid"              // female: F_X in the female band
	ReasonTooFewX       = "too_few_x_sites"        // unknown: not enough X evidence
	ReasonAmbiguous     = "x_ambiguous"            // unknown: F_X between the bands
	ReasonIntermediate  = "x_intermediate"         // unknown, neither: F_X clearly between the bands
	ReasonHetExcess     = "x_het_excess"           // unknown, neither: X heterozygosity above any sex
	ReasonDiploidWithY  = "x_diploid_with_y"       // unknown, neither: two X and a Y
	ReasonHemizygousNoY = "x_hemizygous_without_y" // unknown, neither: one X, no Y
	ReasonYOnly         = "y_only"                 // sex from Y alone (too few X sites)
)

// Call is the sex inferred for one sample and the evidence behind it.
type Call struct {
	Sex         Sex
	Neither     bool    // the X (and Y) pattern fits neither sex
	Reason      string  // one of the Reason constants
	FX, FXSE    float64 // F_X and its standard error (NaN without informative calls)
	ExpectedHet float64 // heterozygous calls a non-inbred female would show
	YRel        float64 // Y call rate / X call rate (NaN without Y sites)
}

// YUse says whether Y calls were used and why, for run.json.
type YUse struct {
	Used   bool
	Reason string
}

// xClass is what F_X alone says.
type xClass int

const (
	xTooFew xClass = iota
	xMale
	xFemale
	xAmbiguous
	xIntermediate
	xExcess
)

func classifyX(a *Acc, th *Thresholds) (xClass, float64, float64) {
	f, se := a.FX()
	if a.ExpectedHet() < th.MinExpectedHet || math.IsNaN(f) {
		return xTooFew, f, se
	}
	switch {
	case f >= th.MaleMinF:
		return xMale, f, se
	case f <= th.FemaleMaxF && f >= th.ExcessMaxF:
		return xFemale, f, se
	case f < th.ExcessMaxF:
		if f < -th.ExcessZ*se {
			return xExcess, f, se
		}
		return xFemale, f, se
	}
	if f-th.FemaleMaxF > th.IntermediateZ*se && th.MaleMinF-f > th.IntermediateZ*se {
		return xIntermediate, f, se
	}
	return xAmbiguous, f, se
}

// yRel is the sample's Y call rate relative to its X call rate.
func yRel(a *Acc, s *Sites) float64 {
	if s.Y <= 0 {
		return math.NaN()
	}
	y := float64(a.YCalled) / float64(s.Y)
	if s.X > 0 && a.XCalled > 0 {
		y /= float64(a.XCalled) / float64(s.X)
	}
	return y
}

// DecideAll infers every sample's sex from its accumulator and the
// cohort's site counts. It first classifies samples by F_X alone, then
// judges whether the Y calls separate the sexes X assigns (Y used only
// when there are at least MinYSites Y sites, at least one X-sex group has
// MinGroupForY samples, and each such group's median relative Y rate lies
// on its side: at most YAbsentMax for X-females, at least YPresentMin for
// X-males), and then decides each sample with Decide.
func DecideAll(accs []Acc, sites Sites, th Thresholds) ([]Call, YUse) {
	use := judgeY(accs, &sites, &th)
	out := make([]Call, len(accs))
	for i := range accs {
		out[i] = Decide(&accs[i], &sites, th, use.Used)
	}
	return out, use
}

func judgeY(accs []Acc, s *Sites, th *Thresholds) YUse {
	if s.Y < th.MinYSites {
		return YUse{Reason: fmt.Sprintf("%d non-PAR Y sites (fewer than %d): Y not used", s.Y, th.MinYSites)}
	}
	var fem, mal []float64
	for i := range accs {
		c, _, _ := classifyX(&accs[i], th)
		y := yRel(&accs[i], s)
		if math.IsNaN(y) {
			continue
		}
		switch c {
		case xFemale:
			fem = append(fem, y)
		case xMale:
			mal = append(mal, y)
		}
	}
	med := func(v []float64) float64 {
		slices.Sort(v)
		n := len(v)
		if n%2 == 1 {
			return v[n/2]
		}
		return (v[n/2-1] + v[n/2]) / 2
	}
	groups := 0
	if len(fem) >= th.MinGroupForY {
		groups++
		if m := med(fem); m > th.YAbsentMax {
			return YUse{Reason: fmt.Sprintf("samples female by X have a median relative Y call rate of %.3g (above %.3g): Y calls do not separate the sexes, Y not used", m, th.YAbsentMax)}
		}
	}
	if len(mal) >= th.MinGroupForY {
		groups++
		if m := med(mal); m < th.YPresentMin {
			return YUse{Reason: fmt.Sprintf("samples male by X have a median relative Y call rate of %.3g (below %.3g): Y calls do not separate the sexes, Y not used", m, th.YPresentMin)}
		}
	}
	if groups == 0 {
		return YUse{Reason: "too few samples of either sex by X to judge the Y calls: Y not used"}
	}
	return YUse{Used: true, Reason: fmt.Sprintf("%d non-PAR Y sites separate the sexes assigned by X: Y used as supporting evidence", s.Y)}
}

// Decide infers one sample's sex. useY says whether Y calls are to be
// used (DecideAll judges it for the cohort). Rules are documented on
// Thresholds.
func Decide(a *Acc, s *Sites, th Thresholds, useY bool) Call {
	c, f, se := classifyX(a, &th)
	r := Call{FX: f, FXSE: se, ExpectedHet: a.ExpectedHet(), YRel: yRel(a, s)}
	y := r.YRel
	yPresent := useY && !math.IsNaN(y) && y >= th.YPresentMin
	yAbsent := useY && !math.IsNaN(y) && y <= th.YAbsentMax
	switch c {
	case xMale:
		if yAbsent {
			r.Neither, r.Reason = true, ReasonHemizygousNoY
		} else {
			r.Sex, r.Reason = Male, ReasonXHemizygous
		}
	case xFemale:
		if yPresent {
			r.Neither, r.Reason = true, ReasonDiploidWithY
		} else {
			r.Sex, r.Reason = Female, ReasonXDiploid
		}
	case xExcess:
		r.Neither, r.Reason = true, ReasonHetExcess
	case xIntermediate:
		if yPresent {
			r.Neither, r.Reason = true, ReasonIntermediate
		} else {
			r.Reason = ReasonAmbiguous
		}
	case xAmbiguous:
		r.Reason = ReasonAmbiguous
	default:
		r.Reason = ReasonTooFewX
		switch {
		case yPresent:
			r.Sex, r.Reason = Male, ReasonYOnly
		case yAbsent:
			r.Sex, r.Reason = Female, ReasonYOnly
		}
	}
	return r
}

// Describe returns the thresholds in a few lines for --help and the
// report, with their reasons in short.
func (t Thresholds) Describe() string {
	return fmt.Sprintf(`Sex is inferred from non-PAR X sites with cohort MAF >= %g: F_X = 1 - observed/expected heterozygous calls
(heterozygosity-based sex check, Anderson et al. 2010, Nat Protoc 5:1564; thresholds are fgauge's own).
  male    F_X >= %g  (hemizygous: only spurious heterozygous calls, up to a tenth of the expected rate)
  female  F_X <= %g  (above the X inbreeding of a daughter of full sibs, 3/8, plus noise)
  unknown between the two, or when a non-inbred female would show fewer than %g heterozygous calls
  fits neither sex: F_X < %g and %g standard errors below 0 (heterozygosity excess: contamination?),
          or, when Y calls separate the sexes (>= %d Y sites), two X with a Y or one X without
          (Y present: Y call rate >= %g of the X call rate; absent: <= %g).`,
		t.MinMAF, t.MaleMinF, t.FemaleMaxF, t.MinExpectedHet, t.ExcessMaxF, t.ExcessZ, t.MinYSites, t.YPresentMin, t.YAbsentMax)
}
