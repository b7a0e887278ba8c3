package metrics

import "math"

// Z95 is the standard normal quantile for a two-sided 95% interval.
const Z95 = 1.959963984540054

// Interval is a confidence interval.
type Interval struct {
	Low  float64 `json:"low"`
	High float64 `json:"high"`
}

// Wilson is the Wilson score interval for k successes in n trials (Wilson 1927), as statsmodels'
// proportion_confint(method="wilson"). For n = 0 it is [0, 1].
func Wilson(k, n int, z float64) Interval {
	if n == 0 {
		return Interval{0, 1}
	}
	p := float64(k) / float64(n)
	nf := float64(n)
	denom := 1 + z*z/nf
	center := (p + z*z/(2*nf)) / denom
	half := z * math.Sqrt(p*(1-p)/nf+z*z/(4*nf*nf)) / denom
	return Interval{max(0, center-half), min(1, center+half)}
}

// NewcombeDiff is the interval for the difference p1 - p2 of two independent proportions by
// Newcombe's hybrid score method (Newcombe 1998, method 10), built from the two Wilson intervals; as
// statsmodels' confint_proportions_2indep(compare="diff", method="newcomb").
func NewcombeDiff(k1, n1, k2, n2 int, z float64) Interval {
	p1, p2 := ratio(k1, n1), ratio(k2, n2)
	a, b := Wilson(k1, n1, z), Wilson(k2, n2, z)
	d := p1 - p2
	low := d - math.Sqrt((p1-a.Low)*(p1-a.Low)+(b.High-p2)*(b.High-p2))
	high := d + math.Sqrt((a.High-p1)*(a.High-p1)+(p2-b.Low)*(p2-b.Low))
	return Interval{low, high}
}
