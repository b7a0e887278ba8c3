package nli

import (
	"fmt"
	"regexp"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/rivo/uniseg"
	"github.com/sugarme/tokenizer/spm"
	"golang.org/x/text/unicode/norm"
)

// This file re-implements the normalisers of Hugging Face tokenizers that WordPiece and Unigram models
// use, with the reference's alignment rules, because github.com/sugarme/tokenizer v0.3.0 differs from the
// reference on them: its BertNormalizer strips accents without decomposing first ("Zürich" stays
// "zürich" and becomes [UNK]), and its Precompiled normaliser panics on combining marks. The parity tests
// (tokenizer_parity_test.go) check the result against the reference package.

// nchar is one character of a normalised text and the UTF-8 byte range of the original text it came
// from. The reference aligns every normalised character to one original character this way.
type nchar struct {
	r          rune
	start, end int
}

type ntext []nchar

func newNText(s string) ntext {
	out := make(ntext, 0, len(s))
	for i, r := range s {
		out = append(out, nchar{r, i, i + utf8.RuneLen(r)})
	}
	return out
}

func (t ntext) String() string {
	var b strings.Builder
	for _, c := range t {
		b.WriteRune(c.r)
	}
	return b.String()
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
func (t ntext) transform(changes []change, removed int) ntext {
	out := make(ntext, 0, len(changes))
	idx := removed
	for _, c := range changes {
		var a nchar
		if c.n > 0 {
			if idx > 0 {
				a = t[idx-1]
			}
		} else if idx < len(t) {
			a = t[idx]
			idx += 1 - c.n
		}
		out = append(out, nchar{c.r, a.start, a.end})
	}
	return out
}

func (t ntext) filter(keep func(rune) bool) ntext {
	out := t[:0:0]
	for _, c := range t {
		if keep(c.r) {
			out = append(out, c)
		}
	}
	return out
}

func (t ntext) mapRunes(f func(rune) rune) ntext {
	out := make(ntext, len(t))
	for i, c := range t {
		out[i] = nchar{f(c.r), c.start, c.end}
	}
	return out
}

// lowercase maps each character to its full lowercase, as Rust's char::to_lowercase does: one-to-one
// except U+0130, the only unconditional one-to-many lowercase mapping in Unicode.
func (t ntext) lowercase() ntext {
	out := make(ntext, 0, len(t))
	for _, c := range t {
		if c.r == 'İ' {
			out = append(out, nchar{'i', c.start, c.end}, nchar{'\u0307', c.start, c.end})
			continue
		}
		out = append(out, nchar{unicode.ToLower(c.r), c.start, c.end})
	}
	return out
}

// unicodeNorm applies a Unicode normalisation form segment by segment; within a segment the output
// characters take the alignments of the input characters in order, extra ones that of the last.
func (t ntext) unicodeNorm(f norm.Form) ntext {
	out := make(ntext, 0, len(t))
	s := t.String()
	var it norm.Iter
	it.InitString(f, s)
	// Map byte offsets of s back to character indexes of t.
	charAt := make([]int, len(s)+1)
	pos := 0
	for i, c := range t {
		n := utf8.RuneLen(c.r)
		for k := 0; k < n; k++ {
			charAt[pos+k] = i
		}
		pos += n
	}
	charAt[len(s)] = len(t)
	for !it.Done() {
		from := it.Pos()
		seg := it.Next()
		to := it.Pos()
		in := t[charAt[from]:charAt[to]]
		k := 0
		for _, r := range string(seg) {
			a := in[min(k, len(in)-1)]
			out = append(out, nchar{r, a.start, a.end})
			k++
		}
	}
	return out
}

// isOther is the reference's is_control test: Unicode categories Cc, Cf, Co, Cs and unassigned (Cn).
func isOther(r rune) bool {
	if unicode.In(r, unicode.Cc, unicode.Cf, unicode.Co, unicode.Cs) {
		return true
	}
	return !unicode.In(r, unicode.L, unicode.M, unicode.N, unicode.P, unicode.S, unicode.Z, unicode.C)
}

func isBertWhitespace(r rune) bool {
	return r == '\t' || r == '\n' || r == '\r' || unicode.IsSpace(r) || unicode.Is(unicode.White_Space, r)
}

func isCJK(r rune) bool {
	switch {
	case r >= 0x4E00 && r <= 0x9FFF, r >= 0x3400 && r <= 0x4DBF, r >= 0x20000 && r <= 0x2A6DF,
		r >= 0x2A700 && r <= 0x2B73F, r >= 0x2B740 && r <= 0x2B81F, r >= 0x2B920 && r <= 0x2CEAF,
		r >= 0xF900 && r <= 0xFAFF, r >= 0x2F800 && r <= 0x2FA1F:
		return true
	}
	return false
}

// normalizer is one step of a tokenizer.json "normalizer".
type normalizer func(ntext) ntext

func buildNormalizer(cfg any) (normalizer, error) {
	m, ok := cfg.(map[string]any)
	if cfg == nil {
		return func(t ntext) ntext { return t }, nil
	}
	if !ok {
		return nil, fmt.Errorf("normalizer: not an object")
	}
	typ, _ := m["type"].(string)
	flag := func(key string, def bool) bool {
		if v, ok := m[key].(bool); ok {
			return v
		}
		return def
	}
	switch typ {
	case "BertNormalizer":
		clean, chinese, lower := flag("clean_text", true), flag("handle_chinese_chars", true), flag("lowercase", true)
		// strip_accents null means: strip when lowercasing.
		strip := flag("strip_accents", lower)
		return func(t ntext) ntext {
			if clean {
				t = t.filter(func(r rune) bool {
					return r != 0 && r != 0xFFFD && (r == '\t' || r == '\n' || r == '\r' || !isOther(r))
				})
				t = t.mapRunes(func(r rune) rune {
					if isBertWhitespace(r) {
						return ' '
					}
					return r
				})
			}
			if chinese {
				var ch []change
				for _, c := range t {
					if isCJK(c.r) {
						ch = append(ch, change{' ', 0}, change{c.r, 1}, change{' ', 1})
					} else {
						ch = append(ch, change{c.r, 0})
					}
				}
				t = t.transform(ch, 0)
			}
			if strip {
				t = t.unicodeNorm(norm.NFD).filter(func(r rune) bool { return !unicode.Is(unicode.Mn, r) })
			}
			if lower {
				t = t.lowercase()
			}
			return t
		}, nil
	case "Lowercase":
		return ntext.lowercase, nil
	case "StripAccents":
		return func(t ntext) ntext { return t.filter(func(r rune) bool { return !unicode.Is(unicode.Mn, r) }) }, nil
	case "NFC", "NFD", "NFKC", "NFKD":
		f := map[string]norm.Form{"NFC": norm.NFC, "NFD": norm.NFD, "NFKC": norm.NFKC, "NFKD": norm.NFKD}[typ]
		return func(t ntext) ntext { return t.unicodeNorm(f) }, nil
	case "Strip", "StripNormalizer":
		left, right := flag("left", flag("strip_left", true)), flag("right", flag("strip_right", true))
		return func(t ntext) ntext {
			for left && len(t) > 0 && unicode.Is(unicode.White_Space, t[0].r) {
				t = t[1:]
			}
			for right && len(t) > 0 && unicode.Is(unicode.White_Space, t[len(t)-1].r) {
				t = t[:len(t)-1]
			}
			return t
		}, nil
	case "Prepend":
		p, _ := m["prepend"].(string)
		return func(t ntext) ntext { return t.prepend(p) }, nil
	case "Replace":
		return buildReplace(m)
	case "Precompiled":
		return buildPrecompiled(m)
	case "Sequence":
		list, _ := m["normalizers"].([]any)
		steps := make([]normalizer, 0, len(list))
		for i, c := range list {
			n, err := buildNormalizer(c)
			if err != nil {
				return nil, fmt.Errorf("normalizers[%d]: %w", i, err)
			}
			steps = append(steps, n)
		}
		return func(t ntext) ntext {
			for _, n := range steps {
				t = n(t)
			}
			return t
		}, nil
	default:
		return nil, fmt.Errorf("normalizer type %q is not supported", typ)
	}
}

// prepend puts p before the text, as the reference does: all of p and the first character share the
// first character's alignment. An empty text stays empty.
func (t ntext) prepend(p string) ntext {
	if len(t) == 0 || p == "" {
		return t
	}
	out := make(ntext, 0, len(t)+utf8.RuneCountInString(p))
	for _, r := range p {
		out = append(out, nchar{r, t[0].start, t[0].end})
	}
	return append(out, t...)
}

// pattern reads a tokenizer.json pattern ({"String": s} or {"Regex": re}) as a regular expression.
func pattern(v any) (*regexp.Regexp, error) {
	m, _ := v.(map[string]any)
	if s, ok := m["String"].(string); ok {
		return regexp.MustCompile(regexp.QuoteMeta(s)), nil
	}
	if s, ok := m["Regex"].(string); ok {
		re, err := regexp.Compile(s)
		if err != nil {
			return nil, fmt.Errorf("pattern %q: %w", s, err)
		}
		return re, nil
	}
	return nil, fmt.Errorf("pattern: want String or Regex")
}

func buildReplace(m map[string]any) (normalizer, error) {
	re, err := pattern(m["pattern"])
	if err != nil {
		return nil, fmt.Errorf("Replace: %w", err)
	}
	content, _ := m["content"].(string)
	return func(t ntext) ntext {
		s := t.String()
		matches := re.FindAllStringIndex(s, -1)
		if len(matches) == 0 {
			return t
		}
		// Character index of each byte offset of s.
		charAt := make([]int, len(s)+1)
		pos := 0
		for i, c := range t {
			n := utf8.RuneLen(c.r)
			for k := 0; k < n; k++ {
				charAt[pos+k] = i
			}
			pos += n
		}
		charAt[len(s)] = len(t)
		out := make(ntext, 0, len(t))
		last := 0
		for _, mt := range matches {
			a, b := charAt[mt[0]], charAt[mt[1]]
			out = append(out, t[last:a]...)
			// Inserted characters take the alignment of the last character they replace.
			var al nchar
			if b > 0 {
				al = t[b-1]
			}
			for _, r := range content {
				out = append(out, nchar{r, al.start, al.end})
			}
			last = b
		}
		return append(out, t[last:]...)
	}, nil
}

// buildPrecompiled reads a SentencePiece precompiled character map (base64 in tokenizer.json) and
// applies it as the reference does: grapheme by grapheme (under 6 bytes) or else character by character,
// each replaced by the first entry of the map that is a prefix of it.
func buildPrecompiled(m map[string]any) (normalizer, error) {
	b64, _ := m["precompiled_charsmap"].(string)
	if b64 == "" {
		return func(t ntext) ntext { return t }, nil
	}
	data, err := spm.FromBase64(b64)
	if err != nil {
		return nil, fmt.Errorf("Precompiled: %w", err)
	}
	if len(data) < 4 {
		return nil, fmt.Errorf("Precompiled: charsmap too short")
	}
	blob, trie := spm.Parse(data)
	normalized := string(blob)
	lookup := func(s string) (string, bool) {
		pos := 0
		unit := trie[pos]
		pos ^= int(unit.Offset())
		for i := 0; i < len(s); i++ {
			c := s[i]
			if c == 0 {
				break
			}
			pos ^= int(c)
			if pos < 0 || pos >= len(trie) {
				return "", false
			}
			unit = trie[pos]
			if unit.Label() != uint(c) {
				return "", false
			}
			pos ^= int(unit.Offset())
			if pos < 0 || pos >= len(trie) {
				return "", false
			}
			if unit.HasLeaf() {
				at := trie[pos].Value()
				if at < 0 || at > len(normalized) {
					return "", false
				}
				end := strings.IndexByte(normalized[at:], 0)
				if end < 0 {
					end = len(normalized) - at
				}
				return normalized[at : at+end], true
			}
		}
		return "", false
	}
	return func(t ntext) ntext {
		s := t.String()
		var changes []change
		modified := false
		replace := func(old, repl string) {
			modified = true
			oldN, newN := utf8.RuneCountInString(old), utf8.RuneCountInString(repl)
			for _, r := range repl {
				changes = append(changes, change{r, 0})
			}
			switch d := newN - oldN; {
			case d > 0:
				for i := len(changes) - 1; i >= len(changes)-d && i >= 0; i-- {
					changes[i].n = 1
				}
			case d < 0:
				// An empty replacement folds the removal into the character before, as the reference does.
				if len(changes) > 0 {
					changes[len(changes)-1].n += d
				}
			}
		}
		g := uniseg.NewGraphemes(s)
		for g.Next() {
			gr := g.Str()
			if len(gr) < 6 {
				if repl, ok := lookup(gr); ok {
					replace(gr, repl)
					continue
				}
			}
			for _, r := range gr {
				part := string(r)
				if repl, ok := lookup(part); ok {
					replace(part, repl)
				} else {
					changes = append(changes, change{r, 0})
				}
			}
		}
		if !modified {
			return t
		}
		return t.transform(changes, 0)
	}, nil
}
