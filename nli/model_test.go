package nli

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The tiny models in testdata/tiny-* are written by scripts/reference/make_tiny_models.py: their logits
// are sums of fixed per-token weights (never: contradiction +4, not: contradiction +2, counted in both
// sentences; also: entailment +2, counted in the hypothesis only where the model has token types;
// neutral constant 1), so the expected probabilities below are worked by hand from the softmax.

func openTiny(t *testing.T, name string) *Model {
	t.Helper()
	m, err := OpenDir(filepath.Join("testdata", name), Options{BatchSize: 4})
	require.NoError(t, err, "the ONNX Runtime library is needed: run scripts/install-onnxruntime")
	t.Cleanup(func() { m.Close() })
	return m
}

// softmax of (contradiction, entailment, neutral) logits.
func probsOf(c, e, n float64) Probs {
	z := math.Exp(c) + math.Exp(e) + math.Exp(n)
	return Probs{Contradiction: math.Exp(c) / z, Entailment: math.Exp(e) / z, Neutral: math.Exp(n) / z}
}

func assertProbs(t *testing.T, want, got Probs, msg string) {
	t.Helper()
	assert.InDelta(t, want.Contradiction, got.Contradiction, 1e-6, msg)
	assert.InDelta(t, want.Entailment, got.Entailment, 1e-6, msg)
	assert.InDelta(t, want.Neutral, got.Neutral, 1e-6, msg)
}

func TestLabelMapping(t *testing.T) {
	// tiny-wordpiece lists its labels as entailment, neutral, contradiction; tiny-bpe as CONTRADICTION,
	// NEUTRAL, ENTAILMENT. Read through id2label, both must give the same probabilities.
	for _, name := range []string{"tiny-wordpiece", "tiny-bpe"} {
		t.Run(name, func(t *testing.T) {
			m := openTiny(t, name)
			got, err := m.Predict([]Pair{
				{"I live on the coast.", "I have never seen the sea."},
				{"I live on the coast.", "I also like boats."},
				{"I live on the coast.", "I like boats."},
			})
			require.NoError(t, err)
			assertProbs(t, probsOf(4, 0, 1), got[0], "never")
			assertProbs(t, probsOf(0, 2, 1), got[1], "also")
			assertProbs(t, probsOf(0, 0, 1), got[2], "neither")
		})
	}
}

func TestTokenTypesReachTheModel(t *testing.T) {
	// tiny-wordpiece counts "also" for entailment in the hypothesis only (token type 1): in the premise
	// it is inert, which it can only be if token_type_ids arrive as the tokenizer made them.
	m := openTiny(t, "tiny-wordpiece")
	got, err := m.Predict([]Pair{{"I also swim.", "I like boats."}, {"I swim.", "I also like boats."}})
	require.NoError(t, err)
	assertProbs(t, probsOf(0, 0, 1), got[0], "also in the premise")
	assertProbs(t, probsOf(0, 2, 1), got[1], "also in the hypothesis")
}

func TestBothWays(t *testing.T) {
	// Read both ways, a pair gets the reading with the lower contradiction probability. tiny-bpe has no
	// token types and counts "never" and "also" wherever they stand, so both readings agree; with
	// tiny-wordpiece, "also" in the hypothesis adds entailment one way only.
	m := openTiny(t, "tiny-wordpiece")
	both := &Scorer{Model: m}
	scored, err := both.Score([]Pair{{"I live on the coast.", "I have never seen the sea."}, {"I swim.", "I also never sail."}})
	require.NoError(t, err)
	got := []Probs{scored[0].Probs, scored[1].Probs}
	assertProbs(t, probsOf(4, 0, 1), got[0], "never counts in both readings")
	assertProbs(t, probsOf(4, 2, 1), got[1], "the reading with also in the hypothesis contradicts less")
	attr, err := both.Attribute(scored[:1], AttributionOptions{Occlusion: Delete})
	require.NoError(t, err)
	for _, w := range attr[0].Words {
		want := 0.0
		if w.Start == 7 {
			want = probsOf(4, 0, 1).Contradiction - probsOf(0, 0, 1).Contradiction
		}
		assert.InDelta(t, want, w.Weight, 1e-6)
	}
}

func TestPaddingDoesNotChangeResults(t *testing.T) {
	m := openTiny(t, "tiny-wordpiece")
	short := Pair{"I live on the coast.", "I have never seen the sea."}
	long := Pair{strings.Repeat("The harbour is full of small fishing boats and gulls. ", 4), "Not once, never, not ever."}
	alone, err := m.Predict([]Pair{short})
	require.NoError(t, err)
	mixed, err := m.Predict([]Pair{long, short, long, short, short})
	require.NoError(t, err)
	for _, i := range []int{1, 3, 4} {
		assert.Equal(t, alone[0], mixed[i], "pair %d padded to the long pair's length", i)
	}
	assertProbs(t, probsOf(4+2+2, 0, 1), mixed[0], "long pair: never + 2 x not")
}

func TestAttributionFindsCulprit(t *testing.T) {
	pair := Pair{"I live on the coast.", "I have never seen the sea."}
	full := probsOf(4, 0, 1).Contradiction
	without := probsOf(0, 0, 1).Contradiction
	for _, how := range []Occlusion{Delete, Mask} {
		t.Run(string(how), func(t *testing.T) {
			m := openTiny(t, "tiny-wordpiece")
			got, err := attribute(m, []Pair{pair}, how)
			require.NoError(t, err)
			a := got[0]
			assert.InDelta(t, full, a.Contradiction, 1e-6)
			var words []string
			for _, w := range a.Words {
				words = append(words, pair.Hypothesis[w.Start:w.End])
				if pair.Hypothesis[w.Start:w.End] == "never" {
					assert.InDelta(t, full-without, w.Weight, 1e-6, "never")
				} else {
					assert.InDelta(t, 0, w.Weight, 1e-6, "word %q", pair.Hypothesis[w.Start:w.End])
				}
			}
			assert.Equal(t, []string{"I", "have", "never", "seen", "the", "sea", "."}, words)
		})
	}
}

func TestAttributionTwoCulprits(t *testing.T) {
	// "not" (+2) and "never" (+4): removing "never" costs more than removing "not".
	m := openTiny(t, "tiny-bpe")
	pair := Pair{"Boats.", "I do not and never will."}
	got, err := attribute(m, []Pair{pair}, Delete)
	require.NoError(t, err)
	weights := map[string]float64{}
	for _, w := range got[0].Words {
		weights[pair.Hypothesis[w.Start:w.End]] = w.Weight
	}
	full := probsOf(6, 0, 1).Contradiction
	assert.InDelta(t, full-probsOf(2, 0, 1).Contradiction, weights["never"], 1e-6)
	assert.InDelta(t, full-probsOf(4, 0, 1).Contradiction, weights["not"], 1e-6)
	assert.Greater(t, weights["never"], weights["not"])
}

func TestOpenErrors(t *testing.T) {
	src := filepath.Join("testdata", "tiny-wordpiece")
	copyModel := func(t *testing.T, skip string, edit func(dir string)) string {
		dir := t.TempDir()
		for _, f := range []string{FileModel, FileTokenizer, FileConfig} {
			if f == skip {
				continue
			}
			b, err := os.ReadFile(filepath.Join(src, f))
			require.NoError(t, err)
			require.NoError(t, os.WriteFile(filepath.Join(dir, f), b, 0o644))
		}
		if edit != nil {
			edit(dir)
		}
		return dir
	}
	cases := []struct {
		name, skip string
		edit       func(dir string)
		opts       Options
		want       string
	}{
		{name: "no model", skip: FileModel, want: "model.onnx is missing"},
		{name: "no tokenizer", skip: FileTokenizer, want: "tokenizer.json is missing"},
		{name: "no config", skip: FileConfig, want: "config.json is missing"},
		{name: "two labels", edit: func(d string) {
			os.WriteFile(filepath.Join(d, FileConfig), []byte(`{"id2label":{"0":"entailment","1":"not_entailment"}}`), 0o644)
		}, want: "id2label has 2 labels"},
		{name: "generic labels", edit: func(d string) {
			os.WriteFile(filepath.Join(d, FileConfig), []byte(`{"id2label":{"0":"LABEL_0","1":"LABEL_1","2":"LABEL_2"}}`), 0o644)
		}, want: `id2label 0 is "LABEL_0"`},
		{name: "checksum", opts: Options{SHA256: strings.Repeat("0", 64)}, want: "SHA-256 is"},
		{name: "not onnx", edit: func(d string) {
			os.WriteFile(filepath.Join(d, FileModel), []byte("not a model"), 0o644)
		}, want: "model.onnx"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := copyModel(t, c.skip, c.edit)
			_, err := OpenDir(dir, c.opts)
			require.Error(t, err)
			assert.Contains(t, err.Error(), c.want)
			assert.Contains(t, err.Error(), dir, "the error names the folder")
		})
	}
}

func TestScoreKept(t *testing.T) {
	m := openTiny(t, "tiny-wordpiece")
	pair := Pair{"I live on the coast.", "I do not and never will."}
	// Words: I do not and never will .
	all := []bool{true, true, true, true, true, true, true}
	noNever := []bool{true, true, true, true, false, true, true}
	onlyNot := []bool{false, false, true, false, false, false, false}
	oneWay := &Scorer{Model: m, OneWay: true}
	got, err := oneWay.ScoreKept(pair, [][]bool{all, noNever, onlyNot})
	require.NoError(t, err)
	assertProbs(t, probsOf(6, 0, 1), got[0], "all words")
	assertProbs(t, probsOf(2, 0, 1), got[1], "without never")
	assertProbs(t, probsOf(2, 0, 1), got[2], "only not")
	_, err = oneWay.ScoreKept(pair, [][]bool{{true}})
	assert.ErrorContains(t, err, "1 entries for 7 words")
}

// attribute scores pairs one way and attributes them.
func attribute(m *Model, pairs []Pair, how Occlusion) ([]Attribution, error) {
	s := &Scorer{Model: m, OneWay: true}
	scored, err := s.Score(pairs)
	if err != nil {
		return nil, err
	}
	return s.Attribute(scored, AttributionOptions{Occlusion: how})
}
