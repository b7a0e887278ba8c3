package gainsay

import (
	"bytes"
	"context"
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/gainsay/gainsay/internal/textpos"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

// tinyModel is nli's test model whose contradiction logit is 4 per "never" in the hypothesis (see
// scripts/reference/make_tiny_models.py); the expected numbers below follow from its softmax.
func tinyModel(t *testing.T) *nli.Model {
	t.Helper()
	m, err := nli.OpenDir("nli/testdata/tiny-wordpiece", nli.Options{})
	require.NoError(t, err, "the ONNX Runtime library is needed: run scripts/install-onnxruntime")
	t.Cleanup(func() { m.Close() })
	return m
}

// tinyScorer reads pairs one way with the tiny model.
func tinyScorer(t *testing.T) *nli.Scorer { return &nli.Scorer{Model: tinyModel(t), OneWay: true} }

func softmaxC(c, e, n float64) float64 {
	return math.Exp(c) / (math.Exp(c) + math.Exp(e) + math.Exp(n))
}

var maren = &profile.Profile{Character: "maren", File: "maren.yaml", Facts: []profile.Fact{
	{ID: "home", Text: "I live in the lighthouse on Gull Point.", Line: 3},
	{ID: "swim", Text: "I swim in the sea every morning.", Line: 5},
}}

func TestCheckWithTinyModel(t *testing.T) {
	c := &Checker{Scorer: tinyScorer(t), Options: Options{Model: "tiny"}}
	replies := []Reply{
		{ID: "r1", Text: "Ich wohne in Zürich. I have never seen the sea.", Line: 1},
		{ID: "r2", Text: "I like boats.", Line: 2},
		{ID: "r3", Line: 3, Err: errors.New("r.jsonl:3: text: missing")},
		{ID: "r4", Text: "   ", Line: 4},
	}
	recs, st := c.Check(maren, replies)
	require.Len(t, recs, 4)
	assert.Equal(t, Stats{Replies: 4, Contradictions: 1, Errors: 1, Pairs: 6, Attributed: 2}, Stats{
		Replies: st.Replies, Contradictions: st.Contradictions, Errors: st.Errors, Pairs: st.Pairs, Attributed: st.Attributed})

	r1 := recs[0]
	assert.Equal(t, Contradiction, r1.Verdict)
	high, low := softmaxC(4, 0, 1), softmaxC(0, 0, 1)
	assert.InDelta(t, high, float64(r1.Score), 1e-6)
	require.Len(t, r1.Findings, 2, "both facts, the same sentence")
	assert.Equal(t, []string{"home", "swim"}, []string{r1.Findings[0].FactID, r1.Findings[1].FactID}, "ties keep profile order")
	f := r1.Findings[0]
	// "Ich wohne in Zürich. " is 21 code points but 22 bytes (ü).
	assert.Equal(t, SentenceRef{Start: 21, End: 47, ByteStart: 22, ByteEnd: 48, Text: "I have never seen the sea."}, f.Sentence)
	require.Len(t, f.Spans, 1)
	assert.Equal(t, Span{Start: 28, End: 33, ByteStart: 29, ByteEnd: 34, Text: "never", Weight: f.Spans[0].Weight}, f.Spans[0])
	oddsOf := func(p float64) float64 { return p / (1 - p) }
	assert.InDelta(t, 1-oddsOf(low)/oddsOf(high), float64(f.Spans[0].Weight), 1e-6, "the share of the odds that goes with the word")
	assert.Equal(t, []rune(r1.Text)[28:33], []rune("never"), "code-point offsets index the text as Python does")

	assert.Equal(t, Consistent, recs[1].Verdict)
	assert.InDelta(t, low, float64(recs[1].Score), 1e-6)
	assert.Empty(t, recs[1].Findings)

	assert.Equal(t, Failed, recs[2].Verdict)
	assert.Equal(t, "r.jsonl:3: text: missing", recs[2].Error)
	assert.Equal(t, Consistent, recs[3].Verdict, "a blank reply has nothing to contradict")
}

func TestThresholdAndSpanRule(t *testing.T) {
	m := tinyScorer(t)
	reply := []Reply{{ID: "r", Text: "I have never seen the sea.", Line: 1}}
	high := softmaxC(4, 0, 1)
	c := &Checker{Scorer: m, Options: Options{Threshold: high + 0.01}}
	recs, _ := c.Check(maren, reply)
	assert.Equal(t, Consistent, recs[0].Verdict, "below a threshold above its score")
	c = &Checker{Scorer: m, Options: Options{Spans: SpanRule{MinWeight: 0.99, Relative: 0.5}}}
	recs, _ = c.Check(maren, reply)
	assert.Equal(t, Contradiction, recs[0].Verdict)
	assert.Empty(t, recs[0].Findings[0].Spans, "no word moves the probability by 0.99")
}

func TestSpansMergeAdjacent(t *testing.T) {
	text := "We never ever sail. Ok"
	// Probability drops as weights: the contradiction probability is 0.9 and falls by the weight
	// without each word.
	attr := func(drops ...float64) nli.Attribution {
		bounds := [][2]int{{0, 2}, {3, 8}, {9, 13}, {14, 18}, {18, 19}}
		a := nli.Attribution{Contradiction: 0.9}
		for i, d := range drops {
			a.Words = append(a.Words, nli.WordWeight{Start: bounds[i][0], End: bounds[i][1], Without: 0.9 - d, Weight: d})
		}
		return a
	}
	rule := SpanRule{MinWeight: 0.001, Relative: 0.5, Measure: ProbDrop, FunctionWords: true}
	got := rule.spans(text, textposIndex(text), 0, attr(0, 0.6, 0.4, 0.01, 0.29))
	require.Len(t, got, 1)
	assert.Equal(t, Span{Start: 3, End: 13, ByteStart: 3, ByteEnd: 13, Text: "never ever", Weight: 0.6}, got[0])

	got = rule.spans(text, textposIndex(text), 0, attr(0.5, 0, 0.9))
	require.Len(t, got, 2)
	assert.Equal(t, []string{"ever", "We"}, []string{got[0].Text, got[1].Text}, "heaviest first")

	rule.FunctionWords = false
	got = rule.spans(text, textposIndex(text), 0, attr(0.9, 0, 0.5))
	require.Len(t, got, 1)
	assert.Equal(t, "ever", got[0].Text, "a pronoun is no span, however heavy")
}

func TestWordWeights(t *testing.T) {
	hyp := "I have never seen the sea."
	words := [][2]int{{0, 1}, {2, 6}, {7, 12}, {13, 17}, {18, 21}, {22, 25}, {25, 26}}
	a := nli.Attribution{Contradiction: 0.999}
	for _, w := range words {
		a.Words = append(a.Words, nli.WordWeight{Start: w[0], End: w[1], Without: 0.999})
	}
	a.Words[2].Without = 0.99                                // "never": the odds fall from 999 to 99
	a.Words[0].Without = 0.9                                 // "I": a pronoun, however heavy
	a.Words[5].Without = 0.998                               // "sea"
	a.Phrases = []nli.PhraseWeight{{First: 3, Without: 0.3}} // "seen the": only together
	rule := DefaultSpanRule()
	got := rule.WordWeights(hyp, a)
	assert.InDelta(t, 1-99.0/999, got[2], 1e-9, "odds share of never")
	assert.Zero(t, got[0], "function word")
	assert.InDelta(t, 1-(0.998/0.002)/999, got[5], 1e-9)
	pair := 1 - (0.3/0.7)/999
	assert.InDelta(t, pair/2, got[3], 1e-9, "Shapley value in the pair: (0 + v(pair) - 0) / 2")
	assert.Zero(t, got[4], "the, a function word, stays out")

	rule.Measure, rule.Phrases = ProbDrop, false
	got = rule.WordWeights(hyp, a)
	assert.InDelta(t, 0.009, got[2], 1e-9)
	assert.Zero(t, got[3], "without phrases")

	for _, w := range []string{"I", "my", "I'm", "I’ve", "the", "is", "(them)"} {
		assert.True(t, IsFunctionWord(w), w)
	}
	for _, w := range []string{"never", "not", "no", "only", "don't", "can't", "all", "sea", "Never,"} {
		assert.False(t, IsFunctionWord(w), w)
	}
}

// failingRunner fails any batch that holds the tokens of the word "kaboom".
type failingRunner struct {
	inner nli.Runner
	bad   []int64
}

func (f failingRunner) PredictEncoded(encs []nli.Encoding) ([]nli.Probs, error) {
	for _, e := range encs {
		for i := 0; i+len(f.bad) <= len(e.IDs); i++ {
			if slices.Equal(e.IDs[i:i+len(f.bad)], f.bad) {
				return nil, errors.New("the model broke")
			}
		}
	}
	return f.inner.PredictEncoded(encs)
}

func TestScorerFailureIsolatesReply(t *testing.T) {
	m := tinyModel(t)
	pieces, err := m.Tokenizer().Tokenize("kaboom")
	require.NoError(t, err)
	var bad []int64
	for _, p := range pieces {
		bad = append(bad, int64(p.ID))
	}
	c := &Checker{Scorer: &nli.Scorer{Model: m, Runner: failingRunner{m, bad}, OneWay: true}}
	recs, st := c.Check(maren, []Reply{
		{ID: "a", Text: "I have never seen the sea."}, {ID: "b", Text: "kaboom"}, {ID: "c", Text: "Fine."},
	})
	assert.Equal(t, []Verdict{Contradiction, Failed, Consistent}, []Verdict{recs[0].Verdict, recs[1].Verdict, recs[2].Verdict})
	assert.Contains(t, recs[1].Error, "the model broke")
	assert.Equal(t, 1, st.Errors)

	// Alone in its batch, the failing reply is still an error record, not a failed run.
	recs, st = c.Check(maren, []Reply{{ID: "b", Text: "kaboom"}})
	assert.Equal(t, Failed, recs[0].Verdict)
	assert.Equal(t, 1, st.Errors)
}

func TestRunStreamsEveryReply(t *testing.T) {
	in := strings.Repeat(`{"id":"x","text":"I have never seen the sea."}`+"\n"+`bad`+"\n", 50)
	var out bytes.Buffer
	c := &Checker{Scorer: tinyScorer(t)}
	calls := 0
	st, err := c.Run(context.Background(), maren, NewReplyReader(strings.NewReader(in), "r.jsonl", FormatJSONL, 0),
		NewRecordWriter(&out), RunOptions{Chunk: 7, Progress: func(int) { calls++ }})
	require.NoError(t, err)
	assert.Equal(t, 100, st.Replies)
	assert.Equal(t, 50, st.Errors)
	assert.Equal(t, 15, calls, "ceil(100 / 7) chunks")
	recs, err := ReadAllRecords(&out, "out")
	require.NoError(t, err)
	require.Len(t, recs, 100)
	for i, r := range recs {
		assert.Equal(t, i+1, r.Line, "input order")
	}
}

func textposIndex(s string) textpos.Index { return textpos.New(s) }

func TestAttributionBudget(t *testing.T) {
	// Two findings (both facts, the same sentence); a budget of one input leaves the second without
	// spans, marked unattributed, its verdict kept.
	c := &Checker{Scorer: tinyScorer(t), Options: Options{AttributionBudget: 1}}
	recs, st := c.Check(maren, []Reply{{ID: "r", Text: "I have never seen the sea.", Line: 1}})
	require.Len(t, recs[0].Findings, 2)
	assert.NotEmpty(t, recs[0].Findings[0].Spans)
	assert.False(t, recs[0].Findings[0].Unattributed)
	assert.Empty(t, recs[0].Findings[1].Spans)
	assert.True(t, recs[0].Findings[1].Unattributed)
	assert.Equal(t, 1, st.Attributed)
}
