package tokenizer

import (
	"fmt"
	"os"
	"slices"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Family names the layout of a tokenizer.json, as far as it changes offsets and special tokens.
type Family string

const (
	WordPiece        Family = "wordpiece"        // BERT, MiniLM, ELECTRA
	BPE              Family = "bpe"              // byte-level BPE: GPT-2, RoBERTa, BART; Llama 3, Qwen2 behind a Split
	SentencePieceBPE Family = "bpe-bytefallback" // BPE with <0xNN> byte fallback: Llama 2, Mistral, Gemma
	Unigram          Family = "unigram"          // DeBERTa-v3, ALBERT, XLM-R (SentencePiece unigram)
	WordLevel        Family = "wordlevel"        // whole-word vocabularies (test models)
)

// Piece is one token of a text: its id and the UTF-8 byte range of the text it covers. Several
// pieces share one character's range where a character is split into byte tokens.
type Piece struct {
	ID         int
	Start, End int
}

// Encoding is one or two sequences with the special tokens of the post-processor. Start and End are
// UTF-8 byte offsets into the sequence Seq names (0 or 1); both are 0 for special tokens (Seq -1).
type Encoding struct {
	IDs     []int64
	TypeIDs []int64
	Seq     []int8
	Start   []int
	End     []int
}

// Len is the number of tokens.
func (e *Encoding) Len() int { return len(e.IDs) }

// Tokenizer encodes text as a Hugging Face tokenizer.json does. It is safe for concurrent use.
type Tokenizer struct {
	family Family
	norm   normalizer
	pre    preTokenizer
	model  model
	post   postProcessor
	dec    decoder
	tokens []string       // by id: the vocabulary and the added tokens
	added  map[string]int // added tokens by content
	// literal are the added tokens that the reference matches in the text before normalising
	// (normalized false), longest first.
	literal []addedToken
	unk     int
	pad     int
	mask    int
}

// LoadFile reads a tokenizer.json file.
func LoadFile(path string) (*Tokenizer, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	t, err := Load(data)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return t, nil
}

// Load reads the contents of a tokenizer.json. Its truncation and padding settings are ignored.
func Load(data []byte) (*Tokenizer, error) {
	var f file
	if err := decodeStrict(data, &f); err != nil {
		return nil, fmt.Errorf("tokenizer.json: %w", err)
	}
	t := &Tokenizer{added: map[string]int{}, unk: -1, pad: -1, mask: -1}
	var err error
	if t.model, t.family, err = buildModel(f.Model); err != nil {
		return nil, fmt.Errorf("tokenizer.json: %w", err)
	}
	if t.norm, err = buildNormalizer(f.Normalizer, "normalizer"); err != nil {
		return nil, fmt.Errorf("tokenizer.json: %w", err)
	}
	if t.pre, err = buildPreTokenizer(f.PreTokenizer, "pre_tokenizer"); err != nil {
		return nil, fmt.Errorf("tokenizer.json: %w", err)
	}
	if t.post, err = buildPostProcessor(f.PostProcessor, "post_processor"); err != nil {
		return nil, fmt.Errorf("tokenizer.json: %w", err)
	}
	if t.dec, err = buildDecoder(f.Decoder, "decoder"); err != nil {
		return nil, fmt.Errorf("tokenizer.json: %w", err)
	}
	vocab := t.model.vocab()
	size := 0
	for _, id := range vocab {
		size = max(size, id+1)
	}
	for _, a := range f.AddedTokens {
		size = max(size, a.ID+1)
	}
	t.tokens = make([]string, size)
	for tok, id := range vocab {
		if id >= 0 {
			t.tokens[id] = tok
		}
	}
	for _, a := range f.AddedTokens {
		if a.Content != "" && a.ID >= 0 {
			t.added[a.Content] = a.ID
			t.tokens[a.ID] = a.Content
			if !a.Normalized {
				t.literal = append(t.literal, a)
			}
		}
	}
	slices.SortStableFunc(t.literal, func(a, b addedToken) int { return len(b.Content) - len(a.Content) })
	find := func(names ...string) int {
		for _, n := range names {
			if id, ok := t.added[n]; ok {
				return id
			}
			if id, ok := vocab[n]; ok {
				return id
			}
		}
		return -1
	}
	t.unk = find("[UNK]", "<unk>")
	t.pad = find("[PAD]", "<pad>", "<|endoftext|>")
	t.mask = find("[MASK]", "<mask>")
	if t.pad < 0 {
		t.pad = 0
	}
	return t, nil
}

// Family reports the tokenizer's layout.
func (t *Tokenizer) Family() Family { return t.family }

// PadID is the id used to pad a batch.
func (t *Tokenizer) PadID() int { return t.pad }

// MaskID is the id of the mask token, or of the unknown token where there is no mask; -1 if neither.
func (t *Tokenizer) MaskID() int {
	if t.mask >= 0 {
		return t.mask
	}
	return t.unk
}

// Token is the vocabulary entry of id ("" if none).
func (t *Tokenizer) Token(id int) string {
	if id < 0 || id >= len(t.tokens) {
		return ""
	}
	return t.tokens[id]
}

// Tokenize splits text into pieces with byte offsets into text, without special tokens. Added tokens
// written in the text are encoded as text: a reply cannot inject a separator into a model input.
func (t *Tokenizer) Tokenize(s string) ([]Piece, error) {
	pieces, err := t.tokenizeRange(s, 0, len(s), nil)
	if err != nil {
		return nil, err
	}
	t.post.trimOffsets(pieces, t.Token)
	return pieces, nil
}

// EncodeText tokenises text as the reference's encode(text, add_special_tokens=False) does: added
// tokens written in the text (those the reference matches before normalising) become their own ids,
// with lstrip, rstrip and single_word as the file says, and each stretch between them is normalised
// and pre-tokenised on its own. It is how a generator's training loop tokenises a prompt rendered by
// a chat template.
func (t *Tokenizer) EncodeText(s string) ([]Piece, error) {
	var pieces []Piece
	var err error
	last := 0
	for _, m := range t.matchAdded(s) {
		if pieces, err = t.tokenizeRange(s, last, m.start, pieces); err != nil {
			return nil, err
		}
		pieces = append(pieces, Piece{ID: m.id, Start: m.start, End: m.end})
		last = m.end
	}
	if pieces, err = t.tokenizeRange(s, last, len(s), pieces); err != nil {
		return nil, err
	}
	t.post.trimOffsets(pieces, t.Token)
	return pieces, nil
}

type addedMatch struct{ id, start, end int }

// matchAdded finds the added tokens in s, leftmost first and longest at a position, as the
// reference's AddedVocabulary does.
func (t *Tokenizer) matchAdded(s string) []addedMatch {
	if len(t.literal) == 0 {
		return nil
	}
	var out []addedMatch
	done := 0 // bytes before this belong to an earlier match
	for i := 0; i < len(s); {
		var hit *addedToken
		for k := range t.literal {
			if strings.HasPrefix(s[i:], t.literal[k].Content) {
				hit = &t.literal[k]
				break // longest first
			}
		}
		if hit == nil {
			i++
			continue
		}
		start, end := i, i+len(hit.Content)
		if hit.SingleWord && (endsWithWord(s[:start]) || startsWithWord(s[end:])) {
			i++
			continue
		}
		if hit.LStrip {
			start = max(done, len(strings.TrimRightFunc(s[:start], unicode.IsSpace)))
		}
		if hit.RStrip {
			end = len(s) - len(strings.TrimLeftFunc(s[end:], unicode.IsSpace))
		}
		out = append(out, addedMatch{hit.ID, start, end})
		done, i = end, end
	}
	return out
}

func endsWithWord(s string) bool {
	r, n := utf8.DecodeLastRuneInString(s)
	return n > 0 && isWordChar(r)
}

func startsWithWord(s string) bool {
	r, n := utf8.DecodeRuneInString(s)
	return n > 0 && isWordChar(r)
}

// tokenizeRange normalises, pre-tokenises and tokenises s[from:to], appending pieces whose offsets
// are bytes of s.
func (t *Tokenizer) tokenizeRange(s string, from, to int, pieces []Piece) ([]Piece, error) {
	if from >= to {
		return pieces, nil
	}
	orig := newText(s[from:to])
	for i := range orig {
		orig[i].start += from
		orig[i].end += from
	}
	norm, err := t.norm.normalize(orig)
	if err != nil {
		return nil, fmt.Errorf("normalizer: %w", err)
	}
	segs, err := t.pre.preTokenize([]segment{{t: norm, whole: from == 0}})
	if err != nil {
		return nil, fmt.Errorf("pre_tokenizer: %w", err)
	}
	for _, seg := range segs {
		if len(seg.t) == 0 {
			continue
		}
		word := seg.t.String()
		toks, err := t.model.tokenize(word)
		if err != nil {
			return nil, fmt.Errorf("model: %w", err)
		}
		at := seg.t.charIndex()
		for _, tk := range toks {
			if tk.end <= tk.start {
				continue
			}
			start, end := seg.t.span(at[tk.start], at[tk.end-1]+1)
			pieces = append(pieces, Piece{ID: tk.id, Start: start, End: end})
		}
	}
	return pieces, nil
}

// Specials is the number of special tokens the post-processor adds to one sequence (pair false) or
// two (pair true).
func (t *Tokenizer) Specials(pair bool) int {
	tmpl := t.post.single
	if pair {
		tmpl = t.post.pair
	}
	n := 0
	for _, it := range tmpl {
		n += len(it.ids)
	}
	return n
}

// Assemble joins the pieces of one sequence (b nil) or two with the post-processor's special tokens.
func (t *Tokenizer) Assemble(a, b []Piece) Encoding {
	tmpl := t.post.single
	if b != nil {
		tmpl = t.post.pair
	}
	n := len(a) + len(b) + t.Specials(b != nil)
	e := Encoding{IDs: make([]int64, 0, n), TypeIDs: make([]int64, 0, n), Seq: make([]int8, 0, n),
		Start: make([]int, 0, n), End: make([]int, 0, n)}
	for _, it := range tmpl {
		if it.seq < 0 {
			for _, id := range it.ids {
				e.IDs = append(e.IDs, int64(id))
				e.TypeIDs = append(e.TypeIDs, int64(it.typeID))
				e.Seq = append(e.Seq, -1)
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
			e.Seq = append(e.Seq, int8(it.seq))
			e.Start = append(e.Start, p.Start)
			e.End = append(e.End, p.End)
		}
	}
	return e
}

// EncodePair encodes two texts with the special tokens of a pair, without truncation.
func (t *Tokenizer) EncodePair(a, b string) (Encoding, error) {
	pa, err := t.Tokenize(a)
	if err != nil {
		return Encoding{}, err
	}
	pb, err := t.Tokenize(b)
	if err != nil {
		return Encoding{}, err
	}
	if pb == nil {
		pb = []Piece{}
	}
	return t.Assemble(pa, pb), nil
}

// Decode turns ids back into text with the decoder (special tokens included as they are).
func (t *Tokenizer) Decode(ids []int) string {
	toks := make([]string, 0, len(ids))
	for _, id := range ids {
		toks = append(toks, t.Token(id))
	}
	return strings.Join(t.dec.decodeChain(toks), "")
}
