package tokenizer

import (
	"encoding/json"
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/dlclark/regexp2/v2"
	"github.com/rivo/uniseg"
	"github.com/sugarme/tokenizer/spm"
	"golang.org/x/text/unicode/norm"
)

// normalizer rewrites a text, keeping each character's alignment with the original.
type normalizer interface {
	normalize(text) (text, error)
}

type normalizerFunc func(text) text

func (f normalizerFunc) normalize(t text) (text, error) { return f(t), nil }

func identity() normalizer { return normalizerFunc(func(t text) text { return t }) }

func buildNormalizer(raw json.RawMessage, path string) (normalizer, error) {
	return build(raw, path, identity(), newNormalizer)
}

func newNormalizer(typ string, raw json.RawMessage, path string) (normalizer, error) {
	switch typ {
	case "BertNormalizer":
		var c struct {
			Type               string `json:"type"`
			CleanText          *bool  `json:"clean_text"`
			HandleChineseChars *bool  `json:"handle_chinese_chars"`
			StripAccents       *bool  `json:"strip_accents"`
			Lowercase          *bool  `json:"lowercase"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		b := bertNormalizer{clean: or(c.CleanText, true), chinese: or(c.HandleChineseChars, true), lower: or(c.Lowercase, true)}
		b.strip = or(c.StripAccents, b.lower) // null means: strip when lowercasing
		return b, nil
	case "Lowercase":
		return strict(raw, normalizerFunc(text.lowercase))
	case "StripAccents":
		return strict(raw, normalizerFunc(stripMarks))
	case "NFC", "NFD", "NFKC", "NFKD":
		f := map[string]norm.Form{"NFC": norm.NFC, "NFD": norm.NFD, "NFKC": norm.NFKC, "NFKD": norm.NFKD}[typ]
		return strict(raw, normalizerFunc(func(t text) text { return t.unicodeNorm(f) }))
	case "Strip":
		var c struct {
			Type  string `json:"type"`
			Left  *bool  `json:"strip_left"`
			Right *bool  `json:"strip_right"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		left, right := or(c.Left, true), or(c.Right, true)
		return normalizerFunc(func(t text) text {
			for left && len(t) > 0 && unicode.Is(unicode.White_Space, t[0].r) {
				t = t[1:]
			}
			for right && len(t) > 0 && unicode.Is(unicode.White_Space, t[len(t)-1].r) {
				t = t[:len(t)-1]
			}
			return t
		}), nil
	case "Prepend":
		var c struct {
			Type    string `json:"type"`
			Prepend string `json:"prepend"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		return normalizerFunc(func(t text) text { return t.prepend(c.Prepend) }), nil
	case "Replace":
		re, content, err := readReplace(raw)
		if err != nil {
			return nil, err
		}
		return replace{re, content}, nil
	case "Precompiled":
		var c struct {
			Type                string `json:"type"`
			PrecompiledCharsmap string `json:"precompiled_charsmap"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		return newPrecompiled(c.PrecompiledCharsmap)
	case "Sequence":
		var c struct {
			Type        string            `json:"type"`
			Normalizers []json.RawMessage `json:"normalizers"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		var seq normalizerSeq
		for i, r := range c.Normalizers {
			n, err := buildNormalizer(r, fmt.Sprintf("%s.normalizers[%d]", path, i))
			if err != nil {
				return nil, err
			}
			seq = append(seq, n)
		}
		return seq, nil
	}
	return nil, unsupported("normalizer type %q", typ)
}

// strict checks that a component without settings has none.
func strict[T any](raw json.RawMessage, v T) (T, error) {
	var c struct {
		Type string `json:"type"`
	}
	if err := decodeStrict(raw, &c); err != nil {
		var zero T
		return zero, err
	}
	return v, nil
}

func or(p *bool, def bool) bool {
	if p == nil {
		return def
	}
	return *p
}

type normalizerSeq []normalizer

func (s normalizerSeq) normalize(t text) (text, error) {
	var err error
	for _, n := range s {
		if t, err = n.normalize(t); err != nil {
			return nil, err
		}
	}
	return t, nil
}

func stripMarks(t text) text {
	return t.filter(func(r rune) bool { return !unicode.Is(unicode.Mn, r) })
}

// bertNormalizer: control characters removed and white space made spaces (clean_text), spaces around
// CJK ideographs (handle_chinese_chars), accents stripped after NFD, lowercase.
type bertNormalizer struct{ clean, chinese, strip, lower bool }

func (b bertNormalizer) normalize(t text) (text, error) {
	if b.clean {
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
	if b.chinese {
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
	if b.strip {
		t = stripMarks(t.unicodeNorm(norm.NFD))
	}
	if b.lower {
		t = t.lowercase()
	}
	return t, nil
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

// replace substitutes every match of a pattern with content.
type replace struct {
	re      *regexp2.Regexp
	content string
}

func (r replace) normalize(t text) (text, error) {
	ms, err := findMatches(r.re, t, false)
	if err != nil {
		return nil, err
	}
	var ranges [][2]int
	for _, m := range ms {
		if m.isMatch && m.end > m.start {
			ranges = append(ranges, [2]int{m.start, m.end})
		}
	}
	return t.replaceRanges(ranges, r.content), nil
}

// precompiled is a SentencePiece precompiled character map (base64 in tokenizer.json), applied as the
// reference does: grapheme by grapheme (under 6 bytes) or else character by character, each replaced
// by the first entry of the map that is a prefix of it.
type precompiled struct {
	normalized string
	trie       spm.Array
}

func newPrecompiled(b64 string) (normalizer, error) {
	if b64 == "" {
		return identity(), nil
	}
	data, err := spm.FromBase64(b64)
	if err != nil {
		return nil, err
	}
	if len(data) < 4 {
		return nil, fmt.Errorf("charsmap too short")
	}
	blob, trie := spm.Parse(data)
	return &precompiled{normalized: string(blob), trie: trie}, nil
}

func (p *precompiled) lookup(s string) (string, bool) {
	trie := p.trie
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
			if at < 0 || at > len(p.normalized) {
				return "", false
			}
			end := strings.IndexByte(p.normalized[at:], 0)
			if end < 0 {
				end = len(p.normalized) - at
			}
			return p.normalized[at : at+end], true
		}
	}
	return "", false
}

func (p *precompiled) normalize(t text) (text, error) {
	var changes []change
	modified := false
	replaceWith := func(old, repl string) {
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
	g := uniseg.NewGraphemes(t.String())
	for g.Next() {
		gr := g.Str()
		if len(gr) < 6 {
			if repl, ok := p.lookup(gr); ok {
				replaceWith(gr, repl)
				continue
			}
		}
		for _, r := range gr {
			part := string(r)
			if repl, ok := p.lookup(part); ok {
				replaceWith(part, repl)
			} else {
				changes = append(changes, change{r, 0})
			}
		}
	}
	if !modified {
		return t, nil
	}
	return t.transform(changes, 0), nil
}
