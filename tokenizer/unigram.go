package tokenizer

import (
	"encoding/json"
	"fmt"
	"math"
	"unicode/utf8"
)

// unigram is the SentencePiece unigram model: the segmentation with the highest total score (Viterbi),
// unknown characters scored min_score - 10 and, with fuse_unk, runs of them merged into one token, as in
// the reference.
type unigram struct {
	ids      map[string]int
	score    []float64
	maxBytes int
	unk      int
	unkScore float64
	fuseUnk  bool
}

func newUnigram(raw json.RawMessage) (model, Family, error) {
	var c struct {
		Type         string            `json:"type"`
		UnkID        *int              `json:"unk_id"`
		Vocab        []json.RawMessage `json:"vocab"`
		ByteFallback bool              `json:"byte_fallback"`
		FuseUnk      *bool             `json:"fuse_unk"`
	}
	if err := decodeStrict(raw, &c); err != nil {
		return nil, "", err
	}
	if len(c.Vocab) == 0 {
		return nil, "", fmt.Errorf("vocab must be a list of [piece, score]")
	}
	if c.ByteFallback {
		return nil, "", unsupported("byte_fallback with a Unigram model")
	}
	u := &unigram{ids: make(map[string]int, len(c.Vocab)), score: make([]float64, len(c.Vocab)), unk: -1,
		fuseUnk: or(c.FuseUnk, true)}
	minScore := math.Inf(1)
	for i, e := range c.Vocab {
		var pair []any
		if err := json.Unmarshal(e, &pair); err != nil || len(pair) != 2 {
			return nil, "", fmt.Errorf("vocab[%d]: want [piece, score]", i)
		}
		piece, ok1 := pair[0].(string)
		score, ok2 := pair[1].(float64)
		if !ok1 || !ok2 {
			return nil, "", fmt.Errorf("vocab[%d]: want [piece, score]", i)
		}
		if _, dup := u.ids[piece]; !dup {
			u.ids[piece] = i
		}
		u.score[i] = score
		u.maxBytes = max(u.maxBytes, len(piece))
		minScore = min(minScore, score)
	}
	u.unkScore = minScore - 10
	if c.UnkID != nil {
		u.unk = *c.UnkID
	}
	if u.unk < 0 || u.unk >= len(c.Vocab) {
		return nil, "", fmt.Errorf("unk_id missing or out of range")
	}
	return u, Unigram, nil
}

func (u *unigram) vocab() map[string]int { return u.ids }

func (u *unigram) tokenize(word string) ([]token, error) {
	n := len(word)
	type node struct {
		score float64
		from  int // -1: unreached
		id    int
	}
	best := make([]node, n+1)
	for i := range best {
		best[i].from = -1
	}
	best[0].from = 0
	for start := 0; start < n; {
		_, charLen := utf8.DecodeRuneInString(word[start:])
		base := best[start].score
		single := false
		for end := start + 1; end <= n && end-start <= u.maxBytes; end++ {
			id, ok := u.ids[word[start:end]]
			if !ok {
				continue
			}
			if s := base + u.score[id]; best[end].from < 0 || s > best[end].score {
				best[end] = node{s, start, id}
			}
			if end-start == charLen {
				single = true
			}
		}
		if !single {
			end := start + charLen
			if s := base + u.unkScore; best[end].from < 0 || s > best[end].score {
				best[end] = node{s, start, u.unk}
			}
		}
		start += charLen
	}
	var rev []token
	for end := n; end > 0; {
		nd := best[end]
		if u.fuseUnk && nd.id == u.unk && len(rev) > 0 && rev[len(rev)-1].id == u.unk && rev[len(rev)-1].start == end {
			rev[len(rev)-1].start = nd.from
		} else {
			rev = append(rev, token{nd.id, nd.from, end})
		}
		end = nd.from
	}
	out := make([]token, len(rev))
	for i := range rev {
		out[i] = rev[len(rev)-1-i]
	}
	return out, nil
}
