package sexcheck

import (
	"errors"
	"strings"
	"testing"

	"fgauge/stats/pedigree"
)

func TestReadList(t *testing.T) {
	in := "sample\tsex\n# comment\nnanny_01\tF\nbuck_02\tmale\n\nkid_03\t0\nkid_04\tNA\nkid_05\t.\nkid_06\t2\nkid_07\tunknown\nkid_08 M\n"
	l, err := ReadList(strings.NewReader(in), "herd.sex")
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]Sex{"nanny_01": Female, "buck_02": Male, "kid_03": Unknown, "kid_04": Unknown, "kid_05": Unknown, "kid_06": Female, "kid_07": Unknown, "kid_08": Male}
	if len(l.Samples) != len(want) {
		t.Fatalf("read %d samples, want %d", len(l.Samples), len(want))
	}
	for i, s := range l.Samples {
		if l.Sexes[i] != want[s] {
			t.Errorf("%s: %v, want %v", s, l.Sexes[i], want[s])
		}
	}
	if l.Lines[0] != 3 || l.Lines[7] != 11 {
		t.Errorf("lines %v", l.Lines)
	}
}

func TestReadListErrors(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want error
		line int
	}{
		{"a\tF\nb\tX\n", ErrBadSex, 2},
		{"a\tF\nb\tmale\na\tM\n", ErrDuplicate, 3},
		{"a\tF\tx\n", ErrMalformed, 1},
		{"a\n", ErrMalformed, 1},
		{"sample\tsex\nb\tfemme\n", ErrBadSex, 2},
		{"sample\tgender\n", ErrBadSex, 1}, // only "sex" makes a header
	} {
		_, err := ReadList(strings.NewReader(tc.in), "s.txt")
		var e *Error
		if !errors.Is(err, tc.want) || !errors.As(err, &e) || e.Line != tc.line || e.File != "s.txt" {
			t.Errorf("%q: %v, want %v at line %d", tc.in, err, tc.want, tc.line)
		}
	}
}

func TestForSamples(t *testing.T) {
	l, err := ReadList(strings.NewReader("a\tM\nghost\tF\nb\tF\n"), "s.txt")
	if err != nil {
		t.Fatal(err)
	}
	data := []string{"b", "c", "a"}
	_, err = l.ForSamples(data, AbsentIsError)
	var e *Error
	if !errors.Is(err, ErrUnknownSample) || !errors.As(err, &e) || e.Line != 2 || !strings.Contains(err.Error(), "s.txt:2") {
		t.Fatalf("strict: %v", err)
	}
	m, err := l.ForSamples(data, AbsentIsWarning)
	if err != nil {
		t.Fatal(err)
	}
	if m.Sexes[0] != Female || m.Sexes[1] != Unknown || m.Sexes[2] != Male || m.Listed != 2 || m.Unlisted != 1 ||
		len(m.Absent) != 1 || m.Absent[0] != "s.txt:2: ghost" {
		t.Fatalf("lenient: %+v", m)
	}
}

func TestFromPedigree(t *testing.T) {
	p, err := pedigree.Read(strings.NewReader("id\tsire\tdam\tsex\nbuck_1\t0\t0\tM\nnanny_1\t0\t0\tF\nkid_1\tbuck_1\tnanny_1\t0\n"), "herd_book.tsv")
	if err != nil {
		t.Fatal(err)
	}
	sx, ok := FromPedigree(p, []string{"kid_1", "nanny_1", "stray", "buck_1"})
	if !ok || sx[0] != Unknown || sx[1] != Female || sx[2] != Unknown || sx[3] != Male {
		t.Fatalf("%v %v", sx, ok)
	}
	p2, _ := pedigree.Read(strings.NewReader("kid_1\tbuck_1\tnanny_1\n"), "herd_book_no_sex.tsv")
	if _, ok := FromPedigree(p2, []string{"kid_1"}); ok {
		t.Fatal("pedigree without a sex column reported as having one")
	}
}

func FuzzReadList(f *testing.F) {
	f.Add("sample\tsex\na\tM\nb\tF\n")
	f.Add("a 1\nb 2\nc NA\n")
	f.Add("\xef\xbb\xbfa\tfemale\r\n")
	f.Fuzz(func(t *testing.T, s string) {
		l, err := ReadList(strings.NewReader(s), "fuzz")
		if err != nil {
			var e *Error
			if !errors.As(err, &e) || e.Line < 1 {
				t.Fatalf("error without position: %v", err)
			}
			return
		}
		seen := map[string]bool{}
		for i, name := range l.Samples {
			if name == "" || seen[name] || l.Sexes[i] > Female {
				t.Fatalf("bad entry %q %v", name, l.Sexes[i])
			}
			seen[name] = true
		}
	})
}

func TestParseSex(t *testing.T) {
	for in, want := range map[string]Sex{"M": Male, "male": Male, "1": Male, "MALE": Male, "f": Female, "Female": Female, "2": Female,
		"0": Unknown, "NA": Unknown, ".": Unknown, "unknown": Unknown} {
		if got, ok := ParseSex(in); !ok || got != want {
			t.Errorf("%q: %v %v", in, got, ok)
		}
	}
	for _, in := range []string{"", "3", "x", "-", "mf"} {
		if _, ok := ParseSex(in); ok {
			t.Errorf("%q accepted", in)
		}
	}
}
