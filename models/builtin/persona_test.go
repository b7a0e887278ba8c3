package builtin

import (
	"encoding/json"
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/eval"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/relevance"
)

// The persona dev set (testdata/persona-dev: invented characters and replies labelled by hand before
// any persona training, never trained on), every other reply, checked as gainsay check does with the
// built-in models and default settings. The figures are pinned to testdata/persona-dev.expected.json
// (what this model gives; the model card reports the whole set): the check is deterministic, so any
// change is a change of behaviour to explain.
func TestPersonaDevSample(t *testing.T) {
	raw, err := os.ReadFile("testdata/persona-dev.expected.json")
	require.NoError(t, err)
	var want struct {
		Replies, Found, FalseFlags, Misses, HeaviestSpanHits, FunctionWordSpans int
	}
	require.NoError(t, json.Unmarshal(raw, &want))
	chars, err := eval.ReadCharacters("../../testdata/persona-dev")
	require.NoError(t, err)
	n := 0
	for i := range chars {
		var half []eval.LabelledReply
		for k, r := range chars[i].Replies {
			if k%2 == 0 {
				half = append(half, r)
			}
		}
		chars[i].Replies = half
		n += len(half)
	}
	m, err := Open(nli.Options{})
	require.NoError(t, err)
	defer m.Close()
	e, err := OpenRelevance(relevance.Options{})
	require.NoError(t, err)
	defer e.Close()
	opts := gainsay.Options{Relevance: DefaultRelevance, RelevanceTop: gainsay.DefaultRelevanceTop}
	rep, err := eval.Replies(&gainsay.Checker{Scorer: &nli.Scorer{Model: m}, Embedder: e, Options: opts}, chars, 0)
	require.NoError(t, err)
	p := rep.Persona
	assert.Equal(t, want.Replies, n)
	assert.Equal(t, want.Found, p.Found, "contradictions found")
	assert.Equal(t, want.FalseFlags, len(p.FalseFlags), "consistent replies flagged: %v", p.FalseFlags)
	assert.Equal(t, want.Misses, len(p.Misses), "contradictions missed: %v", p.Misses)
	assert.Equal(t, want.HeaviestSpanHits, int(p.HeaviestSpanHit*float64(p.Found)+0.5), "heaviest span on a gold word")
	assert.Equal(t, 0, p.FunctionWordSpans, "no span of function words only: %v", p.FunctionWordSpanExamples)
}
