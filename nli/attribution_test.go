package nli

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/gainsay/gainsay/tokenizer"
)

func TestWords(t *testing.T) {
	cases := []struct {
		text string
		want []string
	}{
		{"I have never seen the sea.", []string{"I", "have", "never", "seen", "the", "sea", "."}},
		{"I don't live by the sea!", []string{"I", "don't", "live", "by", "the", "sea", "!"}},
		{"It costs 3.50, (roughly) so.", []string{"It", "costs", "3.50", ",", "(", "roughly", ")", "so", "."}},
		// Where the vocabulary has a token for ")." the two marks stay one word: words never split a token.
		{"Zürich is   my home-town.", []string{"Zürich", "is", "my", "home-town", "."}},
		{"  Leading spaces", []string{"Leading", "spaces"}},
	}
	for _, fam := range []string{"wordpiece", "bpe", "unigram"} {
		tk, err := tokenizer.LoadFile("../tokenizer/testdata/tokenizers/" + fam + "/tokenizer.json")
		require.NoError(t, err)
		for _, c := range cases {
			pieces, err := tk.Tokenize(c.text)
			require.NoError(t, err)
			var got []string
			for _, w := range words(c.text, pieces) {
				got = append(got, c.text[w.start:w.end])
			}
			assert.Equal(t, c.want, got, "%s: %q", fam, c.text)
		}
	}
}

func TestTruncationKeepsHypothesis(t *testing.T) {
	tk, err := tokenizer.LoadFile("../tokenizer/testdata/tokenizers/wordpiece/tokenizer.json")
	require.NoError(t, err)
	premise := strings.Repeat("the harbour is full of boats ", 20)
	hyp := "I have never seen the sea."
	full, err := encodePair(tk, premise, hyp, 0)
	require.NoError(t, err)
	cut, err := encodePair(tk, premise, hyp, 32)
	require.NoError(t, err)
	assert.False(t, full.Truncated)
	assert.True(t, cut.Truncated)
	assert.Equal(t, 32, cut.Len())
	hypTokens := func(e Encoding) []int64 {
		var ids []int64
		for i, s := range e.Seq {
			if s == 1 {
				ids = append(ids, e.IDs[i])
			}
		}
		return ids
	}
	assert.Equal(t, hypTokens(full), hypTokens(cut), "hypothesis kept whole")

	// When even a quarter of the limit for the premise leaves no room, the hypothesis is cut too.
	tiny, err := encodePair(tk, premise, strings.Repeat(hyp+" ", 10), 24)
	require.NoError(t, err)
	assert.Equal(t, 24, tiny.Len())
	prem := 0
	for _, s := range tiny.Seq {
		if s == 0 {
			prem++
		}
	}
	assert.Equal(t, 6, prem, "premise keeps a quarter of the limit")
}
