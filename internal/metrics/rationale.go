package metrics

import "slices"

// Rationale metrics after ERASER (DeYoung et al. 2020, "ERASER: A Benchmark to Evaluate Rationalized
// NLP Models"), over the words of each instance's hypothesis.

// RationaleInstance is one instance: which words are gold, the attribution weight of every word, and
// which words the method picked as its rationale.
type RationaleInstance struct {
	Gold   []bool
	Weight []float64
	Picked []bool
}

// TokenPRF is token-level precision, recall and F1 of the picked words against the gold words, counted
// over all words of all instances (micro average).
func TokenPRF(in []RationaleInstance) (p, r, f float64) {
	tp, picked, gold := 0, 0, 0
	for _, x := range in {
		for i := range x.Gold {
			if x.Picked[i] {
				picked++
			}
			if x.Gold[i] {
				gold++
			}
			if x.Picked[i] && x.Gold[i] {
				tp++
			}
		}
	}
	p, r = ratio(tp, picked), ratio(tp, gold)
	return p, r, f1(p, r)
}

// MeanAUPRC is the average over instances of the average precision of the word weights against the
// gold words (ERASER's AUPRC for soft scores). Instances without gold words are skipped.
func MeanAUPRC(in []RationaleInstance) float64 {
	s, n := 0.0, 0
	for _, x := range in {
		if !slices.Contains(x.Gold, true) {
			continue
		}
		s += AveragePrecision(x.Gold, x.Weight)
		n++
	}
	if n == 0 {
		return 0
	}
	return s / float64(n)
}

// HitAt1 is the share of instances whose highest-weighted word (the first on ties) is gold. Instances
// without gold words are skipped.
func HitAt1(in []RationaleInstance) float64 {
	hits, n := 0, 0
	for _, x := range in {
		if len(x.Weight) == 0 || !slices.Contains(x.Gold, true) {
			continue
		}
		n++
		top := 0
		for i, w := range x.Weight {
			if w > x.Weight[top] {
				top = i
			}
		}
		if x.Gold[top] {
			hits++
		}
	}
	return ratio(hits, n)
}

// TopK picks the k highest-weighted words (the earlier word on ties).
func TopK(weight []float64, k int) []bool {
	idx := sortedByScore(weight)
	out := make([]bool, len(weight))
	for _, i := range idx[:min(k, len(idx))] {
		out[i] = true
	}
	return out
}
