package stats

import (
	"math"
	"testing"
)

// The lambda divisor is the median of chi-square(1):
// scipy 1.x stats.chi2.ppf(0.5, 1) = 0.454936423119572 (/usr/bin/python3).
func TestLambdaDivisor(t *testing.T) {
	if math.Abs(lambdaDivisor-0.454936423119572) > 1e-14 {
		t.Errorf("lambdaDivisor = %.17g, want 0.454936423119572 (scipy chi2.ppf(0.5, 1))", lambdaDivisor)
	}
}
