// Package numfmt is the one formatter of numbers in fgauge's outputs:
// tables print undefined values (NaN, infinities) as NA and every other
// float in shortest round-trip form; run.json prints them as null.
//
// It is shared by stats, roh and the command so that no output formats a
// number its own way. It does not parse tables.
package numfmt

import (
	"bytes"
	"encoding/json"
	"math"
	"strconv"
)

// NA is written in tables for an undefined value.
const NA = "NA"

// Float formats x in shortest round-trip form, or NA when x is NaN or
// infinite.
func Float(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return NA
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// AppendFloat appends Float(x) to b without allocating.
func AppendFloat(b []byte, x float64) []byte {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return append(b, NA...)
	}
	return strconv.AppendFloat(b, x, 'g', -1, 64)
}

// JSONFloat is a float64 in run.json: null when undefined. Reading
// accepts a number, null or the string "NA" (both undefined: NaN).
type JSONFloat float64

// MarshalJSON writes x as encoding/json writes a float64, or null.
func (x JSONFloat) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

// UnmarshalJSON reads a number, null or a string holding a number or NA.
func (x *JSONFloat) UnmarshalJSON(b []byte) error {
	b = bytes.TrimSpace(b)
	if bytes.Equal(b, []byte("null")) {
		*x = JSONFloat(math.NaN())
		return nil
	}
	if len(b) > 0 && b[0] == '"' {
		var s string
		if err := json.Unmarshal(b, &s); err != nil {
			return err
		}
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			v = math.NaN()
		}
		*x = JSONFloat(v)
		return nil
	}
	var f float64
	if err := json.Unmarshal(b, &f); err != nil {
		return err
	}
	*x = JSONFloat(f)
	return nil
}
