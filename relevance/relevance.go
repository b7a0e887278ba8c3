// Package relevance embeds sentences with a sentence-encoder model (all-MiniLM-L6-v2 for the built-in
// one) so that gainsay can skip (fact, sentence) pairs about different things before the NLI model
// reads them: retrieve, then verify. A sentence about the weather cannot contradict a fact about a
// boat, and an NLI model trained on image captions is apt to say it does; the gate also keeps the
// cost of a profile of hundreds of facts close to that of the few facts each sentence is about.
package relevance

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"slices"
	"strings"

	"github.com/gainsay/gainsay/internal/onnx"
	"github.com/gainsay/gainsay/tokenizer"
)

// Options tune how an Embedder runs. The zero value is usable.
type Options struct {
	BatchSize int    // sentences per ONNX Runtime run (0: 64)
	Threads   int    // ONNX Runtime intra-op threads (0: its default)
	Library   string // the ONNX Runtime library ("": the usual places)
	SHA256    string // when set, must equal the SHA-256 of model.onnx
}

// Embedder turns sentences into unit vectors whose dot product is their cosine similarity. It is safe
// for concurrent use.
type Embedder struct {
	sha256    string
	session   *onnx.Session
	tok       *tokenizer.Tokenizer
	dim       int
	maxLen    int
	batchSize int
}

// config is what the embedder reads from config.json.
type config struct {
	HiddenSize int  `json:"hidden_size"`
	MaxLength  int  `json:"max_length"`
	Normalize  bool `json:"normalize"`
}

// OpenDir loads a sentence-encoder folder: model.onnx (inputs input_ids, attention_mask, optionally
// token_type_ids; output "embedding", [batch, hidden_size], L2-normalised), tokenizer.json, config.json.
func OpenDir(dir string, opts Options) (*Embedder, error) {
	e, err := Open(os.DirFS(dir), opts)
	if err != nil {
		return nil, fmt.Errorf("sentence encoder %s: %w", dir, err)
	}
	return e, nil
}

// Open loads a sentence encoder from the files of fsys.
func Open(fsys fs.FS, opts Options) (*Embedder, error) {
	read := func(name string) ([]byte, error) {
		b, err := fs.ReadFile(fsys, name)
		if errors.Is(err, fs.ErrNotExist) {
			return nil, fmt.Errorf("%s is missing (a sentence-encoder folder holds model.onnx, tokenizer.json and config.json)", name)
		}
		return b, err
	}
	raw, err := read("config.json")
	if err != nil {
		return nil, err
	}
	var cfg config
	if err := json.Unmarshal(raw, &cfg); err != nil {
		return nil, fmt.Errorf("config.json: %w", err)
	}
	if cfg.HiddenSize <= 0 || !cfg.Normalize {
		return nil, fmt.Errorf("config.json: want hidden_size and normalize: true (the output must be unit vectors)")
	}
	raw, err = read("tokenizer.json")
	if err != nil {
		return nil, err
	}
	tok, err := tokenizer.Load(raw)
	if err != nil {
		return nil, err
	}
	raw, err = read("model.onnx")
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(raw)
	digest := hex.EncodeToString(sum[:])
	if opts.SHA256 != "" && !strings.EqualFold(digest, opts.SHA256) {
		return nil, fmt.Errorf("model.onnx: SHA-256 is %s, want %s (the file is damaged or not the expected model)", digest, opts.SHA256)
	}
	if err := onnx.InitRuntime(opts.Library); err != nil {
		return nil, err
	}
	e := &Embedder{sha256: digest, tok: tok, dim: cfg.HiddenSize, maxLen: cfg.MaxLength, batchSize: opts.BatchSize}
	if e.maxLen <= 0 {
		e.maxLen = 256
	}
	if e.batchSize <= 0 {
		e.batchSize = 64
	}
	if e.session, err = onnx.Open(raw, "embedding", cfg.HiddenSize, opts.Threads); err != nil {
		return nil, fmt.Errorf("model.onnx: %w", err)
	}
	return e, nil
}

// SHA256 is the hex SHA-256 of model.onnx.
func (e *Embedder) SHA256() string { return e.sha256 }

// Close releases the ONNX Runtime session.
func (e *Embedder) Close() error { return e.session.Close() }

// Embed returns one unit vector per text, in order. Texts are tokenised as the model's tokenizer does
// (one sequence with its special tokens, at most the configured length) and run in batches of similar
// length.
func (e *Embedder) Embed(texts []string) ([][]float32, error) {
	rows := make([]onnx.Row, len(texts))
	for i, t := range texts {
		pieces, err := e.tok.Tokenize(t)
		if err != nil {
			return nil, fmt.Errorf("text %d: %w", i, err)
		}
		if keep := e.maxLen - e.tok.Specials(false); len(pieces) > keep {
			pieces = pieces[:max(0, keep)]
		}
		enc := e.tok.Assemble(pieces, nil)
		rows[i] = onnx.Row{IDs: enc.IDs, TypeIDs: enc.TypeIDs}
	}
	order := make([]int, len(rows))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return len(rows[a].IDs) - len(rows[b].IDs) })
	out := make([][]float32, len(texts))
	for start := 0; start < len(order); start += e.batchSize {
		idx := order[start:min(start+e.batchSize, len(order))]
		batch := make([]onnx.Row, len(idx))
		for k, i := range idx {
			batch[k] = rows[i]
		}
		flat, err := e.session.Run(batch, int64(e.tok.PadID()))
		if err != nil {
			return nil, err
		}
		for k, i := range idx {
			out[i] = flat[k*e.dim : (k+1)*e.dim]
		}
	}
	return out, nil
}

// Cosine is the cosine similarity of two unit vectors (their dot product), in float64.
func Cosine(a, b []float32) float64 {
	s := 0.0
	for i := range min(len(a), len(b)) {
		s += float64(a[i]) * float64(b[i])
	}
	return math.Max(-1, math.Min(1, s))
}
