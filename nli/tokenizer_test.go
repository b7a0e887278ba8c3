package nli

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
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
		tk := loadTokenizerFile(t, "testdata/tokenizers/"+fam+"/tokenizer.json")
		for _, c := range cases {
			pieces, err := tk.Tokenize(c.text)
			require.NoError(t, err)
			var got []string
			for _, w := range Words(c.text, pieces) {
				got = append(got, c.text[w.Start:w.End])
			}
			assert.Equal(t, c.want, got, "%s: %q", fam, c.text)
		}
	}
}

func TestTruncationKeepsHypothesis(t *testing.T) {
	tk := loadTokenizerFile(t, "testdata/tokenizers/wordpiece/tokenizer.json")
	premise := strings.Repeat("the harbour is full of boats ", 20)
	hyp := "I have never seen the sea."
	full, err := tk.EncodePair(premise, hyp, 0)
	require.NoError(t, err)
	cut, err := tk.EncodePair(premise, hyp, 32)
	require.NoError(t, err)
	assert.False(t, full.Truncated)
	assert.True(t, cut.Truncated)
	assert.Equal(t, 32, cut.Len())
	hypTokens := func(e Encoding) []int64 {
		var ids []int64
		for i, s := range e.Segments {
			if s == Hypothesis {
				ids = append(ids, e.IDs[i])
			}
		}
		return ids
	}
	assert.Equal(t, hypTokens(full), hypTokens(cut), "hypothesis kept whole")

	// When even a quarter of the limit for the premise leaves no room, the hypothesis is cut too.
	tiny, err := tk.EncodePair(premise, strings.Repeat(hyp+" ", 10), 24)
	require.NoError(t, err)
	assert.Equal(t, 24, tiny.Len())
	prem := 0
	for _, s := range tiny.Segments {
		if s == Premise {
			prem++
		}
	}
	assert.Equal(t, 6, prem, "premise keeps a quarter of the limit")
}

func TestUnsupportedTokenizer(t *testing.T) {
	_, err := LoadTokenizer([]byte(`{"model":{"type":"Mystery"}}`))
	assert.ErrorContains(t, err, `model type "Mystery" is not supported`)
	_, err = LoadTokenizer([]byte(`not json`))
	assert.ErrorContains(t, err, "tokenizer.json")
}

func TestTokenizeConcurrently(t *testing.T) {
	// gainsay serve tokenises from many goroutines at once; run with -race to check.
	for _, fam := range []string{"wordpiece", "bpe", "unigram"} {
		tk := loadTokenizerFile(t, "testdata/tokenizers/"+fam+"/tokenizer.json")
		want, err := tk.Tokenize("I have never seen the sea, not once.")
		require.NoError(t, err)
		done := make(chan []Piece, 8)
		for g := 0; g < 8; g++ {
			go func() {
				var last []Piece
				for i := 0; i < 50; i++ {
					last, _ = tk.Tokenize("I have never seen the sea, not once.")
				}
				done <- last
			}()
		}
		for g := 0; g < 8; g++ {
			assert.Equal(t, want, <-done, fam)
		}
	}
}
