package profile

import (
	"testing"
	"unicode/utf8"
)

// The profile reader never panics, and a profile it accepts has facts with ids and texts, in valid
// UTF-8. Seeds: testdata/fuzz/FuzzParseProfile and the cases below.
func FuzzParseProfile(f *testing.F) {
	f.Add([]byte("character: m\nfacts:\n  - id: home\n    text: I live in the lighthouse.\n"), "yaml")
	f.Add([]byte(`{"character": "m", "facts": [{"id": "a", "text": "x", "tags": ["t"]}]}`), "json")
	f.Add([]byte("# a comment\nI swim.\n\nI row.\n"), "text")
	f.Add([]byte("character: [\nfacts: {"), "yaml")
	f.Add([]byte("\xef\xbb\xbfcharacter: m\nfacts:\n  - {id: a, text: \xff}\n"), "yaml")
	f.Fuzz(func(t *testing.T, data []byte, format string) {
		p, err := ParseProfile("fuzz", data, Format(format))
		if err != nil {
			return
		}
		if len(p.Facts) == 0 {
			t.Fatal("accepted a profile without facts")
		}
		for _, fact := range p.Facts {
			if fact.ID == "" || fact.Text == "" || !utf8.ValidString(fact.Text) {
				t.Fatalf("accepted fact %+v", fact)
			}
		}
	})
}
