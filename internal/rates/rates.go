// Package rates counts how often replies break character: the contradiction rate of a set of records,
// overall and per fact, with Wilson 95% intervals, and the change between two sets with Newcombe's
// interval for a difference of proportions. compare and report both use it.
package rates

import (
	"slices"

	"github.com/gainsay/gainsay/internal/metrics"
	"github.com/gainsay/gainsay/profile"
)

// Rate is k contradicting replies out of n scored replies (error records left out).
type Rate struct {
	K    int              `json:"contradictions"`
	N    int              `json:"replies"`
	Rate float64          `json:"rate"`
	CI   metrics.Interval `json:"ci95"`
}

// NewRate computes the rate and its Wilson 95% interval.
func NewRate(k, n int) Rate {
	r := Rate{K: k, N: n, CI: metrics.Wilson(k, n, metrics.Z95)}
	if n > 0 {
		r.Rate = float64(k) / float64(n)
	}
	return r
}

// Summary is one set of records (one output file, e.g. one checkpoint).
type Summary struct {
	Name    string          `json:"name"`
	Records int             `json:"records"`
	Errors  int             `json:"errors"`
	Overall Rate            `json:"overall"`
	PerFact map[string]Rate `json:"per_fact"`
	// Facts lists the fact ids seen, in order of first appearance.
	Facts      []string          `json:"facts"`
	FactText   map[string]string `json:"fact_text"`
	Models     []string          `json:"models"`
	Thresholds []float64         `json:"thresholds"`
}

// Summarize counts a set of records. A reply counts for a fact when at least one finding names it.
// Facts that no finding names are added from known (e.g. a profile's fact ids), so that a fact never
// broken still shows with rate 0.
func Summarize(name string, recs []profile.Record, known []profile.Fact) Summary {
	s := Summary{Name: name, Records: len(recs), PerFact: map[string]Rate{}, FactText: map[string]string{}}
	k, n := 0, 0
	perFact := map[string]int{}
	for _, f := range known {
		s.Facts = append(s.Facts, f.ID)
		s.FactText[f.ID] = f.Text
	}
	for _, r := range recs {
		if r.Model != "" && !slices.Contains(s.Models, r.Model) {
			s.Models = append(s.Models, r.Model)
		}
		if t := float64(r.Threshold); !slices.Contains(s.Thresholds, t) {
			s.Thresholds = append(s.Thresholds, t)
		}
		if r.Verdict == profile.Failed {
			s.Errors++
			continue
		}
		n++
		if r.Verdict == profile.Contradiction {
			k++
		}
		seen := map[string]bool{}
		for _, f := range r.Findings {
			if seen[f.FactID] {
				continue
			}
			seen[f.FactID] = true
			perFact[f.FactID]++
			if !slices.Contains(s.Facts, f.FactID) {
				s.Facts = append(s.Facts, f.FactID)
			}
			if s.FactText[f.FactID] == "" {
				s.FactText[f.FactID] = f.Fact
			}
		}
	}
	s.Overall = NewRate(k, n)
	for _, id := range s.Facts {
		s.PerFact[id] = NewRate(perFact[id], n)
	}
	return s
}

// Change is the difference of two rates, later minus earlier, with Newcombe's 95% interval.
type Change struct {
	Diff float64          `json:"diff"`
	CI   metrics.Interval `json:"ci95"`
	// Clear is true when the interval excludes 0.
	Clear bool `json:"clear"`
}

// Compare returns later - earlier.
func Compare(earlier, later Rate) Change {
	ci := metrics.NewcombeDiff(later.K, later.N, earlier.K, earlier.N, metrics.Z95)
	return Change{Diff: later.Rate - earlier.Rate, CI: ci, Clear: ci.Low > 0 || ci.High < 0}
}
