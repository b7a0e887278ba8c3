package rates

import (
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/profile"
)

func TestSummarize(t *testing.T) {
	f := func(ids ...string) []gainsay.Finding {
		var out []gainsay.Finding
		for _, id := range ids {
			out = append(out, gainsay.Finding{FactID: id, Fact: "fact " + id})
		}
		return out
	}
	recs := []gainsay.Record{
		{Verdict: gainsay.Contradiction, Findings: f("a", "a", "b"), Model: "m1", Threshold: 0.5},
		{Verdict: gainsay.Contradiction, Findings: f("b"), Model: "m1", Threshold: 0.5},
		{Verdict: gainsay.Consistent, Threshold: 0.5},
		{Verdict: gainsay.Failed, Threshold: 0.5},
	}
	s := Summarize("x", recs, []profile.Fact{{ID: "c", Text: "never broken"}, {ID: "a", Text: "fact a"}})
	assert.Equal(t, 4, s.Records)
	assert.Equal(t, 1, s.Errors)
	assert.Equal(t, 2, s.Overall.K)
	assert.Equal(t, 3, s.Overall.N, "error records are left out")
	assert.Equal(t, []string{"c", "a", "b"}, s.Facts, "profile facts first, then facts met in findings")
	assert.Equal(t, 1, s.PerFact["a"].K, "a reply counts once per fact")
	assert.Equal(t, 2, s.PerFact["b"].K)
	assert.Equal(t, 0, s.PerFact["c"].K)
	assert.Equal(t, "never broken", s.FactText["c"])
	assert.Equal(t, []string{"m1"}, s.Models)
	assert.Equal(t, []float64{0.5}, s.Thresholds)
	// Rate and interval: the Wilson interval of metrics (checked there against statsmodels).
	assert.InDelta(t, 2.0/3, s.Overall.Rate, 1e-12)
	assert.Less(t, s.Overall.CI.Low, s.Overall.Rate)
}

func TestCompare(t *testing.T) {
	ch := Compare(NewRate(48, 80), NewRate(56, 70))
	// Newcombe (1998) worked example 56/70 - 48/80: 0.0524 to 0.3339.
	assert.InDelta(t, 0.2, ch.Diff, 1e-12)
	assert.InDelta(t, 0.0524, ch.CI.Low, 5e-5)
	assert.InDelta(t, 0.3339, ch.CI.High, 5e-5)
	assert.True(t, ch.Clear)
	assert.False(t, Compare(NewRate(3, 4), NewRate(1, 4)).Clear)
}
