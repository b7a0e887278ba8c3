package tokenizer

import (
	"container/heap"
	"encoding/json"
	"fmt"
	"strings"
	"unicode/utf8"
)

// bpe is byte-pair encoding as the reference implements it (models/bpe in tokenizers): a word starts
// as its characters (continuing_subword_prefix on all but the first, end_of_word_suffix on the last;
// a character missing from the vocabulary becomes its <0xNN> byte tokens with byte_fallback, else the
// unknown token, runs of which fuse_unk merges), then the pair with the lowest merge rank is merged,
// leftmost first, until no pair can be. ignore_merges takes a word that is in the vocabulary whole.
type bpe struct {
	ids          map[string]int
	merges       map[[2]int]merge
	unk          int // -1: no unknown token (unknown characters are dropped, as in the reference)
	prefix       string
	suffix       string
	fuseUnk      bool
	byteFallback bool
	ignoreMerges bool
}

type merge struct{ rank, id int }

func newBPE(raw json.RawMessage) (model, Family, error) {
	var c struct {
		Type                    string            `json:"type"`
		Dropout                 *float64          `json:"dropout"`
		UnkToken                *string           `json:"unk_token"`
		ContinuingSubwordPrefix *string           `json:"continuing_subword_prefix"`
		EndOfWordSuffix         *string           `json:"end_of_word_suffix"`
		FuseUnk                 bool              `json:"fuse_unk"`
		ByteFallback            bool              `json:"byte_fallback"`
		IgnoreMerges            bool              `json:"ignore_merges"`
		Vocab                   map[string]int    `json:"vocab"`
		Merges                  []json.RawMessage `json:"merges"`
	}
	if err := decodeStrict(raw, &c); err != nil {
		return nil, "", err
	}
	if c.Dropout != nil && *c.Dropout != 0 {
		return nil, "", fmt.Errorf("dropout %v is not supported (encoding would be random)", *c.Dropout)
	}
	b := &bpe{ids: c.Vocab, merges: make(map[[2]int]merge, len(c.Merges)), unk: -1, fuseUnk: c.FuseUnk,
		byteFallback: c.ByteFallback, ignoreMerges: c.IgnoreMerges}
	if c.ContinuingSubwordPrefix != nil {
		b.prefix = *c.ContinuingSubwordPrefix
	}
	if c.EndOfWordSuffix != nil {
		b.suffix = *c.EndOfWordSuffix
	}
	if c.UnkToken != nil {
		id, ok := c.Vocab[*c.UnkToken]
		if !ok {
			return nil, "", fmt.Errorf("unknown token %q is not in the vocabulary", *c.UnkToken)
		}
		b.unk = id
	}
	for rank, m := range c.Merges {
		// "a b" (older files) or ["a", "b"].
		var pair []string
		var s string
		if err := json.Unmarshal(m, &s); err == nil {
			pair = strings.SplitN(s, " ", 2)
		} else if err := json.Unmarshal(m, &pair); err != nil {
			return nil, "", fmt.Errorf("merges[%d]: want \"a b\" or [a, b]", rank)
		}
		if len(pair) != 2 {
			return nil, "", fmt.Errorf("merges[%d]: want two tokens", rank)
		}
		a, okA := c.Vocab[pair[0]]
		z, okZ := c.Vocab[pair[1]]
		if !okA || !okZ {
			return nil, "", fmt.Errorf("merges[%d]: %q or %q is not in the vocabulary", rank, pair[0], pair[1])
		}
		// The merged token drops the second token's prefix, counted in bytes as the reference does.
		joined := pair[0] + pair[1][min(len(b.prefix), len(pair[1])):]
		id, ok := c.Vocab[joined]
		if !ok {
			return nil, "", fmt.Errorf("merges[%d]: %q is not in the vocabulary", rank, joined)
		}
		if _, dup := b.merges[[2]int{a, z}]; !dup {
			b.merges[[2]int{a, z}] = merge{rank, id}
		}
	}
	fam := BPE
	if b.byteFallback {
		fam = SentencePieceBPE
	}
	return b, fam, nil
}

func (b *bpe) vocab() map[string]int { return b.ids }

// symbol is one symbol of a word being merged: a token id and the number of bytes of the word it
// stands for, linked to its neighbours (prev/next -1 at the ends; len 0 once merged into its left
// neighbour). Offsets are the running sum of the lengths, as in the reference.
type symbol struct {
	id, len    int
	prev, next int
}

func (b *bpe) tokenize(word string) ([]token, error) {
	if b.ignoreMerges {
		if id, ok := b.ids[word]; ok {
			return []token{{id, 0, len(word)}}, nil
		}
	}
	var syms []symbol
	add := func(id, n int) {
		syms = append(syms, symbol{id: id, len: n, prev: len(syms) - 1, next: -1})
		if len(syms) > 1 {
			syms[len(syms)-2].next = len(syms) - 1
		}
	}
	unk, unkLen := false, 0
	for i, r := range word {
		n := utf8.RuneLen(r)
		s := word[i : i+n]
		if i > 0 {
			s = b.prefix + s
		}
		if i+n == len(word) {
			s += b.suffix
		}
		if id, ok := b.ids[s]; ok {
			if unk {
				add(b.unk, unkLen)
				unk = false
			}
			add(id, n)
			continue
		}
		if b.byteFallback {
			// The bytes of s, prefix and suffix included, as the reference does; each byte token
			// counts one byte of the word.
			var ids []int
			for k := 0; k < len(s); k++ {
				id, ok := b.ids[fmt.Sprintf("<0x%02X>", s[k])]
				if !ok {
					ids = nil
					break
				}
				ids = append(ids, id)
			}
			if ids != nil {
				// A pending unknown token stays pending here, as in the reference.
				for _, id := range ids {
					add(id, 1)
				}
				continue
			}
		}
		if b.unk >= 0 {
			switch {
			case unk && b.fuseUnk:
				unkLen += n
			case unk:
				add(b.unk, unkLen)
				unkLen = n
			default:
				unk, unkLen = true, n
			}
		}
	}
	if unk {
		add(b.unk, unkLen)
	}
	b.mergeAll(syms)
	var out []token
	pos := 0
	for _, s := range syms {
		if s.len > 0 {
			out = append(out, token{s.id, min(pos, len(word)), min(pos+s.len, len(word))})
			pos += s.len
		}
	}
	return out, nil
}

// candidate is a possible merge of the symbol at pos with its right neighbour.
type candidate struct{ pos, rank, id int }

type candidates []candidate

func (c candidates) Len() int { return len(c) }
func (c candidates) Less(i, j int) bool {
	if c[i].rank != c[j].rank {
		return c[i].rank < c[j].rank
	}
	return c[i].pos < c[j].pos
}
func (c candidates) Swap(i, j int) { c[i], c[j] = c[j], c[i] }
func (c *candidates) Push(x any)   { *c = append(*c, x.(candidate)) }
func (c *candidates) Pop() any {
	old := *c
	x := old[len(old)-1]
	*c = old[:len(old)-1]
	return x
}

// mergeAll is the reference's Word::merge_all without dropout: a queue of candidate merges ordered by
// rank, then position; stale entries are skipped when popped.
func (b *bpe) mergeAll(syms []symbol) {
	q := &candidates{}
	for i := 0; i+1 < len(syms); i++ {
		if m, ok := b.merges[[2]int{syms[i].id, syms[i+1].id}]; ok {
			*q = append(*q, candidate{i, m.rank, m.id})
		}
	}
	heap.Init(q)
	for q.Len() > 0 {
		top := heap.Pop(q).(candidate)
		cur := &syms[top.pos]
		if cur.len == 0 || cur.next < 0 {
			continue
		}
		rightPos := cur.next
		right := syms[rightPos]
		if m, ok := b.merges[[2]int{cur.id, right.id}]; !ok || m.id != top.id {
			continue
		}
		cur.id, cur.len, cur.next = top.id, cur.len+right.len, right.next
		syms[rightPos].len = 0
		nextPos := cur.next
		if nextPos >= 0 {
			syms[nextPos].prev = top.pos
		}
		if cur.prev >= 0 {
			if m, ok := b.merges[[2]int{syms[cur.prev].id, cur.id}]; ok {
				heap.Push(q, candidate{cur.prev, m.rank, m.id})
			}
		}
		if nextPos >= 0 {
			if m, ok := b.merges[[2]int{cur.id, syms[nextPos].id}]; ok {
				heap.Push(q, candidate{top.pos, m.rank, m.id})
			}
		}
	}
}
