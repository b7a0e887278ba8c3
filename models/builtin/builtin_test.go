package builtin

import (
	"crypto/sha256"
	"encoding/hex"
	"io/fs"
	"os"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/gainsay/gainsay/internal/jsonl"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/relevance"
	"github.com/gainsay/gainsay/tokenizer"
)

func readLines[T any](t *testing.T, path string) []T {
	t.Helper()
	v, err := jsonl.ReadFile[T](path)
	require.NoError(t, err)
	return v
}

func TestChecksumMatchesCard(t *testing.T) {
	data, err := fs.ReadFile(FS(), "model.onnx")
	require.NoError(t, err)
	sum := sha256.Sum256(data)
	assert.Equal(t, SHA256, hex.EncodeToString(sum[:]), "the embedded model.onnx is the one the constant names")
	card, err := os.ReadFile("README.md")
	require.NoError(t, err)
	assert.Contains(t, string(card), SHA256, "the model card states the same SHA-256")
}

// Logit parity with the reference: the onnxruntime Python package (1.32) on the same models and pairs,
// encoded by Hugging Face tokenizers, one pair per run (scripts/reference/ort_reference.py). The pairs
// are tokenizer/testdata/parity/pairs.jsonl: SNLI test, MultiNLI and Breaking NLI sentences and stress
// strings (see its SOURCES.md). Go batches and pads; the probabilities must agree within 1e-4.
func TestLogitParity(t *testing.T) {
	type ref struct {
		Source, Premise, Hypothesis string
		Probs                       nli.Probs
	}
	cases := map[string]struct {
		open func() (*nli.Model, error)
		refs string
	}{
		"builtin":        {func() (*nli.Model, error) { return Open(nli.Options{}) }, "testdata/ort-reference.jsonl"},
		"tiny-wordpiece": {func() (*nli.Model, error) { return nli.OpenDir("../../nli/testdata/tiny-wordpiece", nli.Options{}) }, "../../nli/testdata/tiny-wordpiece.ort-reference.jsonl"},
		"tiny-bpe":       {func() (*nli.Model, error) { return nli.OpenDir("../../nli/testdata/tiny-bpe", nli.Options{}) }, "../../nli/testdata/tiny-bpe.ort-reference.jsonl"},
	}
	for name, c := range cases {
		t.Run(name, func(t *testing.T) {
			m, err := c.open()
			require.NoError(t, err)
			defer m.Close()
			refs := readLines[ref](t, c.refs)
			require.NotEmpty(t, refs)
			pairs := make([]nli.Pair, len(refs))
			for i, r := range refs {
				pairs[i] = nli.Pair{Premise: r.Premise, Hypothesis: r.Hypothesis}
			}
			got, err := m.Predict(pairs)
			require.NoError(t, err)
			for i, r := range refs {
				assert.InDelta(t, r.Probs.Contradiction, got[i].Contradiction, 1e-4, r.Source)
				assert.InDelta(t, r.Probs.Entailment, got[i].Entailment, 1e-4, r.Source)
				assert.InDelta(t, r.Probs.Neutral, got[i].Neutral, 1e-4, r.Source)
			}
		})
	}
}

func TestTokenizerCarriesFixedPaddingWhichIsIgnored(t *testing.T) {
	// all-MiniLM-L6-v2's tokenizer.json pads and truncates to 128; gainsay pads per batch itself.
	raw, err := fs.ReadFile(FS(), "tokenizer.json")
	require.NoError(t, err)
	assert.True(t, strings.Contains(string(raw), `"Fixed":128`) || strings.Contains(string(raw), `"Fixed": 128`))
	tok, err := tokenizer.Load(raw)
	require.NoError(t, err)
	e, err := tok.EncodePair("I live on the coast.", "I have never seen the sea.")
	require.NoError(t, err)
	assert.Less(t, e.Len(), 30, "no padding to 128")
}

func TestBatchingDoesNotChangeResults(t *testing.T) {
	// The shipped export computes in float32 (see the model card: dynamic int8 did not keep this).
	type ref struct{ Premise, Hypothesis string }
	refs := readLines[ref](t, "testdata/ort-reference.jsonl")
	pairs := make([]nli.Pair, len(refs))
	for i, r := range refs {
		pairs[i] = nli.Pair{Premise: r.Premise, Hypothesis: r.Hypothesis}
	}
	alone, err := Open(nli.Options{BatchSize: 1})
	require.NoError(t, err)
	defer alone.Close()
	batched, err := Open(nli.Options{BatchSize: 32})
	require.NoError(t, err)
	defer batched.Close()
	a, err := alone.Predict(pairs)
	require.NoError(t, err)
	b, err := batched.Predict(pairs)
	require.NoError(t, err)
	for i := range a {
		assert.InDelta(t, a[i].Contradiction, b[i].Contradiction, 1e-5, refs[i].Premise)
	}
}

// The built-in sentence encoder against the onnxruntime Python package
// (scripts/reference/relevance_reference.py): the same cosines to 1e-4 on the demo's fact and reply
// pairs (invented) and SNLI test pairs (Bowman et al. 2015).
func TestRelevanceMatchesReference(t *testing.T) {
	type ref struct {
		A, B   string
		Cosine float64
	}
	refs := readLines[ref](t, "testdata/relevance-reference.jsonl")
	e, err := OpenRelevance(relevance.Options{})
	require.NoError(t, err)
	defer e.Close()
	var texts []string
	for _, r := range refs {
		texts = append(texts, r.A, r.B)
	}
	vecs, err := e.Embed(texts)
	require.NoError(t, err)
	for i, r := range refs {
		assert.InDelta(t, r.Cosine, relevance.Cosine(vecs[2*i], vecs[2*i+1]), 1e-4, "%q / %q", r.A, r.B)
	}
}
