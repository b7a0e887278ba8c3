package tokenizer

import (
	"fmt"
	"os"
	"path/filepath"
	"testing"

	"github.com/gainsay/gainsay/internal/jsonl"
	"github.com/gainsay/gainsay/internal/textpos"
)

// Parity with the reference: Hugging Face tokenizers (Python package `tokenizers`, 0.23), which wrote
// testdata/parity/<family>.expected.jsonl with scripts/reference/tokenizer_reference.py. The pairs in
// testdata/parity/pairs.jsonl come from SNLI test (Bowman et al. 2015), the MultiNLI dev subset of TaxiNLI
// (Williams et al. 2018; Joshi et al. 2020) and Breaking NLI (Glockner et al. 2018), see
// testdata/parity/SOURCES.md, plus ten stress strings (accents, NFKC, CJK, emoji, combining marks).

type parityPair struct {
	Premise, Hypothesis, Source string
}

type parityExpected struct {
	Source      string   `json:"source"`
	IDs         []int64  `json:"ids"`
	TypeIDs     []int64  `json:"type_ids"`
	Offsets     [][2]int `json:"offsets"`
	SequenceIDs []int    `json:"sequence_ids"`
	Tokens      []string `json:"tokens"`
}

func readJSONLines[T any](t testing.TB, path string) []T {
	t.Helper()
	v, err := jsonl.ReadFile[T](path)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func loadTokenizerFile(t testing.TB, path string) *Tokenizer {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	tk, err := Load(data)
	if err != nil {
		t.Fatal(err)
	}
	return tk
}

func TestTokenizerParity(t *testing.T) {
	pairs := readJSONLines[parityPair](t, "testdata/parity/pairs.jsonl")
	families := map[string]string{
		"wordpiece": "testdata/tokenizers/wordpiece/tokenizer.json",
		"bpe":       "testdata/tokenizers/bpe/tokenizer.json",
		"unigram":   "testdata/tokenizers/unigram/tokenizer.json",
		// Today's chat-model layouts (scripts/reference/make_tokenizers.py): Llama 3, Qwen2, Llama 2, Mistral.
		"splitbpe":      "testdata/tokenizers/splitbpe/tokenizer.json",
		"splitbpe-nfc":  "testdata/tokenizers/splitbpe-nfc/tokenizer.json",
		"spbpe":         "testdata/tokenizers/spbpe/tokenizer.json",
		"metaspace-bpe": "testdata/tokenizers/metaspace-bpe/tokenizer.json",
		"builtin":       "../models/builtin/tokenizer.json",
	}
	for name, path := range families {
		t.Run(name, func(t *testing.T) {
			if _, err := os.Stat(path); err != nil {
				t.Skipf("%s: %v", path, err)
			}
			tk := loadTokenizerFile(t, path)
			want := readJSONLines[parityExpected](t, filepath.Join("testdata/parity", name+".expected.jsonl"))
			if len(want) != len(pairs) {
				t.Fatalf("%d expected encodings for %d pairs", len(want), len(pairs))
			}
			failed := 0
			for i, p := range pairs {
				got, err := tk.EncodePair(p.Premise, p.Hypothesis)
				if err != nil {
					t.Errorf("%s: %v", p.Source, err)
					continue
				}
				if msg := compareEncoding(got, want[i], p); msg != "" {
					failed++
					if failed <= 5 {
						t.Errorf("%s: %s", p.Source, msg)
					}
				}
			}
			if failed > 0 {
				t.Errorf("%d of %d pairs differ from the reference", failed, len(pairs))
			}
		})
	}
}

func compareEncoding(got Encoding, want parityExpected, p parityPair) string {
	if fmt.Sprint(got.IDs) != fmt.Sprint(want.IDs) {
		return fmt.Sprintf("ids\n got %v\nwant %v\nwant tokens %q", got.IDs, want.IDs, want.Tokens)
	}
	if fmt.Sprint(got.TypeIDs) != fmt.Sprint(want.TypeIDs) {
		return fmt.Sprintf("type ids\n got %v\nwant %v", got.TypeIDs, want.TypeIDs)
	}
	pre, hyp := textpos.New(p.Premise), textpos.New(p.Hypothesis)
	for j := range got.IDs {
		if int(got.Seq[j]) != want.SequenceIDs[j] {
			return fmt.Sprintf("token %d: segment %d, want %d", j, got.Seq[j], want.SequenceIDs[j])
		}
		var x textpos.Index
		switch got.Seq[j] {
		case 0:
			x = pre
		case 1:
			x = hyp
		default:
			continue
		}
		s, e := x.Runes(got.Start[j]), x.Runes(got.End[j])
		if s != want.Offsets[j][0] || e != want.Offsets[j][1] {
			return fmt.Sprintf("token %d %q: offsets [%d %d], want %v", j, want.Tokens[j], s, e, want.Offsets[j])
		}
	}
	return ""
}
