package nli

import (
	"fmt"
	"unicode"

	"github.com/gainsay/gainsay/internal/textpos"
	"github.com/gainsay/gainsay/tokenizer"
)

// Occlusion is how leave-one-word-out attribution takes a word away.
type Occlusion string

const (
	// Delete drops the word's tokens, so the model sees a natural sentence one word shorter. Default:
	// fine-tuned cross-encoders rarely saw mask tokens in training, and a deleted word cannot carry
	// meaning through a placeholder.
	Delete Occlusion = "delete"
	// Mask replaces each of the word's tokens with the mask token (the unknown token where the vocabulary
	// has none), so positions and length stay as they were.
	Mask Occlusion = "mask"
)

// ParseOcclusion reads "delete" or "mask".
func ParseOcclusion(s string) (Occlusion, error) {
	switch Occlusion(s) {
	case Delete, Mask:
		return Occlusion(s), nil
	case "":
		return Delete, nil
	}
	return "", fmt.Errorf("occlusion %q: want delete or mask", s)
}

// word is a word of a hypothesis: a byte range of its text and the range of its tokens.
type word struct {
	start, end  int // UTF-8 bytes into the hypothesis
	first, last int // token indexes into the hypothesis pieces, last exclusive
}

// words groups a text's pieces into words. Pieces that touch (no space between them) form one word,
// except that punctuation-only pieces at either end of such a run are words of their own: "sea." is
// "sea" and ".", "don't" stays whole. Leading spaces inside a piece's range (Metaspace and byte-level
// tokens carry them) are not part of a word; a piece that is only space joins the next word.
func words(text string, pieces []tokenizer.Piece) []word {
	type span struct{ start, end int }
	spans := make([]span, len(pieces))
	for i, p := range pieces {
		spans[i] = span{textpos.TrimLeft(text, p.Start, p.End, unicode.IsSpace), p.End}
	}
	empty := func(i int) bool { return spans[i].start >= spans[i].end }
	punct := func(i int) bool {
		if empty(i) {
			return false
		}
		for _, r := range text[spans[i].start:spans[i].end] {
			if !unicode.IsPunct(r) && !unicode.IsSymbol(r) {
				return false
			}
		}
		return true
	}
	var out []word
	for i := 0; i < len(pieces); {
		// [i, j) is a run of pieces with no space between them.
		j, end := i+1, spans[i].end
		for j < len(pieces) && spans[j].start <= end {
			end = max(end, spans[j].end)
			j++
		}
		a, b := i, j
		for a < b && empty(a) {
			a++
		}
		lead := i // the next word starts here, space-only pieces included
		for a < b && punct(a) {
			out = append(out, word{spans[a].start, spans[a].end, lead, a + 1})
			lead, a = a+1, a+1
		}
		var tail []word
		for b > a && punct(b-1) {
			tail = append([]word{{spans[b-1].start, spans[b-1].end, b - 1, b}}, tail...)
			b--
		}
		if a < b {
			out = append(out, word{spans[a].start, spans[b-1].end, lead, b})
		}
		out = append(out, tail...)
		i = j
	}
	return out
}

// without is the hypothesis pieces with the tokens of the words [from, to) taken away as how says.
func without(hyp []tokenizer.Piece, ws []word, from, to int, how Occlusion, mask int) []tokenizer.Piece {
	first, last := ws[from].first, ws[to-1].last
	if how == Mask {
		v := append([]tokenizer.Piece(nil), hyp...)
		if mask >= 0 {
			for k := first; k < last; k++ {
				v[k].ID = mask
			}
		}
		return v
	}
	return append(append([]tokenizer.Piece(nil), hyp[:first]...), hyp[last:]...)
}

// AttributionOptions say how words are taken away.
type AttributionOptions struct {
	Occlusion Occlusion // "": Delete
	// Phrases also takes away every two adjacent words together (punctuation aside), so that a
	// contradiction that either word carries alone is still seen.
	Phrases bool
}

// Attribution is leave-one-word-out attribution for one pair: the contradiction probability when each
// hypothesis word is taken away (Li, Monroe, Jurafsky 2016, "Understanding Neural Networks through
// Representation Erasure", applied to input words), and with Phrases, when each two adjacent words are.
type Attribution struct {
	// Contradiction is the whole pair's contradiction probability, read premise then hypothesis (the
	// reading attributed).
	Contradiction float64
	Words         []WordWeight
	// Phrases are the adjacent word pairs taken away together (with AttributionOptions.Phrases).
	Phrases []PhraseWeight
	// Truncated: the pair was cut to the model's maximum length.
	Truncated bool
}

// WordWeight is one hypothesis word, the contradiction probability without it, and Weight, the drop
// in contradiction probability without it, clamped at 0.
type WordWeight struct {
	Start, End int // UTF-8 bytes into the hypothesis
	Without    float64
	Weight     float64
}

// PhraseWeight is two adjacent words, Words[First] and Words[First+1], and the contradiction
// probability without both.
type PhraseWeight struct {
	First   int
	Without float64
}

// isPunct reports a word made of punctuation or symbols only.
func isPunct(text string, w word) bool { return textpos.OnlyPunct(text[w.start:w.end]) }
