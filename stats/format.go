package stats

import (
	"math"
	"strconv"
)

func itoa(i int64) string { return strconv.FormatInt(i, 10) }

// ftoa formats x in shortest round-trip form, or NA when undefined.
func ftoa(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "NA"
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// jsonFloat returns x, or nil (JSON null) when undefined.
func jsonFloat(x float64) any {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return x
}
