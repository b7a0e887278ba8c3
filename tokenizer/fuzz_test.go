package tokenizer

import (
	"testing"
)

// For every layout, tokens' offsets lie inside their text and do not go backwards, and a pair
// encoding holds both texts' tokens between the template's special tokens. Seeds:
// testdata/fuzz/FuzzEncodePair.
func FuzzEncodePair(f *testing.F) {
	var toks []*Tokenizer
	for _, fam := range []string{"wordpiece", "bpe", "unigram", "splitbpe", "splitbpe-nfc", "spbpe", "metaspace-bpe"} {
		tk, err := LoadFile("testdata/tokenizers/" + fam + "/tokenizer.json")
		if err != nil {
			f.Fatal(err)
		}
		toks = append(toks, tk)
	}
	f.Add("I live in Zürich.", "I have never seen the sea 🌊!")
	f.Add("  spaces   and\ttabs\n\n", "<|im_start|>x<|im_end|> [SEP] <s>")
	f.Add("e\u0301 ｆｕｌｌ ﬁ 我住", "\xff\xfe bad bytes")
	f.Fuzz(func(t *testing.T, a, b string) {
		for _, tk := range toks {
			for _, enc := range []func(string) ([]Piece, error){tk.Tokenize, tk.EncodeText} {
				for _, s := range []string{a, b} {
					pieces, err := enc(s)
					if err != nil {
						t.Fatalf("%s: %q: %v", tk.Family(), s, err)
					}
					last := 0
					for _, p := range pieces {
						if p.Start < 0 || p.End > len(s) || p.Start > p.End || p.Start < last {
							t.Fatalf("%s: %q: piece %+v after offset %d", tk.Family(), s, p, last)
						}
						last = p.Start
					}
				}
			}
			e, err := tk.EncodePair(a, b)
			if err != nil {
				t.Fatal(err)
			}
			if n := len(e.IDs); len(e.TypeIDs) != n || len(e.Seq) != n || len(e.Start) != n || len(e.End) != n {
				t.Fatalf("%s: encoding fields of different lengths", tk.Family())
			}
			seq := int8(-1)
			for i, s := range e.Seq {
				if s >= 0 && s < seq {
					t.Fatalf("%s: sequence %d after %d at token %d", tk.Family(), s, seq, i)
				}
				if s >= 0 {
					seq = s
				}
			}
		}
	})
}
