package gainsay

import (
	"cmp"
	"math"
	"slices"
	"strings"
	"unicode"

	"github.com/gainsay/gainsay/internal/textpos"
	"github.com/gainsay/gainsay/nli"
)

// Measure is how a span's weight is reported.
type Measure string

const (
	// OddsShare reports the share of the pair's contradiction odds that goes when the word is left
	// out: 1 - odds(without) / odds(with), odds(p) = p / (1 - p), in [0, 1]. It does not vanish on a
	// confident model: against "My boat is made of wood", "My boat is made of steel" scores 0.9994 and
	// 0.9946 without "steel", a drop of 0.005 in probability but 0.89 of the odds, so a loss weighted
	// by it still pushes. Default.
	OddsShare Measure = "odds"
	// ProbDrop reports the drop in contradiction probability without the word.
	ProbDrop Measure = "prob"
)

// SpanRule says which attributed words become penalty spans and what they weigh.
//
// Words are chosen, and ranked, by the drop in contradiction probability without them: a word
// whose drop is at least MinWeight and at least Relative times the strongest word's. On a confident
// model the culprit's drop stands far above the rest in probability, while in odds every word of a
// saturated pair moves a share, so probability is the better chooser (measured: scripts/train/
// span_rules.sh, see the model card); the chosen span's weight is then reported as Measure says.
type SpanRule struct {
	MinWeight float64 // least probability drop
	Relative  float64 // least share of the strongest word's drop
	Measure   Measure // the reported weight ("": OddsShare)
	// Phrases also leaves out every two adjacent words together; a word then weighs at least its
	// Shapley value in that pair, (v(word) + v(pair) - v(other word)) / 2, so that two words that
	// carry a contradiction together, either of which suffices, are both found.
	Phrases bool
	// FunctionWords lets pronouns, articles, auxiliaries, prepositions and conjunctions be spans.
	// By default they are not: an unlikelihood loss over "I" or "my" teaches a generator to stop
	// saying "I". Negations and quantifiers (not, never, no, only, all, ...) are never function words;
	// punctuation is never a span.
	FunctionWords bool
}

// DefaultSpanRule chooses words that carry at least half of the strongest word's drop in probability
// and move it measurably (0.001), with phrases and without function words, and reports their share of
// the odds.
func DefaultSpanRule() SpanRule {
	return SpanRule{MinWeight: 0.001, Relative: 0.5, Measure: OddsShare, Phrases: true}
}

// Culprits marks the words the rule keeps, given every word's probability drop (Drops).
func (r SpanRule) Culprits(drops []float64) []bool {
	top := 0.0
	for _, w := range drops {
		top = max(top, w)
	}
	out := make([]bool, len(drops))
	if top == 0 || top < r.MinWeight {
		return out
	}
	for i, w := range drops {
		out[i] = w >= r.MinWeight && w >= r.Relative*top
	}
	return out
}

// Drops are an attribution's words' drops in contradiction probability under the rule (phrases,
// function words and punctuation at 0): what the rule chooses and ranks by. hypothesis is the text
// the attribution's offsets refer to.
func (r SpanRule) Drops(hypothesis string, a nli.Attribution) []float64 {
	return r.effects(hypothesis, a, func(without float64) float64 { return max(0, a.Contradiction-without) })
}

// WordWeights are the words' weights as the rule reports them (Measure), under the same phrase,
// function-word and punctuation rules as Drops.
func (r SpanRule) WordWeights(hypothesis string, a nli.Attribution) []float64 {
	if r.Measure == ProbDrop {
		return r.Drops(hypothesis, a)
	}
	return r.effects(hypothesis, a, func(without float64) float64 { return max(0, 1-odds(without)/odds(a.Contradiction)) })
}

func (r SpanRule) effects(hypothesis string, a nli.Attribution, effect func(without float64) float64) []float64 {
	out := make([]float64, len(a.Words))
	for i, w := range a.Words {
		out[i] = effect(w.Without)
	}
	if r.Phrases {
		single := slices.Clone(out)
		for _, p := range a.Phrases {
			pair := effect(p.Without)
			i, j := p.First, p.First+1
			out[i] = max(out[i], (single[i]+pair-single[j])/2)
			out[j] = max(out[j], (single[j]+pair-single[i])/2)
		}
	}
	for i, w := range a.Words {
		// Punctuation is never to blame; function words only when the rule allows them.
		if s := hypothesis[w.Start:w.End]; textpos.OnlyPunct(s) || (!r.FunctionWords && IsFunctionWord(s)) {
			out[i] = 0
		}
	}
	return out
}

// odds of a probability, kept finite.
func odds(p float64) float64 {
	p = math.Min(math.Max(p, 1e-12), 1-1e-12)
	return p / (1 - p)
}

// isFunctionWord: English closed-class words that carry no contradiction on their own: pronouns,
// articles and determiners, auxiliaries and copulas, common prepositions and conjunctions, and their
// contractions. Negations and quantifiers are deliberately absent. A list of our own, in the spirit
// of common stop-word lists (common practice in information retrieval).
func isFunctionWord(w string) bool {
	switch w {
	case
		"i", "me", "my", "mine", "myself", "we", "us", "our", "ours", "ourselves", "you", "your",
		"yours", "yourself", "yourselves", "he", "him", "his", "himself", "she", "her", "hers",
		"herself", "it", "its", "itself", "they", "them", "their", "theirs", "themselves", "one", "ones",
		"a", "an", "the", "this", "that", "these", "those", "am", "is", "are", "was", "were", "be",
		"been", "being", "have", "has", "had", "having", "do", "does", "did", "doing", "will", "would",
		"shall", "should", "can", "could", "may", "might", "must", "i'm", "i've", "i'd", "i'll",
		"you're", "you've", "you'd", "you'll", "he's", "she's", "it's", "we're", "we've", "we'd",
		"we'll", "they're", "they've", "they'd", "they'll", "that's", "there's", "here's", "what's",
		"let's", "in", "on", "at", "of", "to", "for", "with", "by", "from", "into", "onto", "about",
		"over", "under", "as", "than", "up", "out", "off", "down", "and", "or", "but", "so", "if",
		"then", "because", "while", "also", "just", "too", "very", "really", "there", "here", "who",
		"whom", "whose", "which", "what", "when", "where", "how":
		return true
	}
	return false
}

// IsFunctionWord reports whether a word (any case, surrounding punctuation ignored, curly
// apostrophes read as straight ones) is one of gainsay's English function words.
func IsFunctionWord(w string) bool {
	w = strings.TrimFunc(strings.ToLower(w), func(r rune) bool { return unicode.IsPunct(r) && r != '\'' && r != '’' })
	w = strings.ReplaceAll(w, "’", "'")
	return isFunctionWord(w)
}

// spans turns one attributed sentence (offsets relative to the sentence at byte offset base of text)
// into merged penalty spans over text, heaviest first.
func (r SpanRule) spans(text string, idx textpos.Index, base int, a nli.Attribution) []Span {
	sentence := text[base:]
	weights := r.WordWeights(sentence, a)
	culprits := r.Culprits(r.Drops(sentence, a))
	var spans []Span
	open := false
	for i, w := range a.Words {
		if !culprits[i] {
			open = false
			continue
		}
		s, e := base+w.Start, base+w.End
		if open {
			last := &spans[len(spans)-1]
			last.ByteEnd = e
			last.Weight = max(last.Weight, Prob(weights[i]))
			continue
		}
		spans = append(spans, Span{ByteStart: s, ByteEnd: e, Weight: Prob(weights[i])})
		open = true
	}
	for i := range spans {
		sp := &spans[i]
		sp.Start, sp.End = idx.Runes(sp.ByteStart), idx.Runes(sp.ByteEnd)
		sp.Text = text[sp.ByteStart:sp.ByteEnd]
	}
	slices.SortStableFunc(spans, func(a, b Span) int {
		return cmp.Or(cmp.Compare(b.Weight, a.Weight), cmp.Compare(a.Start, b.Start))
	})
	return spans
}
