package pedigree

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func mustRead(t testing.TB, text string) *Pedigree {
	t.Helper()
	p, err := Read(strings.NewReader(text), "test.tsv")
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func fOf(t testing.TB, p *Pedigree, f []float64, id string) float64 {
	t.Helper()
	i, ok := p.Index(id)
	if !ok {
		t.Fatalf("id %q not found", id)
	}
	return f[i]
}

// Textbook inbreeding coefficients of classic matings (common practice;
// e.g. Falconer & Mackay 1996, Introduction to Quantitative Genetics, ch. 5;
// values from memory and re-derived by path counting: F = sum (1/2)^(n+1)).
func TestInbreedingClassicMatings(t *testing.T) {
	tests := []struct {
		name, table, focal string
		want               float64
	}{
		{"full_sib_offspring", "s\t0\t0\nd\t0\t0\nb\ts\td\ns2\ts\td\nx\tb\ts2\n", "x", 0.25},
		{"half_sib_offspring", "s\t0\t0\nd1\t0\t0\nd2\t0\t0\nb\ts\td1\ng\ts\td2\nx\tb\tg\n", "x", 0.125},
		{"first_cousin_offspring", "gs\t0\t0\ngd\t0\t0\nb1\tgs\tgd\nb2\tgs\tgd\nm1\t0\t0\nm2\t0\t0\nc1\tb1\tm1\nc2\tm2\tb2\nx\tc1\tc2\n", "x", 0.0625},
		{"parent_offspring", "s\t0\t0\nd\t0\t0\ndau\ts\td\nx\ts\tdau\n", "x", 0.25},
		// Two generations of full-sib mating: F_t = (1 + 2F_{t-1} + F_{t-2})/4
		// gives 1/4 then 3/8 (common practice, Falconer & Mackay ch. 5).
		{"full_sib_two_generations", "s\t0\t0\nd\t0\t0\nb\ts\td\ng\ts\td\nb2\tb\tg\ng2\tb\tg\nx\tb2\tg2\n", "x", 0.375},
		{"selfing_1", "p0\t0\t0\np1\tp0\tp0\n", "p1", 0.5},
		{"selfing_2", "p0\t0\t0\np1\tp0\tp0\np2\tp1\tp1\n", "p2", 0.75},
		{"selfing_3", "p0\t0\t0\np1\tp0\tp0\np2\tp1\tp1\np3\tp2\tp2\n", "p3", 0.875},
		{"unknown_dam", "s\t0\t0\nx\ts\t0\n", "x", 0},
		{"parents_listed_after_offspring", "x\tb\tg\nb\ts\td\ng\ts\td\n", "x", 0.25},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := mustRead(t, tc.table)
			f := p.Inbreeding()
			if got := fOf(t, p, f, tc.focal); math.Abs(got-tc.want) > 1e-12 {
				t.Errorf("F(%s) = %v, want %v", tc.focal, got, tc.want)
			}
		})
	}
}

// Selfing for t generations: F_t = 1 - (1/2)^t (common practice).
func TestInbreedingSelfingSeries(t *testing.T) {
	var b strings.Builder
	b.WriteString("g0\t0\t0\n")
	for g := 1; g <= 20; g++ {
		fmt.Fprintf(&b, "g%d\tg%d\tg%d\n", g, g-1, g-1)
	}
	p := mustRead(t, b.String())
	f := p.Inbreeding()
	for g := 0; g <= 20; g++ {
		want := 1 - math.Pow(0.5, float64(g))
		if got := fOf(t, p, f, fmt.Sprintf("g%d", g)); math.Abs(got-want) > 1e-12 {
			t.Errorf("selfing generation %d: F = %v, want %v", g, got, want)
		}
	}
}

// Published worked example: the six-animal pedigree with which Mrode (2005,
// Linear Models for the Prediction of Animal Breeding Values, 2nd ed., CABI,
// chapter 2) builds the numerator relationship matrix by the tabular method
// (animal 3 = 1x2, 4 = 1x?, 5 = 4x3, 6 = 5x2). Pedigree and values are
// taken from memory and re-derived here by hand with the tabular method:
// a_55 = a_66 = 1.125, a_35 = a_45 = 0.625, a_56 = 0.6875.
func TestMrodeExample(t *testing.T) {
	p := mustRead(t, "animal\tsire\tdam\n1\t0\t0\n2\t0\t0\n3\t1\t2\n4\t1\t0\n5\t4\t3\n6\t5\t2\n")
	f := p.Inbreeding()
	wantF := map[string]float64{"1": 0, "2": 0, "3": 0, "4": 0, "5": 0.125, "6": 0.125}
	for id, w := range wantF {
		if got := fOf(t, p, f, id); got != w {
			t.Errorf("F(%s) = %v, want %v", id, got, w)
		}
	}
	// Coancestry is half the relationship a_ij.
	pairs := []struct {
		a, b string
		aij  float64
	}{
		{"3", "5", 0.625}, {"4", "5", 0.625}, {"5", "6", 0.6875}, {"1", "5", 0.5},
		{"5", "5", 1.125}, {"4", "3", 0.25}, {"2", "6", 0.625}, {"1", "2", 0},
	}
	var idx [][2]int
	for _, pr := range pairs {
		a, _ := p.Index(pr.a)
		b, _ := p.Index(pr.b)
		idx = append(idx, [2]int{a, b})
	}
	got, err := p.Coancestry(idx, f)
	if err != nil {
		t.Fatal(err)
	}
	for k, pr := range pairs {
		if math.Abs(got[k]-pr.aij/2) > 1e-12 {
			t.Errorf("coancestry(%s,%s) = %v, want %v", pr.a, pr.b, got[k], pr.aij/2)
		}
	}
}

// tabularA is the plain O(n^2) tabular method (Emik & Terrill 1949; common
// practice), an independent slow path for random pedigrees.
func tabularA(p *Pedigree) [][]float64 {
	n := p.Len()
	a := make([][]float64, n)
	for i := range a {
		a[i] = make([]float64, n)
	}
	for i := 0; i < n; i++ {
		s, d := p.Sire(i), p.Dam(i)
		for j := 0; j < i; j++ {
			var v float64
			if s >= 0 {
				v += 0.5 * a[j][s]
			}
			if d >= 0 {
				v += 0.5 * a[j][d]
			}
			a[i][j], a[j][i] = v, v
		}
		a[i][i] = 1
		if s >= 0 && d >= 0 {
			a[i][i] += 0.5 * a[s][d]
		}
	}
	return a
}

func randomPedigree(rng *rand.Rand, n int) *Pedigree {
	recs := make([]Record, n)
	for i := range recs {
		recs[i] = Record{ID: fmt.Sprint("a", i)}
		if i > 3 {
			if rng.IntN(5) > 0 {
				recs[i].Sire = fmt.Sprint("a", rng.IntN(i))
			}
			if rng.IntN(5) > 0 {
				recs[i].Dam = fmt.Sprint("a", rng.IntN(i))
			}
		}
	}
	// Shuffle so that offspring often precede parents in the input.
	rng.Shuffle(len(recs), func(i, j int) { recs[i], recs[j] = recs[j], recs[i] })
	p, err := FromRecords(recs, "random")
	if err != nil {
		panic(err)
	}
	return p
}

func TestInbreedingMatchesTabular(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for rep := 0; rep < 20; rep++ {
		p := randomPedigree(rng, 120)
		a := tabularA(p)
		f := p.Inbreeding()
		var pairs [][2]int
		for k := 0; k < 200; k++ {
			pairs = append(pairs, [2]int{rng.IntN(p.Len()), rng.IntN(p.Len())})
		}
		co, err := p.Coancestry(pairs, nil)
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < p.Len(); i++ {
			if math.Abs(f[i]-(a[i][i]-1)) > 1e-10 {
				t.Fatalf("rep %d: F(%s) = %v, tabular %v", rep, p.ID(i), f[i], a[i][i]-1)
			}
		}
		for k, pr := range pairs {
			if w := a[pr[0]][pr[1]] / 2; math.Abs(co[k]-w) > 1e-10 {
				t.Fatalf("rep %d: coancestry(%s,%s) = %v, tabular %v", rep, p.ID(pr[0]), p.ID(pr[1]), co[k], w)
			}
		}
	}
}

func TestReadErrors(t *testing.T) {
	tests := []struct {
		name, text string
		want       error
		line       int
	}{
		{"duplicate", "a\t0\t0\nb\t0\t0\na\t0\t0\n", ErrDuplicate, 3},
		{"self_parent", "a\t0\t0\nb\tb\ta\n", ErrLoop, 2},
		{"two_cycle", "a\tb\t0\nb\ta\t0\n", ErrLoop, 0},
		{"too_few_fields", "a\t0\t0\nb\t0\n", ErrMalformed, 2},
		{"bad_sex", "a\t0\t0\tX\n", ErrMalformed, 1},
		{"unknown_id", "0\ta\tb\n", ErrMalformed, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Read(strings.NewReader(tc.text), "ped.tsv")
			if !errors.Is(err, tc.want) {
				t.Fatalf("err = %v, want %v", err, tc.want)
			}
			var pe *Error
			if !errors.As(err, &pe) {
				t.Fatalf("err %T is not *Error", err)
			}
			if tc.line > 0 && pe.Line != tc.line {
				t.Errorf("line = %d, want %d (%v)", pe.Line, tc.line, err)
			}
			if pe.Line == 0 || !strings.HasPrefix(err.Error(), fmt.Sprintf("ped.tsv:%d: ", pe.Line)) {
				t.Errorf("message %q does not start with file:line", err)
			}
		})
	}
}

func TestReadByteOrderMark(t *testing.T) {
	p := mustRead(t, "\xef\xbb\xbfid\tsire\tdam\nk\ts\td\n")
	if p.Len() != 3 {
		t.Errorf("Len = %d, want 3: the header behind a byte order mark was read as an animal", p.Len())
	}
}

func TestReadFormats(t *testing.T) {
	// Header, comments, CRLF, space-separated lines, sex column, parent-only founders.
	p := mustRead(t, "# herd book\r\nid sire dam sex\r\nk1 s9 d9 F\r\nk2\ts9\td9\tmale\r\n\r\n")
	if p.Len() != 4 {
		t.Fatalf("Len = %d, want 4 (two founders added)", p.Len())
	}
	i, _ := p.Index("k2")
	if p.SexOf(i) != SexMale || p.ID(p.Sire(i)) != "s9" || p.ID(p.Dam(i)) != "d9" {
		t.Errorf("k2: sex %v sire %d dam %d", p.SexOf(i), p.Sire(i), p.Dam(i))
	}
	for j := 0; j < p.Len(); j++ {
		if s := p.Sire(j); s >= j {
			t.Errorf("animal %s sorted before its sire", p.ID(j))
		}
		if d := p.Dam(j); d >= j {
			t.Errorf("animal %s sorted before its dam", p.ID(j))
		}
	}
}

func FuzzRead(f *testing.F) {
	f.Add("a\t0\t0\nb\ta\t0\nc\ta\tb\n")
	f.Add("x\tb\tg\nb\ts\td\ng\ts\td\n")
	f.Add("id\tsire\tdam\n1\t0\t0\n2\t1\t1\n")
	f.Fuzz(func(t *testing.T, text string) {
		p, err := Read(strings.NewReader(text), "fuzz")
		if err != nil {
			var pe *Error
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not *Error", err)
			}
			return
		}
		f := p.Inbreeding()
		for i, v := range f {
			if v < -1e-9 || v > 1+1e-9 || math.IsNaN(v) {
				t.Fatalf("F(%s) = %v out of [0,1]", p.ID(i), v)
			}
		}
	})
}

func TestReadPairs(t *testing.T) {
	p := mustRead(t, "s\t0\t0\nd\t0\t0\nb\ts\td\ng\ts\td\n")
	pairs, err := p.ReadPairs(strings.NewReader("id_a id_b\nb g\n# note\ns\tb\n"), "pairs.tsv")
	if err != nil {
		t.Fatal(err)
	}
	co, _ := p.Coancestry(pairs, nil)
	// Full sibs 1/4, parent-offspring 1/4 (common practice).
	if len(co) != 2 || co[0] != 0.25 || co[1] != 0.25 {
		t.Errorf("coancestries %v, want [0.25 0.25]", co)
	}
	_, err = p.ReadPairs(strings.NewReader("b\tg\nb\tzz\n"), "pairs.tsv")
	if !errors.Is(err, ErrUnknownID) || !strings.HasPrefix(err.Error(), "pairs.tsv:2:") {
		t.Errorf("unknown id error = %v", err)
	}
}

// The sire-grouped indirect method must agree with the Meuwissen-Luo trace
// (and so with the tabular method checked above) on random pedigrees with
// selfing, sire-daughter and other close matings.
func TestBySireMatchesML(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for rep := 0; rep < 30; rep++ {
		p := randomPedigree(rng, 300)
		fML, dML := p.inbreedingD()
		fS, dS := p.inbreedingBySire()
		for i := range fML {
			if math.Abs(fML[i]-fS[i]) > 1e-12 || math.Abs(dML[i]-dS[i]) > 1e-12 {
				t.Fatalf("rep %d: %s: F %v vs %v, D %v vs %v", rep, p.ID(i), fML[i], fS[i], dML[i], dS[i])
			}
		}
	}
	recs := generatedHerd(20000, 2000, 20, 0.1, 9)
	p, err := FromRecords(recs, "generated")
	if err != nil {
		t.Fatal(err)
	}
	fML, _ := p.inbreedingD()
	fS, _ := p.inbreedingBySire()
	for i := range fML {
		if math.Abs(fML[i]-fS[i]) > 1e-12 {
			t.Fatalf("generated herd: %s: F %v vs %v", p.ID(i), fML[i], fS[i])
		}
	}
}

func TestSexConflicts(t *testing.T) {
	p := mustRead(t, "b\t0\t0\tF\nd\t0\t0\tF\nk\tb\td\tM\nj\tk\tk\tM\n")
	got := p.SexConflicts()
	want := []string{
		`test.tsv:3: sire "b" of "k" is recorded as female`,
		`test.tsv:4: dam "k" of "j" is recorded as male`,
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("SexConflicts() =\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

func FuzzReadPairs(f *testing.F) {
	f.Add("b\tg\n# c\ns b\n")
	f.Add("id_a id_b\nzz b\n")
	p := mustRead(f, "s\t0\t0\nd\t0\t0\nb\ts\td\ng\ts\td\n")
	f.Fuzz(func(t *testing.T, text string) {
		pairs, err := p.ReadPairs(strings.NewReader(text), "fuzz")
		if err != nil {
			var pe *Error
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not *Error", err)
			}
			return
		}
		co, err := p.Coancestry(pairs, nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range co {
			if c < 0 || c > 1 {
				t.Fatalf("coancestry %v out of [0, 1]", c)
			}
		}
	})
}
