package stats

import (
	"strconv"

	"fgauge/internal/numfmt"
)

func itoa(i int64) string { return strconv.FormatInt(i, 10) }

// ftoa formats x in shortest round-trip form, or NA when undefined.
func ftoa(x float64) string { return numfmt.Float(x) }
