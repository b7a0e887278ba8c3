package tokenizer

import (
	"strings"
	"unicode"
	"unicode/utf8"

	"golang.org/x/text/unicode/norm"
)

// char is one character of a normalised text and the UTF-8 byte range of the original text it came
// from. The reference aligns every normalised character with a range of the original this way.
type char struct {
	r          rune
	start, end int
}

// text is a normalised text, or a word of one.
type text []char

func newText(s string) text {
	out := make(text, 0, len(s))
	// An invalid byte reads as U+FFFD but spans one byte of s, not U+FFFD's three.
	for i := 0; i < len(s); {
		r, w := utf8.DecodeRuneInString(s[i:])
		out = append(out, char{r, i, i + w})
		i += w
	}
	return out
}

func (t text) String() string {
	var b strings.Builder
	for _, c := range t {
		b.WriteRune(c.r)
	}
	return b.String()
}

func (t text) runes() []rune {
	out := make([]rune, len(t))
	for i, c := range t {
		out[i] = c.r
	}
	return out
}

// charIndex maps every byte offset of t.String() to the index of the character that holds it;
// the entry past the end is len(t). Models and patterns work on strings; this is how their byte
// offsets find their way back to characters, and through them to the original text.
func (t text) charIndex() []int {
	n := 0
	for _, c := range t {
		n += utf8.RuneLen(c.r)
	}
	at := make([]int, n+1)
	pos := 0
	for i, c := range t {
		for k := utf8.RuneLen(c.r); k > 0; k-- {
			at[pos] = i
			pos++
		}
	}
	at[n] = len(t)
	return at
}

// span is the original byte range covered by the characters [from, to) of t.
func (t text) span(from, to int) (start, end int) {
	return t[from].start, t[to-1].end
}

// change is one output character of a transformation, in the reference's terms: 0 replaces the next
// input character (and takes its alignment), n < 0 also consumes the n following input characters,
// 1 is inserted and takes the alignment of the input character before it.
type change struct {
	r rune
	n int
}

// transform applies changes to t after skipping `removed` leading characters, as the reference's
// NormalizedString::transform does.
func (t text) transform(changes []change, removed int) text {
	out := make(text, 0, len(changes))
	idx := removed
	for _, c := range changes {
		var a char
		if c.n > 0 {
			if idx > 0 {
				a = t[idx-1]
			}
		} else if idx < len(t) {
			a = t[idx]
			idx += 1 - c.n
		}
		out = append(out, char{c.r, a.start, a.end})
	}
	return out
}

func (t text) filter(keep func(rune) bool) text {
	out := t[:0:0]
	for _, c := range t {
		if keep(c.r) {
			out = append(out, c)
		}
	}
	return out
}

func (t text) mapRunes(f func(rune) rune) text {
	out := make(text, len(t))
	for i, c := range t {
		out[i] = char{f(c.r), c.start, c.end}
	}
	return out
}

// lowercase maps each character to its full lowercase, as Rust's char::to_lowercase does: one-to-one
// except U+0130, the only unconditional one-to-many lowercase mapping in Unicode.
func (t text) lowercase() text {
	out := make(text, 0, len(t))
	for _, c := range t {
		if c.r == 'İ' {
			out = append(out, char{'i', c.start, c.end}, char{'\u0307', c.start, c.end})
			continue
		}
		out = append(out, char{unicode.ToLower(c.r), c.start, c.end})
	}
	return out
}

// unicodeNorm applies a Unicode normalisation form segment by segment; within a segment the output
// characters take the alignments of the input characters in order, extra ones that of the last.
func (t text) unicodeNorm(f norm.Form) text {
	out := make(text, 0, len(t))
	s := t.String()
	at := t.charIndex()
	var it norm.Iter
	it.InitString(f, s)
	for !it.Done() {
		from := it.Pos()
		seg := it.Next()
		to := it.Pos()
		in := t[at[from]:at[to]]
		k := 0
		for _, r := range string(seg) {
			a := in[min(k, len(in)-1)]
			out = append(out, char{r, a.start, a.end})
			k++
		}
	}
	return out
}

// prepend puts p before the text, as the reference does: all of p takes the first character's
// alignment. An empty text stays empty.
func (t text) prepend(p string) text {
	if len(t) == 0 || p == "" {
		return t
	}
	out := make(text, 0, len(t)+utf8.RuneCountInString(p))
	for _, r := range p {
		out = append(out, char{r, t[0].start, t[0].end})
	}
	return append(out, t...)
}

// replaceRanges replaces the character ranges [a, b) of t (sorted, not overlapping) with content;
// inserted characters take the alignment of the last character they replace, as the reference's
// NormalizedString::replace does.
func (t text) replaceRanges(ranges [][2]int, content string) text {
	if len(ranges) == 0 {
		return t
	}
	out := make(text, 0, len(t))
	last := 0
	for _, r := range ranges {
		a, b := r[0], r[1]
		out = append(out, t[last:a]...)
		var al char
		if b > 0 {
			al = t[b-1]
		}
		for _, c := range content {
			out = append(out, char{c, al.start, al.end})
		}
		last = b
	}
	return append(out, t[last:]...)
}
