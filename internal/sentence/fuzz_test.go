package sentence

import (
	"testing"
	"unicode"
	"unicode/utf8"
)

// Sentences are ordered, disjoint, non-empty ranges of the text, trimmed of white space, and every
// character outside them is white space. Seeds: testdata/fuzz/FuzzSplit.
func FuzzSplit(f *testing.F) {
	for _, s := range []string{"I live here. Dr. Ada lives there!", "Never!\" she said.\n\nOk", "e.g. the 3.5 m boat", "。你好？", "\xff. A."} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, text string) {
		last := 0
		for _, r := range Split(text) {
			if r.Start < last || r.End <= r.Start || r.End > len(text) {
				t.Fatalf("range %v after %d in %q", r, last, text)
			}
			for _, c := range text[last:r.Start] {
				if !unicode.IsSpace(c) {
					t.Fatalf("%q left out of every sentence of %q", c, text)
				}
			}
			first, _ := utf8.DecodeRuneInString(text[r.Start:])
			end, _ := utf8.DecodeLastRuneInString(text[:r.End])
			if unicode.IsSpace(first) || unicode.IsSpace(end) {
				t.Fatalf("sentence %q not trimmed", text[r.Start:r.End])
			}
			last = r.End
		}
		for _, c := range text[last:] {
			if !unicode.IsSpace(c) {
				t.Fatalf("%q after the last sentence of %q", c, text)
			}
		}
	})
}
