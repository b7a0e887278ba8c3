package nli

import (
	"fmt"
	"unicode"

	"github.com/gainsay/gainsay/internal/textpos"
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

// Word is a word of a hypothesis: a byte range of its text and the range of its tokens.
type Word struct {
	Start, End int // UTF-8 bytes into the hypothesis
	first, end int // token indexes into the hypothesis pieces, end exclusive
}

// Words groups a text's pieces into words. Pieces that touch (no space between them) form one word,
// except that punctuation-only pieces at either end of such a run are words of their own: "sea." is
// "sea" and ".", "don't" stays whole. Leading spaces inside a piece's range (Metaspace and byte-level
// tokens carry them) are not part of a word; a piece that is only space joins the next word.
func Words(text string, pieces []Piece) []Word {
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
	var words []Word
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
			words = append(words, Word{spans[a].start, spans[a].end, lead, a + 1})
			lead, a = a+1, a+1
		}
		var tail []Word
		for b > a && punct(b-1) {
			tail = append([]Word{{spans[b-1].start, spans[b-1].end, b - 1, b}}, tail...)
			b--
		}
		if a < b {
			words = append(words, Word{spans[a].start, spans[b-1].end, lead, b})
		}
		words = append(words, tail...)
		i = j
	}
	return words
}

// Attribution is leave-one-word-out attribution for one pair: how much the contradiction probability
// falls when each hypothesis word is taken away (Li, Monroe, Jurafsky 2016, "Understanding Neural
// Networks through Representation Erasure", applied to input words).
type Attribution struct {
	// Contradiction is the probability for the whole pair.
	Contradiction float64
	Words         []WordWeight
	// Truncated: the pair was cut to the model's maximum length.
	Truncated bool
}

// WordWeight is one hypothesis word and the drop in contradiction probability without it, clamped at 0.
type WordWeight struct {
	Start, End int // UTF-8 bytes into the hypothesis
	Weight     float64
}

// Occlusions are the inputs of leave-one-word-out attribution for one pair: the whole pair first, then
// the pair without each hypothesis word in turn; when read both ways, the same again with premise and
// hypothesis swapped.
type Occlusions struct {
	Encodings []Encoding
	words     []Word
	both      bool
}

// Occlusions prepares the attribution of one pair. With both, every variant is also read the other way
// round (the hypothesis as premise).
func (m *Model) Occlusions(p Pair, how Occlusion, both bool) (Occlusions, error) {
	prem, err := m.tok.Tokenize(p.Premise)
	if err != nil {
		return Occlusions{}, err
	}
	hyp, err := m.tok.Tokenize(p.Hypothesis)
	if err != nil {
		return Occlusions{}, err
	}
	words := Words(p.Hypothesis, hyp)
	variants := make([][]Piece, 0, len(words)+1)
	variants = append(variants, hyp)
	mask := m.tok.MaskID()
	for _, w := range words {
		var variant []Piece
		switch how {
		case Mask:
			variant = append([]Piece(nil), hyp...)
			if mask >= 0 {
				for k := w.first; k < w.end; k++ {
					variant[k].ID = mask
				}
			}
		default:
			variant = append(append([]Piece(nil), hyp[:w.first]...), hyp[w.end:]...)
		}
		variants = append(variants, variant)
	}
	encs := make([]Encoding, 0, 2*len(variants))
	for _, v := range variants {
		encs = append(encs, m.tok.Assemble(prem, v, m.maxLen))
	}
	if both {
		for _, v := range variants {
			encs = append(encs, m.tok.Assemble(v, prem, m.maxLen))
		}
	}
	return Occlusions{Encodings: encs, words: words, both: both}, nil
}

// Attribution turns the probabilities of o.Encodings, in order, into word weights: the drop in the
// contradiction probability (read both ways: the smaller of the two) when the word is left out.
func (o Occlusions) Attribution(probs []Probs) Attribution {
	n := len(o.words) + 1
	contradiction := func(k int) float64 {
		c := probs[k].Contradiction
		if o.both {
			c = min(c, probs[n+k].Contradiction)
		}
		return c
	}
	full := contradiction(0)
	a := Attribution{Contradiction: full, Words: make([]WordWeight, len(o.words)), Truncated: o.Encodings[0].Truncated}
	for k, w := range o.words {
		a.Words[k] = WordWeight{Start: w.Start, End: w.End, Weight: max(0, full-contradiction(k+1))}
	}
	return a
}

// Runner runs encoded pairs through a model. *Model is one; gainsay serve's batcher, which merges the
// work of concurrent requests into shared ONNX Runtime runs, is another.
type Runner interface {
	PredictEncoded(encs []Encoding) ([]Probs, error)
}

// Scorer scores and attributes pairs with a model's tokenizer and a Runner.
//
// With BothWays, every pair is also read the other way round (hypothesis as premise) and counts as a
// contradiction only as far as both readings agree: Predict returns, for each pair, the probabilities
// of the reading with the lower contradiction probability, and Attribute weighs words by the drop in
// that smaller probability. Contradiction is symmetric (if A contradicts B, B contradicts A), while a
// model that sees one only one way round is usually reacting to the wording of one sentence alone, the
// hypothesis-only artefacts of NLI data (Gururangan et al. 2018, "Annotation Artifacts in Natural
// Language Inference Data"; Poliak et al. 2018, "Hypothesis Only Baselines in Natural Language
// Inference"). Entailment is not symmetric, so benchmarks are scored one way (BothWays false).
type Scorer struct {
	Model    *Model
	Runner   Runner
	BothWays bool
}

// Predict returns the probabilities of each pair, in order.
func (s Scorer) Predict(pairs []Pair) ([]Probs, error) {
	all := pairs
	if s.BothWays {
		all = make([]Pair, 0, 2*len(pairs))
		all = append(all, pairs...)
		for _, p := range pairs {
			all = append(all, Pair{Premise: p.Hypothesis, Hypothesis: p.Premise})
		}
	}
	encs, err := s.Model.Encode(all)
	if err != nil {
		return nil, err
	}
	probs, err := s.Runner.PredictEncoded(encs)
	if err != nil || !s.BothWays {
		return probs, err
	}
	out := probs[:len(pairs)]
	for i, rev := range probs[len(pairs):] {
		if rev.Contradiction < out[i].Contradiction {
			out[i] = rev
		}
	}
	return out, nil
}

// Attribute computes leave-one-word-out attribution for each pair: every hypothesis word is left out
// in turn and the pair scored again. The variants of all pairs go to the Runner together, so they fill
// batches.
func (s Scorer) Attribute(pairs []Pair, how Occlusion) ([]Attribution, error) {
	occ := make([]Occlusions, len(pairs))
	var all []Encoding
	for i, p := range pairs {
		o, err := s.Model.Occlusions(p, how, s.BothWays)
		if err != nil {
			return nil, fmt.Errorf("pair %d: %w", i, err)
		}
		occ[i] = o
		all = append(all, o.Encodings...)
	}
	probs, err := s.Runner.PredictEncoded(all)
	if err != nil {
		return nil, err
	}
	out := make([]Attribution, len(pairs))
	at := 0
	for i, o := range occ {
		n := len(o.Encodings)
		out[i] = o.Attribution(probs[at : at+n])
		at += n
	}
	return out, nil
}

// Attribute is Scorer{Model: m, Runner: m}.Attribute: pairs read one way.
func (m *Model) Attribute(pairs []Pair, how Occlusion) ([]Attribution, error) {
	return Scorer{Model: m, Runner: m}.Attribute(pairs, how)
}

// ScoreKept scores a pair once per mask, keeping the hypothesis words (as Words numbers them) whose
// mask entry is true and deleting the others. Evaluation uses it for the comprehensiveness and
// sufficiency of a rationale.
func (m *Model) ScoreKept(p Pair, keep [][]bool) ([]Probs, error) {
	return Scorer{Model: m, Runner: m}.ScoreKept(p, keep)
}

// ScoreKept is Model.ScoreKept through the Scorer's Runner, read one way whatever BothWays says.
func (s Scorer) ScoreKept(p Pair, keep [][]bool) ([]Probs, error) {
	m := s.Model
	prem, err := m.tok.Tokenize(p.Premise)
	if err != nil {
		return nil, err
	}
	hyp, err := m.tok.Tokenize(p.Hypothesis)
	if err != nil {
		return nil, err
	}
	words := Words(p.Hypothesis, hyp)
	encs := make([]Encoding, len(keep))
	for k, mask := range keep {
		if len(mask) != len(words) {
			return nil, fmt.Errorf("mask %d has %d entries for %d words", k, len(mask), len(words))
		}
		var variant []Piece
		last := 0
		for w, word := range words {
			if mask[w] {
				variant = append(variant, hyp[last:word.end]...)
			}
			last = word.end
		}
		variant = append(variant, hyp[last:]...) // pieces after the last word (spaces) stay
		encs[k] = m.tok.Assemble(prem, variant, m.maxLen)
	}
	return s.Runner.PredictEncoded(encs)
}
