package tokenizer

import (
	"encoding/json"
	"fmt"
	"unicode"
	"unicode/utf8"

	"github.com/dlclark/regexp2/v2"
)

// segment is one word of a pre-tokenised text. whole marks the text before any split: the
// reference's Metaspace "first" scheme asks whether a segment starts where the original text does.
type segment struct {
	t     text
	whole bool
}

func (s segment) startsText() bool { return s.whole || (len(s.t) > 0 && s.t[0].start == 0) }

// preTokenizer cuts segments into smaller ones (or rewrites them).
type preTokenizer interface {
	preTokenize([]segment) ([]segment, error)
}

type preTokenizerFunc func([]segment) ([]segment, error)

func (f preTokenizerFunc) preTokenize(s []segment) ([]segment, error) { return f(s) }

// behavior is the reference's SplitDelimiterBehavior: what happens to the matches of a split.
type behavior int

const (
	removed behavior = iota
	isolated
	mergedWithPrevious
	mergedWithNext
	contiguous
)

func parseBehavior(s string) (behavior, error) {
	switch s {
	case "", "Isolated":
		return isolated, nil
	case "Removed":
		return removed, nil
	case "MergedWithPrevious":
		return mergedWithPrevious, nil
	case "MergedWithNext":
		return mergedWithNext, nil
	case "Contiguous":
		return contiguous, nil
	}
	return 0, unsupported("split behavior %q", s)
}

// split cuts one segment at its matches according to b, as the reference's NormalizedString::split;
// empty pieces are dropped.
func split(s segment, ms []match, b behavior) []segment {
	type piece struct {
		start, end int
		remove     bool
	}
	var ps []piece
	prev := false
	switch b {
	case isolated:
		for _, m := range ms {
			ps = append(ps, piece{m.start, m.end, false})
		}
	case removed:
		for _, m := range ms {
			ps = append(ps, piece{m.start, m.end, m.isMatch})
		}
	case contiguous:
		for _, m := range ms {
			if m.isMatch == prev && len(ps) > 0 {
				ps[len(ps)-1].end = m.end
			} else {
				ps = append(ps, piece{m.start, m.end, false})
			}
			prev = m.isMatch
		}
	case mergedWithPrevious:
		for _, m := range ms {
			if m.isMatch && !prev && len(ps) > 0 {
				ps[len(ps)-1].end = m.end
			} else {
				ps = append(ps, piece{m.start, m.end, false})
			}
			prev = m.isMatch
		}
	case mergedWithNext:
		for i := len(ms) - 1; i >= 0; i-- {
			m := ms[i]
			if m.isMatch && !prev && len(ps) > 0 {
				ps[len(ps)-1].start = m.start
			} else {
				ps = append(ps, piece{m.start, m.end, false})
			}
			prev = m.isMatch
		}
		for i, j := 0, len(ps)-1; i < j; i, j = i+1, j-1 {
			ps[i], ps[j] = ps[j], ps[i]
		}
	}
	var out []segment
	for _, p := range ps {
		if !p.remove && p.end > p.start {
			out = append(out, segment{t: s.t[p.start:p.end]})
		}
	}
	return out
}

// charMatches marks every character for which f is true as a match of its own (the reference's
// Pattern for a char predicate).
func charMatches(t text, f func(rune) bool) []match {
	var out []match
	last := 0
	for i, c := range t {
		if f(c.r) {
			if last < i {
				out = append(out, match{last, i, false})
			}
			out = append(out, match{i, i + 1, true})
			last = i + 1
		}
	}
	if last < len(t) {
		out = append(out, match{last, len(t), false})
	}
	return out
}

// splitBy is a pre-tokenizer that splits every segment at the characters f matches.
func splitBy(f func(rune) bool, b behavior) preTokenizerFunc {
	return func(segs []segment) ([]segment, error) {
		var out []segment
		for _, s := range segs {
			out = append(out, split(s, charMatches(s.t, f), b)...)
		}
		return out, nil
	}
}

// splitRegexp is a pre-tokenizer that splits every segment at the matches of re.
func splitRegexp(re *regexp2.Regexp, b behavior, invert bool) preTokenizerFunc {
	return func(segs []segment) ([]segment, error) {
		var out []segment
		for _, s := range segs {
			ms, err := findMatches(re, s.t, invert)
			if err != nil {
				return nil, err
			}
			out = append(out, split(s, ms, b)...)
		}
		return out, nil
	}
}

// isBertPunct is the reference's punctuation test: ASCII punctuation (which includes symbols such as $
// and +) or a Unicode punctuation category.
func isBertPunct(r rune) bool {
	if r < utf8.RuneSelf {
		return (r >= 33 && r <= 47) || (r >= 58 && r <= 64) || (r >= 91 && r <= 96) || (r >= 123 && r <= 126)
	}
	return unicode.IsPunct(r)
}

func isRustWhitespace(r rune) bool { return unicode.Is(unicode.White_Space, r) }

// isWordChar is \w in the reference's regex engine: letters, marks, digits and connector punctuation.
func isWordChar(r rune) bool {
	return unicode.IsLetter(r) || unicode.IsMark(r) || unicode.IsDigit(r) || unicode.Is(unicode.Pc, r)
}

// gpt2Pattern is the regular expression of the ByteLevel pre-tokenizer (GPT-2's).
const gpt2Pattern = `'s|'t|'re|'ve|'m|'ll|'d| ?\p{L}+| ?\p{N}+| ?[^\s\p{L}\p{N}]+|\s+(?!\S)|\s+`

func buildPreTokenizer(raw json.RawMessage, path string) (preTokenizer, error) {
	none := preTokenizerFunc(func(s []segment) ([]segment, error) { return s, nil })
	return build(raw, path, preTokenizer(none), newPreTokenizer)
}

func newPreTokenizer(typ string, raw json.RawMessage, path string) (preTokenizer, error) {
	switch typ {
	case "BertPreTokenizer":
		ws, punct := splitBy(isRustWhitespace, removed), splitBy(isBertPunct, isolated)
		return strict(raw, preTokenizerFunc(func(s []segment) ([]segment, error) {
			s, _ = ws(s)
			return punct(s)
		}))
	case "WhitespaceSplit":
		return strict(raw, splitBy(isRustWhitespace, removed))
	case "Whitespace":
		return strict(raw, preTokenizerFunc(whitespace))
	case "Punctuation":
		var c struct {
			Type     string `json:"type"`
			Behavior string `json:"behavior"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		b, err := parseBehavior(c.Behavior)
		if err != nil {
			return nil, err
		}
		return splitBy(isBertPunct, b), nil
	case "Digits":
		var c struct {
			Type             string `json:"type"`
			IndividualDigits bool   `json:"individual_digits"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		b := contiguous
		if c.IndividualDigits {
			b = isolated
		}
		return splitBy(unicode.IsNumber, b), nil // Rust's char::is_numeric: Nd, Nl and No
	case "CharDelimiterSplit":
		var c struct {
			Type      string `json:"type"`
			Delimiter string `json:"delimiter"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		d, n := utf8.DecodeRuneInString(c.Delimiter)
		if n == 0 || n != len(c.Delimiter) {
			return nil, fmt.Errorf("delimiter %q: want one character", c.Delimiter)
		}
		return splitBy(func(r rune) bool { return r == d }, removed), nil
	case "Metaspace":
		return newMetaspace(raw)
	case "Split":
		var c struct {
			Type     string  `json:"type"`
			Pattern  pattern `json:"pattern"`
			Behavior string  `json:"behavior"`
			Invert   bool    `json:"invert"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		re, err := c.Pattern.compile()
		if err != nil {
			return nil, err
		}
		b, err := parseBehavior(c.Behavior)
		if err != nil {
			return nil, err
		}
		return splitRegexp(re, b, c.Invert), nil
	case "ByteLevel":
		var c byteLevelConfig
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		return newByteLevel(c), nil
	case "Sequence":
		var c struct {
			Type          string            `json:"type"`
			PreTokenizers []json.RawMessage `json:"pretokenizers"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		var steps []preTokenizer
		for i, r := range c.PreTokenizers {
			p, err := buildPreTokenizer(r, fmt.Sprintf("%s.pretokenizers[%d]", path, i))
			if err != nil {
				return nil, err
			}
			steps = append(steps, p)
		}
		return preTokenizerFunc(func(s []segment) ([]segment, error) {
			var err error
			for _, p := range steps {
				if s, err = p.preTokenize(s); err != nil {
					return nil, err
				}
			}
			return s, nil
		}), nil
	}
	return nil, unsupported("pre_tokenizer type %q", typ)
}

// whitespace is \w+|[^\w\s]+ : runs of word characters, runs of other non-space characters.
func whitespace(segs []segment) ([]segment, error) {
	var out []segment
	for _, s := range segs {
		w := s.t
		start, kind := 0, 0 // kind 0 none, 1 word, 2 other
		for i, c := range w {
			k := 2
			if isRustWhitespace(c.r) {
				k = 0
			} else if isWordChar(c.r) {
				k = 1
			}
			if k != kind {
				if kind != 0 {
					out = append(out, segment{t: w[start:i]})
				}
				start, kind = i, k
			}
		}
		if kind != 0 {
			out = append(out, segment{t: w[start:]})
		}
	}
	return out, nil
}

// metaspace turns spaces into the replacement character (U+2581 by default), puts one before a
// segment as prepend_scheme says ("always"; "first": only where the segment starts the text;
// "never"), and with split cuts before every replacement character.
type metaspace struct {
	repl          rune
	prepend       string // "always", "first" or "never"
	split         bool
	replaceSpaces bool
}

func newMetaspace(raw json.RawMessage) (preTokenizer, error) {
	var c struct {
		Type           string  `json:"type"`
		Replacement    *string `json:"replacement"`
		PrependScheme  *string `json:"prepend_scheme"`
		AddPrefixSpace *bool   `json:"add_prefix_space"` // before prepend_scheme existed
		Split          *bool   `json:"split"`
		StrRep         *string `json:"str_rep"`
	}
	if err := decodeStrict(raw, &c); err != nil {
		return nil, err
	}
	m := &metaspace{repl: '▁', prepend: "always", split: or(c.Split, true)}
	if c.Replacement != nil {
		r, n := utf8.DecodeRuneInString(*c.Replacement)
		if n == 0 || n != len(*c.Replacement) {
			return nil, fmt.Errorf("replacement %q: want one character", *c.Replacement)
		}
		m.repl = r
	}
	switch {
	case c.PrependScheme != nil:
		switch *c.PrependScheme {
		case "always", "first", "never":
			m.prepend = *c.PrependScheme
		default:
			return nil, unsupported("prepend_scheme %q", *c.PrependScheme)
		}
	case c.AddPrefixSpace != nil && !*c.AddPrefixSpace:
		m.prepend = "never"
	}
	return m, nil
}

func (m *metaspace) preTokenize(segs []segment) ([]segment, error) {
	var out []segment
	for _, s := range segs {
		w := s.t.mapRunes(func(r rune) rune {
			if r == ' ' {
				return m.repl
			}
			return r
		})
		if len(w) > 0 && w[0].r != m.repl && (m.prepend == "always" || (m.prepend == "first" && s.startsText())) {
			w = w.prepend(string(m.repl))
		}
		ns := segment{t: w, whole: s.whole}
		if m.split {
			out = append(out, split(ns, charMatches(w, func(r rune) bool { return r == m.repl }), mergedWithNext)...)
		} else if len(w) > 0 {
			out = append(out, ns)
		}
	}
	return out, nil
}

// byteLevelConfig is the ByteLevel component, which tokenizer.json uses as pre-tokenizer,
// post-processor and decoder with the same fields.
type byteLevelConfig struct {
	Type           string `json:"type"`
	AddPrefixSpace *bool  `json:"add_prefix_space"`
	TrimOffsets    *bool  `json:"trim_offsets"`
	UseRegex       *bool  `json:"use_regex"`
}

// byteLevel is GPT-2's pre-tokenizer: an optional space before each segment, a split by gpt2Pattern
// (use_regex), then every UTF-8 byte mapped to a printable character (all bytes of a character keep
// that character's alignment).
type byteLevel struct {
	addPrefixSpace bool
	re             *regexp2.Regexp
}

func newByteLevel(c byteLevelConfig) *byteLevel {
	b := &byteLevel{addPrefixSpace: or(c.AddPrefixSpace, true)}
	if or(c.UseRegex, true) {
		b.re = regexp2.MustCompile(gpt2Pattern)
	}
	return b
}

func (b *byteLevel) preTokenize(segs []segment) ([]segment, error) {
	var cut []segment
	for _, s := range segs {
		if b.addPrefixSpace && len(s.t) > 0 && s.t[0].r != ' ' {
			s.t = s.t.prepend(" ")
		}
		if b.re == nil {
			cut = append(cut, s)
			continue
		}
		ms, err := findMatches(b.re, s.t, false)
		if err != nil {
			return nil, err
		}
		cut = append(cut, split(s, ms, isolated)...)
	}
	for i, s := range cut {
		out := make(text, 0, len(s.t))
		var buf [utf8.UTFMax]byte
		for _, c := range s.t {
			n := utf8.EncodeRune(buf[:], c.r)
			for _, by := range buf[:n] {
				out = append(out, char{byteChar(by), c.start, c.end})
			}
		}
		cut[i].t = out
	}
	return cut, nil
}

// byteChar is GPT-2's bytes_to_unicode: printable bytes stand for themselves, the others (0-32,
// 127-160 and 173) for the characters from U+0100 on, in byte order.
func byteChar(b byte) rune {
	switch {
	case b <= ' ':
		return 256 + rune(b)
	case b >= 127 && b <= 160:
		return 256 + 33 + rune(b-127)
	case b == 173:
		return 256 + 33 + 34
	}
	return rune(b)
}

// charByte inverts byteChar; ok is false for a character that stands for no byte.
func charByte(r rune) (b byte, ok bool) {
	switch {
	case r >= 256 && r < 256+33:
		return byte(r - 256), true
	case r >= 256+33 && r < 256+33+34:
		return byte(r-256-33) + 127, true
	case r == 256+33+34:
		return 173, true
	case r < 256 && byteChar(byte(r)) == r:
		return byte(r), true
	}
	return 0, false
}
