package nli

import (
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"unicode/utf8"

	"github.com/sugarme/tokenizer"
	"github.com/sugarme/tokenizer/pretrained"
)

// Family names the tokenizer algorithm of a tokenizer.json, as far as it changes how offsets and
// special tokens behave.
type Family string

const (
	WordPiece Family = "wordpiece" // BERT, MiniLM, ELECTRA
	ByteBPE   Family = "bpe"       // RoBERTa, BART (byte-level BPE)
	Unigram   Family = "unigram"   // DeBERTa-v3, ALBERT, XLM-R (SentencePiece unigram with Metaspace)
	WordLevel Family = "wordlevel" // whole-word vocabularies (test models)
)

// Piece is one token of a text: its id and the UTF-8 byte range of the text it covers.
type Piece struct {
	ID         int
	Start, End int
}

// Tokenizer encodes text as a model's tokenizer.json does. Byte-level BPE goes through
// github.com/sugarme/tokenizer, which matches the reference there; for WordPiece and Unigram models the
// library's normalisers differ from the reference, so this package runs its own normalisers,
// pre-tokenisers and word models (normalize.go, pretokenize.go, wordmodel.go). Either way this package
// owns pair assembly, special tokens, the offsets of byte-level tokens and truncation that keeps the
// hypothesis whole. The parity tests prove each family against the reference.
type Tokenizer struct {
	family Family
	bpe    *tokenizer.Tokenizer // byte-level BPE only
	norm   normalizer
	pre    preTokenizer
	model  wordModel
	added  map[string]int // added_tokens by content
	pair   []templateItem
	// trimSpaces: byte-level tokens carry their leading space ("Ġsea"); the reference trims it from
	// the offsets when the post-processor asks for trim_offsets.
	trimSpaces bool
	unkID      int
	padID      int
	maskID     int // -1 where the vocabulary has no mask token
}

// templateItem is one element of the pair template: a run of special tokens, or sequence 0 or 1.
type templateItem struct {
	ids    []int // special token ids; empty for a sequence
	seq    int   // 0 premise, 1 hypothesis; -1 for specials
	typeID int
}

// LoadTokenizer reads a Hugging Face tokenizer.json. Its own padding and truncation are ignored: the
// scorer pads per batch and truncates the premise first.
func LoadTokenizer(data []byte) (*Tokenizer, error) {
	var raw map[string]any
	if err := json.Unmarshal(data, &raw); err != nil {
		return nil, fmt.Errorf("tokenizer.json: %w", err)
	}
	t := &Tokenizer{maskID: -1, padID: -1, unkID: -1, added: map[string]int{}}
	if list, ok := raw["added_tokens"].([]any); ok {
		for _, a := range list {
			m, _ := a.(map[string]any)
			content, _ := m["content"].(string)
			if id, ok := m["id"].(float64); ok && content != "" {
				t.added[content] = int(id)
			}
		}
	}
	model, _ := raw["model"].(map[string]any)
	var err error
	switch typ, _ := model["type"].(string); typ {
	case "WordPiece":
		t.family = WordPiece
		t.model, err = newWordPiece(model)
	case "Unigram":
		t.family = Unigram
		t.model, err = newUnigram(model)
	case "WordLevel":
		t.family = WordLevel
		t.model, err = newWordLevel(model)
	case "BPE":
		t.family = ByteBPE
		if !isByteLevel(raw["pre_tokenizer"]) {
			return nil, fmt.Errorf("tokenizer.json: BPE is supported with a ByteLevel pre-tokenizer only (RoBERTa, BART)")
		}
		post, _ := raw["post_processor"].(map[string]any)
		delete(raw, "padding")
		delete(raw, "truncation")
		raw["post_processor"] = nil // this package assembles pairs itself
		fixed, _ := json.Marshal(raw)
		t.bpe, err = buildTokenizer(fixed)
		raw["post_processor"] = post
	default:
		return nil, fmt.Errorf("tokenizer.json: model type %q is not supported (want WordPiece, BPE, Unigram or WordLevel)", typ)
	}
	if err != nil {
		return nil, fmt.Errorf("tokenizer.json: model: %w", err)
	}
	if t.bpe == nil {
		if t.norm, err = buildNormalizer(raw["normalizer"]); err != nil {
			return nil, fmt.Errorf("tokenizer.json: %w", err)
		}
		if t.pre, err = buildPreTokenizer(raw["pre_tokenizer"]); err != nil {
			return nil, fmt.Errorf("tokenizer.json: %w", err)
		}
	}
	t.readSpecials()
	post, _ := raw["post_processor"].(map[string]any)
	if err := t.readPostProcessor(post); err != nil {
		return nil, fmt.Errorf("tokenizer.json: post_processor: %w", err)
	}
	return t, nil
}

func isByteLevel(pre any) bool {
	m, _ := pre.(map[string]any)
	switch m["type"] {
	case "ByteLevel":
		return true
	case "Sequence":
		list, _ := m["pretokenizers"].([]any)
		for _, p := range list {
			if isByteLevel(p) {
				return true
			}
		}
	}
	return false
}

// buildTokenizer runs the library's constructor, turning its panics on unexpected fields into errors.
func buildTokenizer(config []byte) (tk *tokenizer.Tokenizer, err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("unsupported configuration: %v", r)
		}
	}()
	return pretrained.FromReader(strings.NewReader(string(config)))
}

// readSpecials finds the unknown, padding and mask tokens by the names public models use.
func (t *Tokenizer) readSpecials() {
	find := func(names ...string) int {
		for _, n := range names {
			if id, ok := t.added[n]; ok {
				return id
			}
			if t.model != nil {
				if id, ok := t.model.id(n); ok {
					return id
				}
			} else if id, ok := t.bpe.TokenToId(n); ok {
				return id
			}
		}
		return -1
	}
	t.unkID = find("[UNK]", "<unk>")
	t.padID = find("[PAD]", "<pad>")
	t.maskID = find("[MASK]", "<mask>")
	if t.padID < 0 {
		t.padID = 0
	}
}

func (t *Tokenizer) readPostProcessor(post map[string]any) error {
	if post == nil {
		t.pair = []templateItem{{seq: 0, typeID: 0}, {seq: 1, typeID: 1}}
		return nil
	}
	switch typ, _ := post["type"].(string); typ {
	case "TemplateProcessing":
		return t.readTemplate(post)
	case "BertProcessing":
		cls, sep, err := clsSep(post)
		if err != nil {
			return err
		}
		t.pair = []templateItem{special(cls, 0), {seq: 0}, special(sep, 0), {seq: 1, typeID: 1}, special(sep, 1)}
	case "RobertaProcessing":
		cls, sep, err := clsSep(post)
		if err != nil {
			return err
		}
		t.pair = []templateItem{special(cls, 0), {seq: 0}, special(sep, 0), special(sep, 0), {seq: 1}, special(sep, 0)}
		t.trimSpaces, _ = post["trim_offsets"].(bool)
	case "ByteLevel":
		t.pair = []templateItem{{seq: 0}, {seq: 1, typeID: 1}}
		t.trimSpaces, _ = post["trim_offsets"].(bool)
	case "Sequence":
		list, _ := post["processors"].([]any)
		t.pair = nil
		for _, p := range list {
			pm, _ := p.(map[string]any)
			if pm == nil {
				continue
			}
			switch pm["type"] {
			case "ByteLevel":
				t.trimSpaces, _ = pm["trim_offsets"].(bool)
			default:
				if err := t.readPostProcessor(pm); err != nil {
					return err
				}
			}
		}
		if t.pair == nil {
			t.pair = []templateItem{{seq: 0}, {seq: 1, typeID: 1}}
		}
	default:
		return fmt.Errorf("type %q is not supported", typ)
	}
	return nil
}

func special(id, typeID int) templateItem {
	return templateItem{ids: []int{id}, seq: -1, typeID: typeID}
}

func clsSep(post map[string]any) (cls, sep int, err error) {
	get := func(key string) (int, error) {
		pair, ok := post[key].([]any)
		if !ok || len(pair) != 2 {
			return 0, fmt.Errorf("field %s: want [token, id]", key)
		}
		id, ok := pair[1].(float64)
		if !ok {
			return 0, fmt.Errorf("field %s: id is not a number", key)
		}
		return int(id), nil
	}
	if cls, err = get("cls"); err != nil {
		return
	}
	sep, err = get("sep")
	return
}

func (t *Tokenizer) readTemplate(post map[string]any) error {
	specials := map[string][]int{}
	if sm, ok := post["special_tokens"].(map[string]any); ok {
		for name, v := range sm {
			entry, _ := v.(map[string]any)
			ids, _ := entry["ids"].([]any)
			for _, id := range ids {
				f, ok := id.(float64)
				if !ok {
					return fmt.Errorf("special_tokens %s: ids must be numbers", name)
				}
				specials[name] = append(specials[name], int(f))
			}
		}
	}
	items, ok := post["pair"].([]any)
	if !ok {
		return errors.New("TemplateProcessing without a pair template")
	}
	t.pair = nil
	for i, it := range items {
		m, _ := it.(map[string]any)
		if s, ok := m["SpecialToken"].(map[string]any); ok {
			name, _ := s["id"].(string)
			ids, ok := specials[name]
			if !ok {
				return fmt.Errorf("pair[%d]: special token %q has no ids", i, name)
			}
			typ, _ := s["type_id"].(float64)
			t.pair = append(t.pair, templateItem{ids: ids, seq: -1, typeID: int(typ)})
			continue
		}
		if s, ok := m["Sequence"].(map[string]any); ok {
			typ, _ := s["type_id"].(float64)
			seq := 0
			if s["id"] == "B" {
				seq = 1
			}
			t.pair = append(t.pair, templateItem{seq: seq, typeID: int(typ)})
			continue
		}
		return fmt.Errorf("pair[%d]: want SpecialToken or Sequence", i)
	}
	return nil
}

// Family reports the tokenizer's algorithm.
func (t *Tokenizer) Family() Family { return t.family }

// MaskID is the id of the mask token, or of the unknown token where there is no mask; -1 if neither.
func (t *Tokenizer) MaskID() int {
	if t.maskID >= 0 {
		return t.maskID
	}
	return t.unkID
}

// PadID is the id used to pad a batch.
func (t *Tokenizer) PadID() int { return t.padID }

// Tokenize splits text into pieces with byte offsets into text, without special tokens.
func (t *Tokenizer) Tokenize(text string) (pieces []Piece, err error) {
	if text == "" {
		return nil, nil
	}
	if t.bpe != nil {
		return t.tokenizeBPE(text)
	}
	words := t.pre([]ntext{t.norm(newNText(text))})
	for _, w := range words {
		s := w.String()
		// charAt maps a byte offset of s to its character index in w.
		charAt := make([]int, len(s)+1)
		pos := 0
		for i, c := range w {
			n := utf8.RuneLen(c.r)
			for k := 0; k < n; k++ {
				charAt[pos+k] = i
			}
			pos += n
		}
		for _, p := range t.model.tokenize(s) {
			first, last := w[charAt[p.Start]], w[charAt[p.End-1]]
			pieces = append(pieces, Piece{ID: p.ID, Start: first.start, End: last.end})
		}
	}
	return pieces, nil
}

func (t *Tokenizer) tokenizeBPE(text string) (pieces []Piece, err error) {
	defer func() {
		if r := recover(); r != nil {
			pieces, err = nil, fmt.Errorf("tokenizer failed on %q: %v", text, r)
		}
	}()
	enc, err := t.bpe.EncodeSingle(text, false)
	if err != nil {
		return nil, err
	}
	pieces = make([]Piece, len(enc.Ids))
	for i, id := range enc.Ids {
		start, end := enc.Offsets[i][0], enc.Offsets[i][1]
		if t.trimSpaces {
			tok := enc.Tokens[i]
			for strings.HasPrefix(tok, "Ġ") && start < end && text[start] == ' ' {
				tok = strings.TrimPrefix(tok, "Ġ")
				start++
			}
		}
		pieces[i] = Piece{ID: id, Start: start, End: end}
	}
	return pieces, nil
}
