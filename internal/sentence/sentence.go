// Package sentence splits replies into sentences: the Unicode sentence boundaries of UAX #29, with
// the few corrections that chat text needs (abbreviations, initials, lowercase continuations).
package sentence

import (
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/rivo/uniseg"

	"github.com/gainsay/gainsay/internal/textpos"
)

// boundaries splits text into sentences by the Unicode sentence-boundary rules (UAX #29), as
// github.com/rivo/uniseg implements them, without any change: every byte belongs to exactly one
// segment, trailing spaces and line ends included.
func boundaries(text string) []textpos.Range {
	var out []textpos.Range
	state := -1
	pos := 0
	for rest := text; len(rest) > 0; {
		var seg string
		seg, rest, state = uniseg.FirstSentenceInString(rest, state)
		out = append(out, textpos.Range{Start: pos, End: pos + len(seg)})
		pos += len(seg)
	}
	return out
}

// abbreviations that end with a full stop but rarely end a sentence (common practice in sentence
// splitters; this list is ours). UAX #29 already keeps "e.g. the" together (no break before a lowercase
// letter) and decimals such as "3.5"; what it splits is an abbreviation before a capital: "Dr. Ada".
var abbreviations = map[string]bool{
	"mr": true, "mrs": true, "ms": true, "mx": true, "dr": true, "prof": true, "st": true, "mt": true,
	"jr": true, "sr": true, "vs": true, "etc": true, "e.g": true, "i.e": true, "approx": true, "fig": true,
	"no": true, "nos": true, "vol": true, "inc": true, "ltd": true, "co": true, "capt": true, "col": true,
	"gen": true, "lt": true, "sgt": true, "rev": true, "hon": true, "ave": true, "rd": true, "dept": true,
	"est": true, "jan": true, "feb": true, "mar": true, "apr": true, "jun": true, "jul": true,
	"aug": true, "sep": true, "sept": true, "oct": true, "nov": true, "dec": true, "cf": true, "al": true,
}

// endsWithAbbreviation reports whether a sentence (already trimmed) ends with a known abbreviation or
// a single-letter initial followed by a full stop ("J. R. Tolkien").
func endsWithAbbreviation(s string) bool {
	if !strings.HasSuffix(s, ".") {
		return false
	}
	body := s[:len(s)-1]
	i := strings.LastIndexFunc(body, func(r rune) bool { return unicode.IsSpace(r) || r == '(' || r == '"' })
	word := body[i+1:]
	if i >= 0 {
		_, n := utf8.DecodeRuneInString(body[i:])
		word = body[i+n:]
	}
	if word == "" {
		return false
	}
	if utf8.RuneCountInString(word) == 1 {
		r, _ := utf8.DecodeRuneInString(word)
		return unicode.IsUpper(r)
	}
	return abbreviations[strings.ToLower(word)]
}

// Split splits text into sentences: UAX #29 boundaries, then a boundary is dropped right after a
// known abbreviation or an initial, and before a segment that starts with a lowercase letter ("Never!"
// she said), unless a line break separates them. Each sentence is trimmed of surrounding white space;
// empty segments are left out. Offsets are UTF-8 bytes into text.
func Split(text string) []textpos.Range {
	var out []textpos.Range
	merge := false
	for _, b := range boundaries(text) {
		s := trimSpan(text, b)
		if s.Start >= s.End {
			continue
		}
		first, _ := utf8.DecodeRuneInString(text[s.Start:])
		if (merge || unicode.IsLower(first)) && len(out) > 0 && !strings.ContainsAny(text[out[len(out)-1].End:s.Start], "\n\r\u2029\u0085") {
			out[len(out)-1].End = s.End
		} else {
			out = append(out, s)
		}
		merge = endsWithAbbreviation(text[out[len(out)-1].Start:out[len(out)-1].End])
	}
	return out
}

func trimSpan(text string, s textpos.Range) textpos.Range {
	s.Start, s.End = textpos.Trim(text, s.Start, s.End, unicode.IsSpace)
	return s
}
