// Package align turns gainsay's penalty spans into per-token weights in a generator's own
// tokenisation: what a token-level unlikelihood loss needs. The reply is tokenised on its own, or
// after its prompt (the text a chat template renders before it), as the training loop tokenises
// the whole sequence; prompt tokens then get weight 0.
//
// Rule: a token's weight is the largest weight of the spans it overlaps, times the share of the
// token's characters (code points, leading white space not counted; white space is the Unicode
// White_Space property) that the span covers. So " never"
// as one byte-level token under the span "never" gets the full weight, and "nevermore" half covered
// gets about half. Tokens of white space only get 0. scripts/python/gainsay_train applies the same rule
// to Hugging Face offset mappings; the tests check both agree.
package align

import (
	"unicode"
	"unicode/utf8"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/textpos"
	"github.com/gainsay/gainsay/tokenizer"
)

// Tokens is one record aligned to a generator's tokens.
type Tokens struct {
	ID      string          `json:"id"`
	Verdict gainsay.Verdict `json:"verdict"`
	// SequenceFlag marks a reply judged contradicting as a whole, for sequence-level unlikelihood.
	SequenceFlag bool           `json:"sequence_flag"`
	Score        gainsay.Prob   `json:"score"`
	TokenIDs     []int          `json:"token_ids"`
	Weights      []gainsay.Prob `json:"weights"`
	// Offsets are code-point ranges of the tokenised text (the prompt and the reply, where there is a
	// prompt), one per token (Python str indexes).
	Offsets [][2]int `json:"offsets"`
	// ReplyStart is where the reply starts in the tokenised text, in code points (0 without a prompt).
	ReplyStart int    `json:"reply_start,omitempty"`
	Error      string `json:"error,omitempty"`
}

// Options tune Record.
type Options struct {
	// Normalize divides the record's weights by their largest, so that the strongest token weighs 1:
	// a confident model can blame the right word with a small drop in probability, and a training loop
	// may want the localisation rather than the size.
	Normalize bool
	// Prompt is the text before the reply in the sequence the generator was trained on (a chat
	// template's rendering up to the reply); "" tokenises the reply on its own.
	Prompt string
}

// Record aligns one record. The text (prompt, then reply) is tokenised as the reference tokenizer
// encodes it without special tokens of its own: added tokens written in the prompt, such as a chat
// template's, are matched as added tokens.
func Record(rec *gainsay.Record, tok *tokenizer.Tokenizer, opts Options) (Tokens, error) {
	out := Tokens{ID: rec.ID, Verdict: rec.Verdict, SequenceFlag: rec.Verdict == gainsay.Contradiction,
		Score: rec.Score, Error: rec.Error, TokenIDs: []int{}, Weights: []gainsay.Prob{}, Offsets: [][2]int{}}
	text := opts.Prompt + rec.Text
	pieces, err := tok.EncodeText(text)
	if err != nil {
		return out, err
	}
	var spans []gainsay.Span
	shift := len(opts.Prompt)
	for _, f := range rec.Findings {
		for _, sp := range f.Spans {
			sp.ByteStart += shift
			sp.ByteEnd += shift
			spans = append(spans, sp)
		}
	}
	weights := Weights(text, pieces, spans)
	if opts.Normalize {
		Normalize(weights)
	}
	idx := textpos.New(text)
	out.ReplyStart = idx.Runes(shift)
	for i, p := range pieces {
		out.TokenIDs = append(out.TokenIDs, p.ID)
		out.Weights = append(out.Weights, gainsay.Prob(weights[i]))
		out.Offsets = append(out.Offsets, [2]int{idx.Runes(p.Start), idx.Runes(p.End)})
	}
	return out, nil
}

// Weights applies the package's rule to tokens with byte offsets into text and spans over text.
func Weights(text string, pieces []tokenizer.Piece, spans []gainsay.Span) []float64 {
	out := make([]float64, len(pieces))
	for i, p := range pieces {
		start := textpos.TrimLeft(text, p.Start, p.End, isWhiteSpace)
		if start >= p.End {
			continue
		}
		chars := utf8.RuneCountInString(text[start:p.End])
		for _, sp := range spans {
			a, b := max(start, sp.ByteStart), min(p.End, sp.ByteEnd)
			if a >= b {
				continue
			}
			share := float64(utf8.RuneCountInString(text[a:b])) / float64(chars)
			out[i] = max(out[i], float64(sp.Weight)*share)
		}
	}
	return out
}

func isWhiteSpace(r rune) bool { return unicode.Is(unicode.White_Space, r) }

// Normalize divides weights by their largest in place (nothing when all are 0).
func Normalize(weights []float64) {
	top := 0.0
	for _, w := range weights {
		top = max(top, w)
	}
	if top == 0 {
		return
	}
	for i := range weights {
		weights[i] /= top
	}
}
