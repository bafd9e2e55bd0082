package genedrop

import (
	"fmt"
	"math/rand/v2"
	"strconv"
	"strings"

	"fgauge/stats/pedigree"
)

// Design is a built-in mating design. Kind is one of DesignKinds; the
// numbers are used by the kinds that need them.
type Design struct {
	Kind string
	// Generations: of selfing ("selfing"), of repeated full-sib mating
	// ("full_sib"), or of a closed herd ("closed_herd"). Default 1 (closed
	// herd: 8).
	Generations int
	// HerdSize animals per generation and Sires used per generation in a
	// closed herd (defaults 30 and 2).
	HerdSize, Sires int
}

// DesignKinds lists the built-in designs and what their focal animal is.
var DesignKinds = map[string]string{
	"selfing":          "a line selfed for the given t generations (F = 1 - (1/2)^t)",
	"full_sib":         "offspring after the given generations of full-sib mating (F = 1/4, 3/8, 1/2, ...)",
	"half_sib":         "offspring of a half-sib mating (F = 1/8)",
	"first_cousin":     "offspring of a first-cousin mating (F = 1/16)",
	"parent_offspring": "offspring of a sire mated to his daughter (F = 1/4)",
	"closed_herd":      "closed_herd:generations:herd_size:sires, a closed herd (half males) bred from a few random sires each generation (default 8:30:2)",
}

// ParseDesign parses "kind[:generations[:herd_size[:sires]]]", e.g.
// "full_sib:2", "selfing:5", "closed_herd:10:40:2".
func ParseDesign(s string) (Design, error) {
	f := strings.Split(strings.TrimSpace(s), ":")
	d := Design{Kind: f[0]}
	if _, ok := DesignKinds[d.Kind]; !ok {
		return d, fmt.Errorf("%w: unknown design %q", ErrConfig, f[0])
	}
	nums := []*int{&d.Generations, &d.HerdSize, &d.Sires}
	// selfing and full_sib take generations; closed_herd takes generations,
	// herd size and sires; the single matings take no number.
	switch d.Kind {
	case "selfing", "full_sib":
		nums = nums[:1]
	case "closed_herd":
	default:
		nums = nums[:0]
	}
	if len(f)-1 > len(nums) {
		return d, fmt.Errorf("%w: design %q has too many numbers (%s takes %d)", ErrConfig, s, d.Kind, len(nums))
	}
	for i, v := range f[1:] {
		n, err := strconv.Atoi(v)
		if err != nil || n < 1 || n > 1_000_000 {
			return d, fmt.Errorf("%w: design %q: %q is not a positive whole number", ErrConfig, s, v)
		}
		*nums[i] = n
	}
	return d, d.normalize()
}

func (d *Design) normalize() error {
	if _, ok := DesignKinds[d.Kind]; !ok {
		return fmt.Errorf("%w: unknown design %q", ErrConfig, d.Kind)
	}
	if d.Generations == 0 {
		d.Generations = 1
		if d.Kind == "closed_herd" {
			d.Generations = 8
		}
	}
	if d.HerdSize == 0 {
		d.HerdSize = 30
	}
	if d.Sires == 0 {
		d.Sires = 2
	}
	if d.Kind == "closed_herd" && (d.HerdSize < 2 || d.Sires > d.HerdSize/2) {
		return fmt.Errorf("%w: closed herd needs at least 2 animals per generation and no more sires than males", ErrConfig)
	}
	return nil
}

// String gives the design in the form ParseDesign reads.
func (d Design) String() string {
	switch d.Kind {
	case "selfing", "full_sib":
		return fmt.Sprintf("%s:%d", d.Kind, d.Generations)
	case "closed_herd":
		return fmt.Sprintf("%s:%d:%d:%d", d.Kind, d.Generations, d.HerdSize, d.Sires)
	}
	return d.Kind
}

// member is one animal of a built pedigree with its labels for the truth.
type member struct {
	rec    pedigree.Record
	design string
	class  string
	rep    int
}

// build returns the animals of one copy of the design; prefix makes ids
// unique. rng is only used by closed_herd.
func (d Design) build(prefix string, rng *rand.Rand) []member {
	var out []member
	add := func(id, sire, dam string, sex pedigree.Sex, class string) string {
		full := prefix + id
		r := pedigree.Record{ID: full, Sex: sex}
		if sire != "" {
			r.Sire = prefix + sire
		}
		if dam != "" {
			r.Dam = prefix + dam
		}
		out = append(out, member{rec: r, design: d.String(), class: class})
		return id
	}
	const m, f = pedigree.SexMale, pedigree.SexFemale
	switch d.Kind {
	case "selfing":
		prev := add("s0", "", "", pedigree.SexUnknown, "founder")
		for g := 1; g <= d.Generations; g++ {
			class := "selfed_line"
			if g == d.Generations {
				class = "focal"
			}
			prev = add("s"+strconv.Itoa(g), prev, prev, pedigree.SexUnknown, class)
		}
	case "full_sib":
		sire := add("sire", "", "", m, "founder")
		dam := add("dam", "", "", f, "founder")
		for g := 1; g <= d.Generations; g++ {
			b := add(fmt.Sprintf("g%d_buck", g), sire, dam, m, "parent")
			e := add(fmt.Sprintf("g%d_doe", g), sire, dam, f, "parent")
			sire, dam = b, e
		}
		add("focal", sire, dam, f, "focal")
	case "half_sib":
		s := add("sire", "", "", m, "founder")
		d1 := add("dam1", "", "", f, "founder")
		d2 := add("dam2", "", "", f, "founder")
		b := add("son", s, d1, m, "parent")
		e := add("daughter", s, d2, f, "parent")
		add("focal", b, e, f, "focal")
	case "first_cousin":
		gs := add("grandsire", "", "", m, "founder")
		gd := add("granddam", "", "", f, "founder")
		b := add("son", gs, gd, m, "parent")
		e := add("daughter", gs, gd, f, "parent")
		m1 := add("mate1", "", "", f, "founder")
		m2 := add("mate2", "", "", m, "founder")
		c1 := add("cousin1", b, m1, m, "parent")
		c2 := add("cousin2", m2, e, f, "parent")
		add("focal", c1, c2, f, "focal")
	case "parent_offspring":
		s := add("sire", "", "", m, "founder")
		dm := add("dam", "", "", f, "founder")
		e := add("daughter", s, dm, f, "parent")
		add("focal", s, e, f, "focal")
	case "closed_herd":
		var males, females []string
		for k := 0; k < d.HerdSize; k++ {
			sex, class := m, "founder"
			id := fmt.Sprintf("g0_%03d", k)
			if k%2 == 0 {
				males = append(males, add(id, "", "", sex, class))
			} else {
				females = append(females, add(id, "", "", f, class))
			}
		}
		for g := 1; g <= d.Generations; g++ {
			sires := make([]string, d.Sires)
			for k := range sires {
				sires[k] = males[rng.IntN(len(males))]
			}
			var nm, nf []string
			class := "herd_generation_" + strconv.Itoa(g)
			for k := 0; k < d.HerdSize; k++ {
				id := fmt.Sprintf("g%d_%03d", g, k)
				s := sires[rng.IntN(len(sires))]
				dm := females[rng.IntN(len(females))]
				if k%2 == 0 {
					nm = append(nm, add(id, s, dm, m, class))
				} else {
					nf = append(nf, add(id, s, dm, f, class))
				}
			}
			males, females = nm, nf
		}
	}
	return out
}
