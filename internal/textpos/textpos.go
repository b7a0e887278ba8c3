// Package textpos converts between UTF-8 byte offsets, which Go code uses, and Unicode code-point
// offsets, which Python str indexing and Hugging Face offset_mapping use. Every conversion in gainsay
// goes through here.
package textpos

import (
	"unicode"
	"unicode/utf8"
)

// Index maps byte offsets of one string to code-point offsets.
type Index struct {
	s     string
	ascii bool
}

// New indexes s.
func New(s string) Index {
	ascii := true
	for i := 0; i < len(s); i++ {
		if s[i] >= utf8.RuneSelf {
			ascii = false
			break
		}
	}
	return Index{s: s, ascii: ascii}
}

// Runes returns the code-point offset of byte offset b. A b inside a multi-byte character counts the
// characters that start before it.
func (x Index) Runes(b int) int {
	if x.ascii {
		return b
	}
	b = min(max(b, 0), len(x.s))
	return utf8.RuneCountInString(x.s[:b])
}

// Bytes returns the byte offset of code-point offset r (len(s) past the end).
func (x Index) Bytes(r int) int {
	if x.ascii {
		return min(max(r, 0), len(x.s))
	}
	n := 0
	for i := range x.s {
		if n == r {
			return i
		}
		n++
	}
	return len(x.s)
}

// Trim narrows the byte range [start, end) of s by the runes that f matches, at both ends.
func Trim(s string, start, end int, f func(rune) bool) (int, int) {
	start = TrimLeft(s, start, end, f)
	return start, TrimRight(s, start, end, f)
}

// TrimLeft moves start past the runes that f matches (not beyond end).
func TrimLeft(s string, start, end int, f func(rune) bool) int {
	for start < end {
		r, n := utf8.DecodeRuneInString(s[start:])
		if !f(r) {
			break
		}
		start += n
	}
	return start
}

// TrimRight moves end back over the runes that f matches (not before start).
func TrimRight(s string, start, end int, f func(rune) bool) int {
	for end > start {
		r, n := utf8.DecodeLastRuneInString(s[:end])
		if !f(r) {
			break
		}
		end -= n
	}
	return end
}

// OnlyPunct reports whether s is made of punctuation and symbols only (false for "").
func OnlyPunct(s string) bool {
	for _, r := range s {
		if !unicode.IsPunct(r) && !unicode.IsSymbol(r) {
			return false
		}
	}
	return s != ""
}

// Range is a byte range [Start, End) of a text.
type Range struct {
	Start, End int
}

// FirstInvalidUTF8 is the byte offset of the first invalid UTF-8 sequence in data (len(data) if none).
func FirstInvalidUTF8(data []byte) int {
	for i := 0; i < len(data); {
		r, n := utf8.DecodeRune(data[i:])
		if r == utf8.RuneError && n <= 1 {
			return i
		}
		i += n
	}
	return len(data)
}
