package nli

import "fmt"

// Segment says which part of a pair a token belongs to.
type Segment int8

const (
	Special    Segment = -1
	Premise    Segment = 0
	Hypothesis Segment = 1
)

// Encoding is one (premise, hypothesis) pair as model input. Start and End are UTF-8 byte offsets into
// the premise or the hypothesis text, as Segment says; both are 0 for special tokens.
type Encoding struct {
	IDs        []int64
	TypeIDs    []int64
	Segments   []Segment
	Start, End []int
	// Truncated is set when tokens were dropped to fit the model's maximum length.
	Truncated bool
}

// Len is the number of tokens.
func (e *Encoding) Len() int { return len(e.IDs) }

// EncodePair encodes a premise and a hypothesis as one model input of at most maxLen tokens (0: no
// limit). When the pair is too long the premise is cut first, from its end, but kept to at least a
// quarter of maxLen where it has that many tokens; only then is the hypothesis cut.
func (t *Tokenizer) EncodePair(premise, hypothesis string, maxLen int) (Encoding, error) {
	a, err := t.Tokenize(premise)
	if err != nil {
		return Encoding{}, fmt.Errorf("premise: %w", err)
	}
	b, err := t.Tokenize(hypothesis)
	if err != nil {
		return Encoding{}, fmt.Errorf("hypothesis: %w", err)
	}
	return t.Assemble(a, b, maxLen), nil
}

// Assemble joins tokenised premise and hypothesis with the model's special tokens, truncating as
// EncodePair describes.
func (t *Tokenizer) Assemble(a, b []Piece, maxLen int) Encoding {
	specials := 0
	for _, it := range t.pair {
		specials += len(it.ids)
	}
	truncated := false
	if maxLen > 0 {
		if over := specials + len(a) + len(b) - maxLen; over > 0 {
			truncated = true
			keepA := max(min(len(a), maxLen/4), len(a)-over)
			over -= len(a) - keepA
			a = a[:keepA]
			if over > 0 {
				b = b[:max(0, len(b)-over)]
			}
		}
	}
	n := specials + len(a) + len(b)
	e := Encoding{
		IDs: make([]int64, 0, n), TypeIDs: make([]int64, 0, n), Segments: make([]Segment, 0, n),
		Start: make([]int, 0, n), End: make([]int, 0, n), Truncated: truncated,
	}
	for _, it := range t.pair {
		if it.seq < 0 {
			for _, id := range it.ids {
				e.IDs = append(e.IDs, int64(id))
				e.TypeIDs = append(e.TypeIDs, int64(it.typeID))
				e.Segments = append(e.Segments, Special)
				e.Start = append(e.Start, 0)
				e.End = append(e.End, 0)
			}
			continue
		}
		seq := a
		if it.seq == 1 {
			seq = b
		}
		for _, p := range seq {
			e.IDs = append(e.IDs, int64(p.ID))
			e.TypeIDs = append(e.TypeIDs, int64(it.typeID))
			e.Segments = append(e.Segments, Segment(it.seq))
			e.Start = append(e.Start, p.Start)
			e.End = append(e.End, p.End)
		}
	}
	return e
}
