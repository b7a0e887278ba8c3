package nli

import (
	"fmt"
	"math"
	"unicode/utf8"
)

// wordModel turns one pre-tokenised word into pieces with byte offsets into the word.
type wordModel interface {
	tokenize(word string) []Piece
	id(token string) (int, bool)
}

// wordPiece is the greedy longest-match-first algorithm of BERT, as in the reference: a word longer
// than maxChars, or one with a part that no vocabulary entry covers, becomes a single unknown token.
type wordPiece struct {
	vocab    map[string]int
	unk      int
	prefix   string
	maxChars int
}

func newWordPiece(m map[string]any) (*wordPiece, error) {
	vocab, err := readVocabMap(m["vocab"])
	if err != nil {
		return nil, err
	}
	wp := &wordPiece{vocab: vocab, prefix: "##", maxChars: 100}
	if p, ok := m["continuing_subword_prefix"].(string); ok {
		wp.prefix = p
	}
	if n, ok := m["max_input_chars_per_word"].(float64); ok {
		wp.maxChars = int(n)
	}
	unk, _ := m["unk_token"].(string)
	if unk == "" {
		unk = "[UNK]"
	}
	id, ok := vocab[unk]
	if !ok {
		return nil, fmt.Errorf("WordPiece: unknown token %q is not in the vocabulary", unk)
	}
	wp.unk = id
	return wp, nil
}

func (wp *wordPiece) id(tok string) (int, bool) { id, ok := wp.vocab[tok]; return id, ok }

func (wp *wordPiece) tokenize(word string) []Piece {
	if utf8.RuneCountInString(word) > wp.maxChars {
		return []Piece{{ID: wp.unk, Start: 0, End: len(word)}}
	}
	var out []Piece
	for start := 0; start < len(word); {
		end := len(word)
		found := -1
		for end > start {
			sub := word[start:end]
			if start > 0 {
				sub = wp.prefix + sub
			}
			if id, ok := wp.vocab[sub]; ok {
				found = id
				break
			}
			// Step back one character, not one byte.
			_, size := utf8.DecodeLastRuneInString(word[start:end])
			end -= size
		}
		if found < 0 {
			return []Piece{{ID: wp.unk, Start: 0, End: len(word)}}
		}
		out = append(out, Piece{ID: found, Start: start, End: end})
		start = end
	}
	return out
}

// unigram is the SentencePiece unigram model: the segmentation with the highest total score (Viterbi),
// unknown characters scored min_score - 10 and, with fuse_unk, runs of them merged into one token, as in
// the reference.
type unigram struct {
	vocab    map[string]int
	score    []float64
	maxBytes int
	unk      int
	unkScore float64
	fuseUnk  bool
}

func newUnigram(m map[string]any) (*unigram, error) {
	list, ok := m["vocab"].([]any)
	if !ok || len(list) == 0 {
		return nil, fmt.Errorf("Unigram: vocab must be a list of [piece, score]")
	}
	u := &unigram{vocab: make(map[string]int, len(list)), score: make([]float64, len(list)), unk: -1, fuseUnk: true}
	minScore := math.Inf(1)
	for i, e := range list {
		pair, _ := e.([]any)
		if len(pair) != 2 {
			return nil, fmt.Errorf("Unigram: vocab[%d]: want [piece, score]", i)
		}
		piece, ok1 := pair[0].(string)
		score, ok2 := pair[1].(float64)
		if !ok1 || !ok2 {
			return nil, fmt.Errorf("Unigram: vocab[%d]: want [piece, score]", i)
		}
		if _, dup := u.vocab[piece]; !dup {
			u.vocab[piece] = i
		}
		u.score[i] = score
		u.maxBytes = max(u.maxBytes, len(piece))
		minScore = min(minScore, score)
	}
	u.unkScore = minScore - 10
	if id, ok := m["unk_id"].(float64); ok {
		u.unk = int(id)
	}
	if v, ok := m["fuse_unk"].(bool); ok {
		u.fuseUnk = v
	}
	if u.unk < 0 || u.unk >= len(list) {
		return nil, fmt.Errorf("Unigram: unk_id missing or out of range")
	}
	if bf, _ := m["byte_fallback"].(bool); bf {
		return nil, fmt.Errorf("Unigram: byte_fallback is not supported")
	}
	return u, nil
}

func (u *unigram) id(tok string) (int, bool) { id, ok := u.vocab[tok]; return id, ok }

func (u *unigram) tokenize(word string) []Piece {
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
			id, ok := u.vocab[word[start:end]]
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
	var rev []Piece
	for end := n; end > 0; {
		nd := best[end]
		p := Piece{ID: nd.id, Start: nd.from, End: end}
		if u.fuseUnk && nd.id == u.unk && len(rev) > 0 && rev[len(rev)-1].ID == u.unk && rev[len(rev)-1].Start == end {
			rev[len(rev)-1].Start = nd.from
		} else {
			rev = append(rev, p)
		}
		end = nd.from
	}
	out := make([]Piece, len(rev))
	for i := range rev {
		out[i] = rev[len(rev)-1-i]
	}
	return out
}

func readVocabMap(v any) (map[string]int, error) {
	m, ok := v.(map[string]any)
	if !ok {
		return nil, fmt.Errorf("vocab must be an object of token: id")
	}
	out := make(map[string]int, len(m))
	for k, x := range m {
		f, ok := x.(float64)
		if !ok {
			return nil, fmt.Errorf("vocab %q: id is not a number", k)
		}
		out[k] = int(f)
	}
	return out, nil
}

// wordLevel maps whole words to ids, unknown words to the unknown token.
type wordLevel struct {
	vocab map[string]int
	unk   int
}

func newWordLevel(m map[string]any) (*wordLevel, error) {
	vocab, err := readVocabMap(m["vocab"])
	if err != nil {
		return nil, err
	}
	unk, _ := m["unk_token"].(string)
	id, ok := vocab[unk]
	if !ok {
		return nil, fmt.Errorf("WordLevel: unknown token %q is not in the vocabulary", unk)
	}
	return &wordLevel{vocab: vocab, unk: id}, nil
}

func (w *wordLevel) id(tok string) (int, bool) { id, ok := w.vocab[tok]; return id, ok }

func (w *wordLevel) tokenize(word string) []Piece {
	id, ok := w.vocab[word]
	if !ok {
		id = w.unk
	}
	return []Piece{{ID: id, Start: 0, End: len(word)}}
}
