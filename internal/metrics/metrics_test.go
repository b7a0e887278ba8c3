package metrics

import (
	"encoding/json"
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// testdata/reference.json holds fixed inputs and what scikit-learn (confusion_matrix,
// precision_recall_fscore_support, accuracy_score, average_precision_score) and statsmodels
// (proportion_confint wilson, confint_proportions_2indep newcomb) return for them; written by
// scripts/reference/metrics_reference.py, re-checked by the Python tests in CI.
type reference struct {
	Classification struct {
		Truth, Pred, Support  []int
		Confusion             [][]int
		Accuracy              float64
		Precision, Recall, F1 []float64
	}
	AveragePrecision []struct {
		Truth []int
		Score []float64
		AP    float64
	} `json:"average_precision"`
	Wilson []struct {
		K, N      int
		Low, High float64
	}
	Newcombe []struct {
		K1, N1, K2, N2 int
		Low, High      float64
	}
}

func loadReference(t *testing.T) reference {
	b, err := os.ReadFile("testdata/reference.json")
	require.NoError(t, err)
	var r reference
	require.NoError(t, json.Unmarshal(b, &r))
	return r
}

func TestAgainstScikitLearn(t *testing.T) {
	ref := loadReference(t)
	c := ref.Classification
	conf := NewConfusion([]string{"a", "b", "c"}, c.Truth, c.Pred)
	assert.Equal(t, c.Confusion, conf.Counts)
	assert.InDelta(t, c.Accuracy, conf.Accuracy(), 1e-12)
	for k, s := range conf.PerClass() {
		assert.InDelta(t, c.Precision[k], s.Precision, 1e-12, "precision %d", k)
		assert.InDelta(t, c.Recall[k], s.Recall, 1e-12, "recall %d", k)
		assert.InDelta(t, c.F1[k], s.F1, 1e-12, "f1 %d", k)
		assert.Equal(t, c.Support[k], s.Support)
	}
	require.NotEmpty(t, ref.AveragePrecision)
	for i, a := range ref.AveragePrecision {
		pos := make([]bool, len(a.Truth))
		for j, y := range a.Truth {
			pos[j] = y == 1
		}
		assert.InDelta(t, a.AP, AveragePrecision(pos, a.Score), 1e-12, "case %d", i)
	}
}

func TestAgainstStatsmodels(t *testing.T) {
	ref := loadReference(t)
	for _, w := range ref.Wilson {
		got := Wilson(w.K, w.N, Z95)
		assert.InDelta(t, w.Low, got.Low, 1e-9, "wilson %d/%d", w.K, w.N)
		assert.InDelta(t, w.High, got.High, 1e-9, "wilson %d/%d", w.K, w.N)
	}
	for _, d := range ref.Newcombe {
		got := NewcombeDiff(d.K1, d.N1, d.K2, d.N2, Z95)
		assert.InDelta(t, d.Low, got.Low, 1e-9, "newcombe %d/%d - %d/%d", d.K1, d.N1, d.K2, d.N2)
		assert.InDelta(t, d.High, got.High, 1e-9, "newcombe %d/%d - %d/%d", d.K1, d.N1, d.K2, d.N2)
	}
}

func TestNewcombePublishedExample(t *testing.T) {
	// Newcombe (1998), Statistics in Medicine 17:873-890, Table II example 56/70 - 48/80: method 10
	// gives 0.0524 to 0.3339 (values from memory of the paper; statsmodels agrees, see above).
	got := NewcombeDiff(56, 70, 48, 80, Z95)
	assert.InDelta(t, 0.0524, got.Low, 5e-5)
	assert.InDelta(t, 0.3339, got.High, 5e-5)
}

func TestECEHandWorked(t *testing.T) {
	// Two bins used out of 10. Bin (0.6, 0.7]: confidences 0.62, 0.68, one correct: |0.5 - 0.65| = 0.15,
	// weight 2/4. Bin (0.9, 1.0]: 0.95 and 1.0, both correct: |1 - 0.975| = 0.025, weight 2/4.
	// ECE = 0.075 + 0.0125 = 0.0875.
	got := ECE([]float64{0.62, 0.68, 0.95, 1.0}, []bool{true, false, true, true}, 10)
	assert.InDelta(t, 0.0875, got, 1e-12)
	assert.InDelta(t, 0, ECE([]float64{0.7, 0.7}, []bool{true, false}, 10)-0.2, 1e-12, "0.7 vs accuracy 0.5")
	assert.Equal(t, 0.0, ECE(nil, nil, 10))
}

func TestSweepAndTargetPrecision(t *testing.T) {
	// Scores high to low: 0.9 +, 0.8 +, 0.7 -, 0.6 +, 0.2 -.
	pos := []bool{true, true, false, true, false}
	score := []float64{0.9, 0.8, 0.7, 0.6, 0.2}
	p := At(pos, score, 0.65)
	assert.Equal(t, SweepPoint{Threshold: 0.65, Precision: 2.0 / 3, Recall: 2.0 / 3, F1: 2.0 / 3, Flagged: 3}, p)
	best, ok := ThresholdForPrecision(pos, score, 0.75)
	require.True(t, ok)
	// At 0.6: precision 3/4, recall 1 -> the most recall with precision >= 0.75.
	assert.Equal(t, 0.6, best.Threshold)
	assert.InDelta(t, 0.75, best.Precision, 1e-12)
	assert.InDelta(t, 1.0, best.Recall, 1e-12)
	_, ok = ThresholdForPrecision([]bool{false, false}, []float64{0.5, 0.4}, 0.5)
	assert.False(t, ok)
	assert.Len(t, Sweep(pos, score), 19)
}

func TestRationaleHandWorked(t *testing.T) {
	in := []RationaleInstance{
		{Gold: []bool{false, true, false}, Weight: []float64{0.1, 0.7, 0.2}, Picked: []bool{false, true, true}},
		{Gold: []bool{true, false}, Weight: []float64{0.0, 0.5}, Picked: []bool{false, true}},
		{Gold: []bool{false, false}, Weight: []float64{0.3, 0.1}, Picked: []bool{true, false}},
	}
	p, r, f := TokenPRF(in)
	// picked 4, gold 2, true positives 1.
	assert.InDelta(t, 0.25, p, 1e-12)
	assert.InDelta(t, 0.5, r, 1e-12)
	assert.InDelta(t, 1.0/3, f, 1e-12)
	// Instance 1 hit, instance 2 missed, instance 3 has no gold and is skipped.
	assert.InDelta(t, 0.5, HitAt1(in), 1e-12)
	// AP: instance 1 ranks its gold word first (1.0); instance 2 second (0.5).
	assert.InDelta(t, 0.75, MeanAUPRC(in), 1e-12)
	assert.Equal(t, []bool{false, true, true}, TopK([]float64{0.1, 0.7, 0.2}, 2))
	assert.Equal(t, []bool{true, false, false}, TopK([]float64{0.5, 0.5, 0.1}, 1), "earlier word on ties")
}
