// Package rates counts how often replies break character: the contradiction rate of a set of records,
// overall and per fact, with Wilson 95% intervals, and the change between two sets with Newcombe's
// interval for a difference of proportions. compare and report both use it.
package rates

import (
	"slices"

	"github.com/gainsay/gainsay"
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

// Counter accumulates a Summary one record at a time, so that large files need not be held in memory.
type Counter struct {
	s       Summary
	k, n    int
	perFact map[string]int
}

// NewCounter starts a summary. Facts in known (e.g. a profile's) are listed even when no finding names
// them, so that a fact never broken still shows with rate 0.
func NewCounter(name string, known []profile.Fact) *Counter {
	c := &Counter{s: Summary{Name: name, PerFact: map[string]Rate{}, FactText: map[string]string{}}, perFact: map[string]int{}}
	for _, f := range known {
		c.s.Facts = append(c.s.Facts, f.ID)
		c.s.FactText[f.ID] = f.Text
	}
	return c
}

// Add counts one record. A reply counts for a fact when at least one of its findings names the fact.
func (c *Counter) Add(r *gainsay.Record) {
	s := &c.s
	s.Records++
	if r.Model != "" && !slices.Contains(s.Models, r.Model) {
		s.Models = append(s.Models, r.Model)
	}
	if t := float64(r.Threshold); !slices.Contains(s.Thresholds, t) {
		s.Thresholds = append(s.Thresholds, t)
	}
	if r.Verdict == gainsay.Failed {
		s.Errors++
		return
	}
	c.n++
	if r.Verdict == gainsay.Contradiction {
		c.k++
	}
	seen := map[string]bool{}
	for _, f := range r.Findings {
		if seen[f.FactID] {
			continue
		}
		seen[f.FactID] = true
		c.perFact[f.FactID]++
		if !slices.Contains(s.Facts, f.FactID) {
			s.Facts = append(s.Facts, f.FactID)
		}
		if s.FactText[f.FactID] == "" {
			s.FactText[f.FactID] = f.Fact
		}
	}
}

// Summary returns the counts so far.
func (c *Counter) Summary() Summary {
	s := c.s
	s.Overall = NewRate(c.k, c.n)
	s.PerFact = make(map[string]Rate, len(s.Facts))
	for _, id := range s.Facts {
		s.PerFact[id] = NewRate(c.perFact[id], c.n)
	}
	return s
}

// Summarize counts a set of records held in memory.
func Summarize(name string, recs []gainsay.Record, known []profile.Fact) Summary {
	c := NewCounter(name, known)
	for i := range recs {
		c.Add(&recs[i])
	}
	return c.Summary()
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

// FactRate is the summary's rate for a fact: 0 of its replies when no finding named the fact.
func (s Summary) FactRate(id string) Rate {
	if r, ok := s.PerFact[id]; ok {
		return r
	}
	return NewRate(0, s.Overall.N)
}

// Facts lists the fact ids of several summaries, in order of first appearance.
func Facts(sums []Summary) []string {
	var out []string
	for _, s := range sums {
		for _, f := range s.Facts {
			if !slices.Contains(out, f) {
				out = append(out, f)
			}
		}
	}
	return out
}
