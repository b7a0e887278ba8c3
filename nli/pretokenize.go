package nli

import (
	"fmt"
	"unicode"
	"unicode/utf8"
)

// Pre-tokenisers of Hugging Face tokenizers for the WordPiece and Unigram families, with the reference's
// split behaviours. Each works on the normalised words so far and returns the next list of words.

type preTokenizer func([]ntext) []ntext

type splitBehavior int

const (
	removed splitBehavior = iota
	isolated
	mergedWithPrevious
	mergedWithNext
	contiguous
)

func parseBehavior(v any) (splitBehavior, error) {
	switch v {
	case nil, "Isolated":
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
	return 0, fmt.Errorf("split behavior %v is not supported", v)
}

// splitBy cuts every word at the characters for which delim is true.
func splitBy(words []ntext, delim func(rune) bool, b splitBehavior) []ntext {
	var out []ntext
	for _, w := range words {
		out = append(out, splitWord(w, delim, b)...)
	}
	return out
}

func splitWord(w ntext, delim func(rune) bool, b splitBehavior) []ntext {
	var out []ntext
	emit := func(t ntext) {
		if len(t) > 0 {
			out = append(out, t)
		}
	}
	start := 0
	for i := 0; i < len(w); i++ {
		if !delim(w[i].r) {
			continue
		}
		end := i + 1
		if b == contiguous {
			for end < len(w) && delim(w[end].r) {
				end++
			}
		}
		switch b {
		case removed:
			emit(w[start:i])
			start = end
		case isolated, contiguous:
			emit(w[start:i])
			emit(w[i:end])
			start = end
		case mergedWithPrevious:
			emit(w[start:end])
			start = end
		case mergedWithNext:
			emit(w[start:i])
			start = i
		}
		i = end - 1
	}
	emit(w[start:])
	return out
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
	return unicode.IsLetter(r) || unicode.IsMark(r) || unicode.IsDigit(r) || unicode.Is(unicode.Nd, r) ||
		unicode.Is(unicode.Pc, r)
}

func buildPreTokenizer(cfg any) (preTokenizer, error) {
	if cfg == nil {
		return func(w []ntext) []ntext { return w }, nil
	}
	m, ok := cfg.(map[string]any)
	if !ok {
		return nil, fmt.Errorf("pre_tokenizer: not an object")
	}
	typ, _ := m["type"].(string)
	switch typ {
	case "BertPreTokenizer":
		return func(w []ntext) []ntext {
			return splitBy(splitBy(w, isRustWhitespace, removed), isBertPunct, isolated)
		}, nil
	case "WhitespaceSplit":
		return func(w []ntext) []ntext { return splitBy(w, isRustWhitespace, removed) }, nil
	case "Whitespace":
		// \w+|[^\w\s]+ : runs of word characters, runs of other non-space characters.
		return func(words []ntext) []ntext {
			var out []ntext
			for _, w := range words {
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
							out = append(out, w[start:i])
						}
						start, kind = i, k
					}
				}
				if kind != 0 {
					out = append(out, w[start:])
				}
			}
			return out
		}, nil
	case "Punctuation":
		b, err := parseBehavior(m["behavior"])
		if err != nil {
			return nil, err
		}
		return func(w []ntext) []ntext { return splitBy(w, isBertPunct, b) }, nil
	case "Digits":
		individual, _ := m["individual_digits"].(bool)
		b := contiguous
		if individual {
			b = isolated
		}
		return func(w []ntext) []ntext { return splitBy(w, unicode.IsDigit, b) }, nil
	case "Metaspace":
		return buildMetaspace(m)
	case "Split":
		return buildSplit(m)
	case "Sequence":
		list, _ := m["pretokenizers"].([]any)
		steps := make([]preTokenizer, 0, len(list))
		for i, c := range list {
			p, err := buildPreTokenizer(c)
			if err != nil {
				return nil, fmt.Errorf("pretokenizers[%d]: %w", i, err)
			}
			steps = append(steps, p)
		}
		return func(w []ntext) []ntext {
			for _, p := range steps {
				w = p(w)
			}
			return w
		}, nil
	default:
		return nil, fmt.Errorf("pre_tokenizer type %q is not supported for this model", typ)
	}
}

// buildMetaspace: spaces become the replacement character (U+2581 by default), a replacement character
// is put before the first word unless prepend_scheme is "never" (or add_prefix_space is false), and with
// split the text is cut before every replacement character.
func buildMetaspace(m map[string]any) (preTokenizer, error) {
	repl := '▁'
	if s, ok := m["replacement"].(string); ok && s != "" {
		repl, _ = utf8.DecodeRuneInString(s)
	}
	prepend := true
	if v, ok := m["prepend_scheme"].(string); ok {
		prepend = v != "never"
	} else if v, ok := m["add_prefix_space"].(bool); ok {
		prepend = v
	}
	split := true
	if v, ok := m["split"].(bool); ok {
		split = v
	}
	return func(words []ntext) []ntext {
		var out []ntext
		for i, w := range words {
			w = w.mapRunes(func(r rune) rune {
				if r == ' ' {
					return repl
				}
				return r
			})
			// "first" prepends to the first word only; here the text is one sequence, so to words[0].
			if prepend && (i == 0 || m["prepend_scheme"] != "first") && len(w) > 0 && w[0].r != repl {
				w = w.prepend(string(repl))
			}
			if split {
				out = append(out, splitWord(w, func(r rune) bool { return r == repl }, mergedWithNext)...)
			} else if len(w) > 0 {
				out = append(out, w)
			}
		}
		return out
	}, nil
}

func buildSplit(m map[string]any) (preTokenizer, error) {
	re, err := pattern(m["pattern"])
	if err != nil {
		return nil, fmt.Errorf("Split: %w", err)
	}
	b, err := parseBehavior(m["behavior"])
	if err != nil {
		return nil, fmt.Errorf("Split: %w", err)
	}
	if invert, _ := m["invert"].(bool); invert {
		return nil, fmt.Errorf("Split: invert is not supported")
	}
	return func(words []ntext) []ntext {
		var out []ntext
		for _, w := range words {
			s := w.String()
			charAt := make([]int, len(s)+1)
			pos := 0
			for i, c := range w {
				for k := 0; k < utf8.RuneLen(c.r); k++ {
					charAt[pos+k] = i
				}
				pos += utf8.RuneLen(c.r)
			}
			charAt[len(s)] = len(w)
			// Each match is one delimiter run (Contiguous and Isolated therefore agree).
			last := 0
			for _, mt := range re.FindAllStringIndex(s, -1) {
				a, z := charAt[mt[0]], charAt[mt[1]]
				if a == z {
					continue
				}
				before, match := w[last:a], w[a:z]
				switch b {
				case removed:
					out = appendNonEmpty(out, before)
				case isolated, contiguous:
					out = appendNonEmpty(appendNonEmpty(out, before), match)
				case mergedWithPrevious:
					out = appendNonEmpty(out, w[last:z])
				case mergedWithNext:
					out = appendNonEmpty(out, before)
					z = a // the match starts the next piece
				}
				last = z
			}
			out = appendNonEmpty(out, w[last:])
		}
		return out
	}, nil
}

func appendNonEmpty(out []ntext, t ntext) []ntext {
	if len(t) > 0 {
		out = append(out, t)
	}
	return out
}
