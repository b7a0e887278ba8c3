// Package metrics holds the statistics gainsay reports about itself: classification metrics with their
// confusion matrix, calibration, threshold sweeps, average precision, proportion intervals, and the
// rationale metrics of ERASER. Definitions follow scikit-learn and statsmodels, which the tests use as
// references (scripts/reference/metrics_reference.py).
package metrics

import (
	"cmp"
	"math"
	"slices"
)

// Confusion is a confusion matrix: Counts[true][predicted] over Labels.
type Confusion struct {
	Labels []string
	Counts [][]int
}

// NewConfusion counts pairs of true and predicted label indexes.
func NewConfusion(labels []string, truth, pred []int) Confusion {
	c := Confusion{Labels: labels, Counts: make([][]int, len(labels))}
	for i := range c.Counts {
		c.Counts[i] = make([]int, len(labels))
	}
	for i := range truth {
		c.Counts[truth[i]][pred[i]]++
	}
	return c
}

// Total is the number of examples.
func (c Confusion) Total() int {
	n := 0
	for _, row := range c.Counts {
		for _, v := range row {
			n += v
		}
	}
	return n
}

// Accuracy is the share of examples on the diagonal.
func (c Confusion) Accuracy() float64 {
	d := 0
	for i := range c.Counts {
		d += c.Counts[i][i]
	}
	return ratio(d, c.Total())
}

// ClassScores are precision, recall, F1 and support of one class (scikit-learn's
// precision_recall_fscore_support with zero_division=0).
type ClassScores struct {
	Label                 string
	Precision, Recall, F1 float64
	Support               int
}

// PerClass returns the scores of every label.
func (c Confusion) PerClass() []ClassScores {
	out := make([]ClassScores, len(c.Labels))
	for k := range c.Labels {
		tp, predicted, actual := c.Counts[k][k], 0, 0
		for i := range c.Labels {
			predicted += c.Counts[i][k]
			actual += c.Counts[k][i]
		}
		p, r := ratio(tp, predicted), ratio(tp, actual)
		out[k] = ClassScores{Label: c.Labels[k], Precision: p, Recall: r, F1: f1(p, r), Support: actual}
	}
	return out
}

// MacroF1 is the unweighted mean of the per-class F1.
func (c Confusion) MacroF1() float64 {
	s := 0.0
	pc := c.PerClass()
	for _, x := range pc {
		s += x.F1
	}
	return s / float64(len(pc))
}

func ratio(a, b int) float64 {
	if b == 0 {
		return 0
	}
	return float64(a) / float64(b)
}

func f1(p, r float64) float64 {
	if p+r == 0 {
		return 0
	}
	return 2 * p * r / (p + r)
}

// ECE is the expected calibration error with equal-width bins over the confidence (the probability of
// the predicted class): sum over bins of |accuracy - mean confidence| weighted by the bin's share.
// Bin b holds confidences in (b/n, (b+1)/n]; a confidence of exactly 0 goes to the first bin.
func ECE(confidence []float64, correct []bool, bins int) float64 {
	n := len(confidence)
	if n == 0 {
		return 0
	}
	sumConf := make([]float64, bins)
	sumAcc := make([]float64, bins)
	count := make([]int, bins)
	for i, c := range confidence {
		b := int(math.Ceil(c*float64(bins))) - 1
		b = min(max(b, 0), bins-1)
		sumConf[b] += c
		if correct[i] {
			sumAcc[b]++
		}
		count[b]++
	}
	e := 0.0
	for b := range bins {
		if count[b] == 0 {
			continue
		}
		e += math.Abs(sumAcc[b]-sumConf[b]) / float64(n)
	}
	return e
}

// AveragePrecision is scikit-learn's average_precision_score for binary labels: the sum over
// thresholds (each distinct score, high to low) of (R_n - R_{n-1}) P_n. Without positives it is
// undefined; scikit-learn warns, gainsay returns 0.
func AveragePrecision(positive []bool, score []float64) float64 {
	pos := countTrue(positive)
	if pos == 0 {
		return 0
	}
	ap, prevRecall := 0.0, 0.0
	thresholdSteps(positive, score, func(_ float64, tp, fp int) {
		recall := float64(tp) / float64(pos)
		ap += (recall - prevRecall) * float64(tp) / float64(tp+fp)
		prevRecall = recall
	})
	return ap
}

// thresholdSteps walks the distinct scores from high to low and calls step with each score used as a
// threshold and the true and false positives at it (ties counted together).
func thresholdSteps(positive []bool, score []float64, step func(threshold float64, tp, fp int)) {
	idx := sortedByScore(score)
	tp, fp := 0, 0
	for i := 0; i < len(idx); {
		j := i
		for j < len(idx) && score[idx[j]] == score[idx[i]] {
			if positive[idx[j]] {
				tp++
			} else {
				fp++
			}
			j++
		}
		step(score[idx[i]], tp, fp)
		i = j
	}
}

func countTrue(b []bool) int {
	n := 0
	for _, x := range b {
		if x {
			n++
		}
	}
	return n
}

// sortedByScore returns indexes ordered by descending score (stable).
func sortedByScore(score []float64) []int {
	idx := make([]int, len(score))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(score[b], score[a]) })
	return idx
}

// SweepPoint is precision, recall and F1 of "score >= Threshold" as the positive prediction.
type SweepPoint struct {
	Threshold float64 `json:"threshold"`
	Precision float64 `json:"precision"`
	Recall    float64 `json:"recall"`
	F1        float64 `json:"f1"`
	Flagged   int     `json:"flagged"`
}

// At evaluates one threshold.
func At(positive []bool, score []float64, threshold float64) SweepPoint {
	tp, fp, pos := 0, 0, 0
	for i, s := range score {
		if positive[i] {
			pos++
		}
		if s >= threshold {
			if positive[i] {
				tp++
			} else {
				fp++
			}
		}
	}
	p, r := ratio(tp, tp+fp), ratio(tp, pos)
	return SweepPoint{Threshold: threshold, Precision: p, Recall: r, F1: f1(p, r), Flagged: tp + fp}
}

// Sweep evaluates the thresholds 0.05, 0.10, ..., 0.95.
func Sweep(positive []bool, score []float64) []SweepPoint {
	var out []SweepPoint
	for k := 1; k <= 19; k++ {
		out = append(out, At(positive, score, float64(k)*0.05))
	}
	return out
}

// ThresholdForPrecision finds, among all distinct scores used as thresholds, the one with the highest
// recall whose precision is at least target (the lowest such threshold on ties). ok is false when no
// threshold reaches the target.
func ThresholdForPrecision(positive []bool, score []float64, target float64) (SweepPoint, bool) {
	pos := countTrue(positive)
	var best SweepPoint
	found := false
	thresholdSteps(positive, score, func(t float64, tp, fp int) {
		p, r := ratio(tp, tp+fp), ratio(tp, pos)
		if p >= target && (!found || r >= best.Recall) {
			best = SweepPoint{Threshold: t, Precision: p, Recall: r, F1: f1(p, r), Flagged: tp + fp}
			found = true
		}
	})
	return best, found
}
