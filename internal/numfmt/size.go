package numfmt

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// ParseSize reads a byte count: "512M", "1G", "1.5G", "200000000" or "64KiB".
func ParseSize(v string) (int64, error) {
	t := strings.TrimSpace(v)
	u := strings.ToUpper(t)
	u = strings.TrimSuffix(strings.TrimSuffix(u, "B"), "I")
	mult := 1.0
	if u != "" {
		if i := strings.IndexByte("KMGT", u[len(u)-1]); i >= 0 {
			mult = math.Pow(1024, float64(i+1))
			u = u[:len(u)-1]
		}
	}
	x, err := strconv.ParseFloat(strings.TrimSpace(u), 64)
	if err != nil || !(x > 0) || math.IsInf(x, 0) || x*mult >= math.MaxInt64 {
		return 0, fmt.Errorf("%q is not a size: want a positive number of bytes, optionally with K, M, G or T (e.g. 512M, 1G)", v)
	}
	n := int64(x * mult)
	if n < 1 {
		return 0, fmt.Errorf("%q is less than one byte", v)
	}
	return n, nil
}

// FormatSize writes n the way ParseSize reads it, with the largest exact
// unit.
func FormatSize(n int64) string {
	for i, u := range []string{"T", "G", "M", "K"} {
		m := int64(1) << (10 * (4 - i))
		if n >= m && n%m == 0 {
			return strconv.FormatInt(n/m, 10) + u
		}
	}
	return strconv.FormatInt(n, 10)
}
