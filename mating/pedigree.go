package mating

import (
	"fmt"

	"fgauge/stats/pedigree"
)

// PedigreeCoancestry returns the pedigree coancestry (kinship) of every
// sire x dam pair: the coefficient of Meuwissen & Luo (1992, Genetics
// Selection Evolution 24:305-313) as stats/pedigree computes it for
// `fgauge pedigree --pairs` (columns of A by Colleau 2002). Its base
// population is the pedigree's founders, assumed unrelated and not inbred.
//
// An animal absent from the pedigree is a founder of unknown parents: its
// coancestry with every other animal is 0. Such animals are returned in
// absent (sires first, then dams, by id) so the caller can warn.
func PedigreeCoancestry(ped *pedigree.Pedigree, sires, dams []string) (m *Matrix, absent []string, err error) {
	m = &Matrix{Sires: len(sires), Dams: len(dams), V: make([]float64, len(sires)*len(dams))}
	index := func(ids []string) []int {
		out := make([]int, len(ids))
		for i, id := range ids {
			j, ok := ped.Index(id)
			if !ok {
				j = -1
				absent = append(absent, id)
			}
			out[i] = j
		}
		return out
	}
	si, di := index(sires), index(dams)
	var pairs [][2]int
	var at []int
	for s, a := range si {
		for d, b := range di {
			if a >= 0 && b >= 0 {
				pairs = append(pairs, [2]int{a, b})
				at = append(at, s*len(dams)+d)
			}
		}
	}
	co, err := ped.Coancestry(pairs, nil)
	if err != nil {
		return nil, nil, fmt.Errorf("mating: %w", err)
	}
	for k, v := range co {
		m.V[at[k]] = v
	}
	return m, absent, nil
}
