package builtin

import (
	"encoding/json"
	"os"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

// The demo of `make demo` (an invented character, testdata/demo) with the built-in model: every reply
// that testdata/demo/expected.json lists as contradicting is flagged against its fact with its culprit
// word among that finding's penalty spans, and the consistent ones are not flagged.
func TestDemo(t *testing.T) {
	raw, err := os.ReadFile("../../testdata/demo/expected.json")
	require.NoError(t, err)
	var want struct {
		Contradictions map[string]struct{ Fact, Culprit string }
		Consistent     []string
	}
	require.NoError(t, json.Unmarshal(raw, &want))
	prof, err := profile.ReadProfile("../../testdata/demo/maren.yaml", profile.FormatAuto)
	require.NoError(t, err)
	f, err := os.Open("../../testdata/demo/replies.jsonl")
	require.NoError(t, err)
	defer f.Close()
	rr := gainsay.NewReplyReader(f, "replies.jsonl", gainsay.FormatJSONL, 0)
	var replies []gainsay.Reply
	for {
		r, err := rr.Next()
		if err != nil {
			break
		}
		replies = append(replies, r)
	}
	m, err := Open(nli.Options{})
	require.NoError(t, err)
	defer m.Close()
	// As gainsay check runs it: both ways, default threshold and span rule.
	recs, _ := (&gainsay.Checker{Scorer: &nli.Scorer{Model: m}}).Check(prof, replies)
	byID := map[string]gainsay.Record{}
	for _, r := range recs {
		byID[r.ID] = r
	}
	for id, w := range want.Contradictions {
		r := byID[id]
		if !assert.Equal(t, gainsay.Contradiction, r.Verdict, "%s: %q", id, r.Text) {
			continue
		}
		var spans []string
		found := false
		for _, fd := range r.Findings {
			if fd.FactID != w.Fact {
				continue
			}
			found = true
			for _, s := range fd.Spans {
				spans = append(spans, strings.ToLower(s.Text))
			}
		}
		assert.True(t, found, "%s: no finding against %s", id, w.Fact)
		if w.Culprit != "" {
			assert.True(t, slices.ContainsFunc(spans, func(s string) bool { return strings.Contains(s, w.Culprit) }),
				"%s: culprit %q not among the spans %v", id, w.Culprit, spans)
		}
	}
	for _, id := range want.Consistent {
		assert.Equal(t, gainsay.Consistent, byID[id].Verdict, "%s: %q flagged", id, byID[id].Text)
	}
}
