package tokenizer

import (
	"encoding/json"
	"fmt"
	"unicode/utf8"
)

// token is one token of a word: its id and its UTF-8 byte range in the word.
type token struct {
	id         int
	start, end int
}

// model turns one pre-tokenised word into tokens.
type model interface {
	tokenize(word string) ([]token, error)
	vocab() map[string]int
}

func buildModel(raw json.RawMessage) (model, Family, error) {
	const path = "model"
	if isNull(raw) {
		return nil, "", errAt(path, "", fmt.Errorf("missing"))
	}
	typ, err := componentType(raw)
	if err != nil {
		return nil, "", errAt(path, "", err)
	}
	var m model
	var fam Family
	switch typ {
	case "WordPiece":
		m, fam, err = newWordPiece(raw)
	case "BPE":
		m, fam, err = newBPE(raw)
	case "Unigram":
		m, fam, err = newUnigram(raw)
	case "WordLevel":
		m, fam, err = newWordLevel(raw)
	default:
		err = fmt.Errorf("model type %q is not supported (want WordPiece, BPE, Unigram or WordLevel)", typ)
	}
	if err != nil {
		return nil, "", errAt(path, typ, err)
	}
	return m, fam, nil
}

// wordPiece is the greedy longest-match-first algorithm of BERT, as in the reference: a word longer
// than maxChars, or one with a part that no vocabulary entry covers, becomes a single unknown token.
type wordPiece struct {
	ids      map[string]int
	unk      int
	prefix   string
	maxChars int
}

func newWordPiece(raw json.RawMessage) (model, Family, error) {
	var c struct {
		Type                    string         `json:"type"`
		UnkToken                *string        `json:"unk_token"`
		ContinuingSubwordPrefix *string        `json:"continuing_subword_prefix"`
		MaxInputCharsPerWord    *int           `json:"max_input_chars_per_word"`
		Vocab                   map[string]int `json:"vocab"`
	}
	if err := decodeStrict(raw, &c); err != nil {
		return nil, "", err
	}
	wp := &wordPiece{ids: c.Vocab, prefix: "##", maxChars: 100}
	if c.ContinuingSubwordPrefix != nil {
		wp.prefix = *c.ContinuingSubwordPrefix
	}
	if c.MaxInputCharsPerWord != nil {
		wp.maxChars = *c.MaxInputCharsPerWord
	}
	unk := "[UNK]"
	if c.UnkToken != nil {
		unk = *c.UnkToken
	}
	id, ok := c.Vocab[unk]
	if !ok {
		return nil, "", fmt.Errorf("unknown token %q is not in the vocabulary", unk)
	}
	wp.unk = id
	return wp, WordPiece, nil
}

func (wp *wordPiece) vocab() map[string]int { return wp.ids }

func (wp *wordPiece) tokenize(word string) ([]token, error) {
	if utf8.RuneCountInString(word) > wp.maxChars {
		return []token{{wp.unk, 0, len(word)}}, nil
	}
	var out []token
	for start := 0; start < len(word); {
		end := len(word)
		found := -1
		for end > start {
			sub := word[start:end]
			if start > 0 {
				sub = wp.prefix + sub
			}
			if id, ok := wp.ids[sub]; ok {
				found = id
				break
			}
			// Step back one character, not one byte.
			_, size := utf8.DecodeLastRuneInString(word[start:end])
			end -= size
		}
		if found < 0 {
			return []token{{wp.unk, 0, len(word)}}, nil
		}
		out = append(out, token{found, start, end})
		start = end
	}
	return out, nil
}

// wordLevel maps whole words to ids, unknown words to the unknown token.
type wordLevel struct {
	ids map[string]int
	unk int
}

func newWordLevel(raw json.RawMessage) (model, Family, error) {
	var c struct {
		Type     string         `json:"type"`
		Vocab    map[string]int `json:"vocab"`
		UnkToken string         `json:"unk_token"`
	}
	if err := decodeStrict(raw, &c); err != nil {
		return nil, "", err
	}
	id, ok := c.Vocab[c.UnkToken]
	if !ok {
		return nil, "", fmt.Errorf("unknown token %q is not in the vocabulary", c.UnkToken)
	}
	return &wordLevel{ids: c.Vocab, unk: id}, WordLevel, nil
}

func (w *wordLevel) vocab() map[string]int { return w.ids }

func (w *wordLevel) tokenize(word string) ([]token, error) {
	id, ok := w.ids[word]
	if !ok {
		id = w.unk
	}
	return []token{{id, 0, len(word)}}, nil
}
