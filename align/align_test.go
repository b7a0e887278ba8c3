package align

import (
	"encoding/json"
	"os"
	"testing"
	"unicode/utf8"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/jsonl"
	"github.com/gainsay/gainsay/tokenizer"
)

// Parity with the reference: for each tokenizer layout, testdata/<family>.expected.jsonl holds the token
// ids and offsets that the Hugging Face `tokenizers` package gives for each reply of
// testdata/records.jsonl, and the weights that scripts/python/gainsay_train computes from them
// (scripts/reference/align_reference.py); <family>.prompt.expected.jsonl the same for the replies that
// carry a prompt, tokenised after it. The replies are SNLI test, MultiNLI and Breaking NLI sentences,
// Synthetic-Persona-Chat and DECODE utterances, the demo's replies and stress strings (see
// testdata/SOURCES.md); the tokenizers are the small ones scripts/reference/make_tokenizers.py trains.

type expected struct {
	ID       string    `json:"id"`
	TokenIDs []int     `json:"token_ids"`
	Offsets  [][2]int  `json:"offsets"`
	Weights  []float64 `json:"weights"`
}

func TestAlignParity(t *testing.T) {
	f, err := os.Open("testdata/records.jsonl")
	require.NoError(t, err)
	recs, err := gainsay.ReadAllRecords(f, "records.jsonl")
	f.Close()
	require.NoError(t, err)
	// WordPiece, byte-level BPE, Unigram, and the chat-model layouts: Llama 3 and Qwen2 (regex Split
	// before byte-level BPE), Llama 2 and Mistral (BPE with byte fallback).
	for _, fam := range []string{"wordpiece", "bpe", "unigram", "splitbpe", "splitbpe-nfc", "spbpe", "metaspace-bpe"} {
		t.Run(fam, func(t *testing.T) {
			tok, err := tokenizer.LoadFile("../tokenizer/testdata/tokenizers/" + fam + "/tokenizer.json")
			require.NoError(t, err)
			want, err := jsonl.ReadFile[expected]("testdata/" + fam + ".expected.jsonl")
			require.NoError(t, err)
			require.Len(t, want, len(recs))
			for i := range recs {
				got, err := Record(&recs[i], tok, Options{})
				require.NoError(t, err)
				compareAligned(t, want[i], got)
				assert.Equal(t, recs[i].Verdict == gainsay.Contradiction, got.SequenceFlag)
			}
			// The same replies after a chat template's prompt, tokenised together.
			prompted, err := jsonl.ReadFile[expected]("testdata/" + fam + ".prompt.expected.jsonl")
			require.NoError(t, err)
			k := 0
			for i := range recs {
				raw, ok := recs[i].Extra["prompt"]
				if !ok {
					continue
				}
				var prompt string
				require.NoError(t, json.Unmarshal(raw, &prompt))
				got, err := Record(&recs[i], tok, Options{Prompt: prompt})
				require.NoError(t, err)
				require.Less(t, k, len(prompted))
				compareAligned(t, prompted[k], got)
				assert.Equal(t, utf8.RuneCountInString(prompt), got.ReplyStart)
				k++
			}
			assert.Equal(t, len(prompted), k)
		})
	}
}

func compareAligned(t *testing.T, w expected, got Tokens) {
	t.Helper()
	require.Equal(t, w.ID, got.ID)
	assert.Equal(t, w.TokenIDs, got.TokenIDs, "%s token ids", w.ID)
	assert.Equal(t, w.Offsets, got.Offsets, "%s offsets", w.ID)
	require.Len(t, got.Weights, len(w.Weights), w.ID)
	for k := range w.Weights {
		assert.InDelta(t, w.Weights[k], float64(got.Weights[k]), 1e-6, "%s token %d", w.ID, k)
	}
}

func TestWeightsRule(t *testing.T) {
	text := "I never, nevermore sail."
	pieces := []tokenizer.Piece{{ID: 1, Start: 0, End: 1}, {ID: 2, Start: 1, End: 7}, {ID: 3, Start: 7, End: 8},
		{ID: 4, Start: 9, End: 18}, {ID: 5, Start: 18, End: 19}, {ID: 6, Start: 19, End: 23}}
	spans := []gainsay.Span{{ByteStart: 2, ByteEnd: 7, Weight: 0.8}, {ByteStart: 9, ByteEnd: 14, Weight: 0.6}, {ByteStart: 2, ByteEnd: 4, Weight: 0.9}}
	got := Weights(text, pieces, spans)
	want := []float64{
		0,             // "I"
		0.8,           // " never": leading space not counted, fully covered; the 0.9 span covers 2 of 5 -> 0.36
		0,             // ","
		0.6 * 5.0 / 9, // "nevermore": 5 of 9 characters
		0,             // " " (white space only)
		0,             // "sail"
	}
	for i := range want {
		assert.InDelta(t, want[i], got[i], 1e-12, "token %d", i)
	}
}

func TestNormalize(t *testing.T) {
	w := []float64{0, 0.0048, 0.0012, 0}
	Normalize(w)
	assert.Equal(t, []float64{0, 1, 0.25, 0}, w)
	zero := []float64{0, 0}
	Normalize(zero)
	assert.Equal(t, []float64{0, 0}, zero)
}
