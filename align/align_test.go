package align

import (
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/jsonl"
	"github.com/gainsay/gainsay/tokenizer"
)

// Parity with the reference: for each tokenizer family, testdata/<family>.expected.jsonl holds the token
// ids and offsets that the Hugging Face `tokenizers` package gives for each reply of
// testdata/records.jsonl, and the weights that scripts/python/gainsay_train computes from them
// (scripts/reference/align_reference.py). The replies are SNLI test, MultiNLI and Breaking NLI sentences
// and stress strings (see tokenizer/testdata/parity/SOURCES.md); the tokenizers are nli's small trained ones.

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
	for _, fam := range []string{"wordpiece", "bpe", "unigram"} {
		t.Run(fam, func(t *testing.T) {
			data, err := os.ReadFile("../tokenizer/testdata/tokenizers/" + fam + "/tokenizer.json")
			require.NoError(t, err)
			tok, err := tokenizer.Load(data)
			require.NoError(t, err)
			want, err := jsonl.ReadFile[expected]("testdata/" + fam + ".expected.jsonl")
			require.NoError(t, err)
			require.Len(t, want, len(recs))
			for i := range recs {
				got, err := Record(&recs[i], tok, false)
				require.NoError(t, err)
				w := want[i]
				require.Equal(t, w.ID, got.ID)
				assert.Equal(t, w.TokenIDs, got.TokenIDs, "%s token ids", w.ID)
				assert.Equal(t, w.Offsets, got.Offsets, "%s offsets", w.ID)
				require.Len(t, got.Weights, len(w.Weights), w.ID)
				for k := range w.Weights {
					assert.InDelta(t, w.Weights[k], float64(got.Weights[k]), 1e-6, "%s token %d", w.ID, k)
				}
				assert.Equal(t, recs[i].Verdict == gainsay.Contradiction, got.SequenceFlag)
			}
		})
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
