package nli

import (
	"fmt"

	"github.com/gainsay/gainsay/tokenizer"
)

// Encoding is one (premise, hypothesis) pair as model input: the tokens with the model's special
// tokens (Seq 0 premise, 1 hypothesis, -1 special; offsets are UTF-8 bytes into the text Seq names).
type Encoding struct {
	tokenizer.Encoding
	// Truncated is set when tokens were dropped to fit the model's maximum length.
	Truncated bool
}

// assemble joins tokenised premise and hypothesis with the model's special tokens in at most maxLen
// tokens (0: no limit). When the pair is too long the premise is cut first, from its end, but kept to
// at least a quarter of maxLen where it has that many tokens; only then is the hypothesis cut: the
// hypothesis is the reply sentence whose words are being judged.
func assemble(tok *tokenizer.Tokenizer, a, b []tokenizer.Piece, maxLen int) Encoding {
	truncated := false
	if maxLen > 0 {
		if over := tok.Specials(true) + len(a) + len(b) - maxLen; over > 0 {
			truncated = true
			keepA := max(min(len(a), maxLen/4), len(a)-over)
			over -= len(a) - keepA
			a = a[:keepA]
			if over > 0 {
				b = b[:max(0, len(b)-over)]
			}
		}
	}
	if b == nil {
		b = []tokenizer.Piece{}
	}
	return Encoding{Encoding: tok.Assemble(a, b), Truncated: truncated}
}

// encodePair tokenises and assembles one pair.
func encodePair(tok *tokenizer.Tokenizer, premise, hypothesis string, maxLen int) (Encoding, error) {
	a, err := tok.Tokenize(premise)
	if err != nil {
		return Encoding{}, fmt.Errorf("premise: %w", err)
	}
	b, err := tok.Tokenize(hypothesis)
	if err != nil {
		return Encoding{}, fmt.Errorf("hypothesis: %w", err)
	}
	return assemble(tok, a, b, maxLen), nil
}
