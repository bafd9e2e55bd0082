package scanrun

import (
	"fgauge/internal/numfmt"
	"fgauge/stats/pedigree"
)

// pedigreeColumn returns f_pedigree for each sample, "NA" for samples the
// pedigree does not list.
func pedigreeColumn(ped *pedigree.Pedigree, samples []string) []string {
	f := ped.Inbreeding()
	byID := make(map[string]float64, ped.Len())
	for i := range f {
		byID[ped.ID(i)] = f[i]
	}
	col := make([]string, len(samples))
	for i, s := range samples {
		if v, ok := byID[s]; ok {
			col[i] = numfmt.Float(v)
		} else {
			col[i] = numfmt.NA
		}
	}
	return col
}
