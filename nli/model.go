package nli

import (
	"cmp"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"maps"
	"math"
	"os"
	"slices"
	"strings"
	"time"

	"github.com/gainsay/gainsay/internal/onnx"
	"github.com/gainsay/gainsay/tokenizer"
)

// Pair is one premise (a profile fact) and hypothesis (a reply sentence).
type Pair struct {
	Premise, Hypothesis string
}

// Options tune how a model runs. The zero value is usable.
type Options struct {
	// MaxLength caps tokens per pair (0: the model's own limit).
	MaxLength int
	// BatchSize is the number of pairs per ONNX Runtime run (0: 32).
	BatchSize int
	// Threads for ONNX Runtime's intra-op pool (0: its default, all cores).
	Threads int
	// Library is the ONNX Runtime shared library ("" : FindLibrary's choice).
	Library string
	// SHA256, when set, must equal the SHA-256 of model.onnx.
	SHA256 string
}

// Model is an NLI cross-encoder loaded from a model folder: model.onnx, tokenizer.json and config.json
// (whose id2label says which logit is which label). It is safe for concurrent use, Close included.
type Model struct {
	session     *onnx.Session
	tok         *tokenizer.Tokenizer
	labels      [3]int  // logit index of contradiction, entailment, neutral
	temperature float64 // logits are divided by it before the softmax
	maxLen      int
	batchSize   int
	sha256      string
}

// Files a model folder must hold.
const (
	FileModel     = "model.onnx"
	FileTokenizer = "tokenizer.json"
	FileConfig    = "config.json"
)

// OpenDir loads the model folder dir.
func OpenDir(dir string, opts Options) (*Model, error) {
	m, err := Open(os.DirFS(dir), opts)
	if err != nil {
		return nil, fmt.Errorf("model %s: %w", dir, err)
	}
	return m, nil
}

// Config is what gainsay reads from a model's config.json.
type Config struct {
	ID2Label              map[string]string `json:"id2label"`
	MaxPositionEmbeddings int               `json:"max_position_embeddings"`
	ModelType             string            `json:"model_type"`
	// Temperature, when set, divides the logits before the softmax: a calibration fitted on held-out
	// data (scripts/train/calibrate.py) so that probabilities mean what they say.
	Temperature float64 `json:"temperature"`
}

// ReadConfig parses config.json and maps its labels to logit indexes.
func ReadConfig(data []byte) (Config, [3]int, error) {
	var c Config
	var idx [3]int
	if err := json.Unmarshal(data, &c); err != nil {
		return c, idx, fmt.Errorf("%s: %w", FileConfig, err)
	}
	if len(c.ID2Label) != 3 {
		return c, idx, fmt.Errorf("%s: id2label has %d labels; an NLI model needs exactly contradiction, entailment and neutral", FileConfig, len(c.ID2Label))
	}
	idx = [3]int{-1, -1, -1}
	keys := slices.Sorted(maps.Keys(c.ID2Label)) // a stable order, for stable messages
	for _, k := range keys {
		v := c.ID2Label[k]
		var i int
		if _, err := fmt.Sscanf(k, "%d", &i); err != nil || i < 0 || i > 2 {
			return c, idx, fmt.Errorf("%s: id2label key %q is not 0, 1 or 2", FileConfig, k)
		}
		l, err := ParseLabel(v)
		if err != nil {
			return c, idx, fmt.Errorf("%s: id2label %s is %q; want contradiction, entailment or neutral", FileConfig, k, v)
		}
		idx[l] = i
	}
	if c.Temperature < 0 {
		return c, idx, fmt.Errorf("%s: temperature %v must be positive", FileConfig, c.Temperature)
	}
	if slices.Contains(idx[:], -1) {
		return c, idx, fmt.Errorf("%s: id2label must name contradiction, entailment and neutral once each", FileConfig)
	}
	return c, idx, nil
}

// Open loads a model from the files of fsys.
func Open(fsys fs.FS, opts Options) (*Model, error) {
	read := func(name string) ([]byte, error) {
		b, err := fs.ReadFile(fsys, name)
		if errors.Is(err, fs.ErrNotExist) {
			return nil, fmt.Errorf("%s is missing (a model folder holds %s, %s and %s)", name, FileModel, FileTokenizer, FileConfig)
		}
		return b, err
	}
	cfgData, err := read(FileConfig)
	if err != nil {
		return nil, err
	}
	cfg, labels, err := ReadConfig(cfgData)
	if err != nil {
		return nil, err
	}
	tokData, err := read(FileTokenizer)
	if err != nil {
		return nil, err
	}
	tok, err := tokenizer.Load(tokData)
	if err != nil {
		return nil, err
	}
	onnxData, err := read(FileModel)
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(onnxData)
	digest := hex.EncodeToString(sum[:])
	if opts.SHA256 != "" && !strings.EqualFold(opts.SHA256, digest) {
		return nil, fmt.Errorf("%s: SHA-256 is %s, want %s (the file is damaged or not the expected model)", FileModel, digest, opts.SHA256)
	}
	if err := onnx.InitRuntime(opts.Library); err != nil {
		return nil, err
	}
	m := &Model{tok: tok, labels: labels, sha256: digest, batchSize: opts.BatchSize, temperature: cmp.Or(cfg.Temperature, 1)}
	if m.batchSize <= 0 {
		m.batchSize = 32
	}
	m.maxLen = 512
	if cfg.MaxPositionEmbeddings > 0 {
		m.maxLen = cfg.MaxPositionEmbeddings
		if strings.Contains(cfg.ModelType, "roberta") || cfg.ModelType == "bart" {
			m.maxLen -= 2 // RoBERTa's position ids start after the padding index
		}
	}
	if opts.MaxLength > 0 {
		m.maxLen = min(m.maxLen, opts.MaxLength)
	}
	if m.session, err = onnx.Open(onnxData, "logits", 3, opts.Threads); err != nil {
		return nil, fmt.Errorf("%s: %w", FileModel, err)
	}
	return m, nil
}

// Close releases the ONNX Runtime session once the runs in progress are done; later runs fail.
func (m *Model) Close() error { return m.session.Close() }

// Inputs are the names of the inputs the model takes.
func (m *Model) Inputs() []string { return m.session.Inputs() }

// LabelIndex returns the logit index of a label.
func (m *Model) LabelIndex(l Label) int { return m.labels[l] }

// Temperature is the calibration temperature of config.json (1 when it has none).
func (m *Model) Temperature() float64 { return m.temperature }

// Tokenizer is the model's tokenizer.
func (m *Model) Tokenizer() *tokenizer.Tokenizer { return m.tok }

// MaxLength is the most tokens a pair may have.
func (m *Model) MaxLength() int { return m.maxLen }

// RunTime is the total time spent inside ONNX Runtime's Run so far; the rest of a run's wall time is
// tokenising, padding, attribution bookkeeping and output.
func (m *Model) RunTime() time.Duration { return m.session.RunTime() }

// Rows is the number of encoded pairs run so far (each reading and each attribution variant counts).
func (m *Model) Rows() int64 { return m.session.Rows() }

// Padding is the share of the tokens run so far that were padding (batches are padded to their
// longest pair; pairs of similar length are batched together to keep this small).
func (m *Model) Padding() float64 { return m.session.Padding() }

// SHA256 is the hex SHA-256 of model.onnx.
func (m *Model) SHA256() string { return m.sha256 }

// Encode encodes pairs with the model's tokenizer and length limit, for a Runner.
func (m *Model) Encode(pairs []Pair) ([]Encoding, error) {
	out := make([]Encoding, len(pairs))
	for i, p := range pairs {
		e, err := encodePair(m.tok, p.Premise, p.Hypothesis, m.maxLen)
		if err != nil {
			return nil, fmt.Errorf("pair %d: %w", i, err)
		}
		out[i] = e
	}
	return out, nil
}

// Predict returns the probabilities of each pair, read one way (premise, then hypothesis), in order.
func (m *Model) Predict(pairs []Pair) ([]Probs, error) {
	scored, err := (&Scorer{Model: m, OneWay: true}).Score(pairs)
	if err != nil {
		return nil, err
	}
	out := make([]Probs, len(scored))
	for i, s := range scored {
		out[i] = s.Probs
	}
	return out, nil
}

// PredictEncoded runs encoded pairs through the model, BatchSize at a time. Pairs of similar length are
// batched together and each batch is padded to its own longest pair, so that little time goes into
// padding; the results come back in input order.
func (m *Model) PredictEncoded(encs []Encoding) ([]Probs, error) {
	order := make([]int, len(encs))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return encs[a].Len() - encs[b].Len() })
	out := make([]Probs, len(encs))
	batch := make([]*Encoding, 0, m.batchSize)
	for start := 0; start < len(order); start += m.batchSize {
		batch = batch[:0]
		idx := order[start:min(start+m.batchSize, len(order))]
		for _, i := range idx {
			batch = append(batch, &encs[i])
		}
		probs, err := m.run(batch)
		if err != nil {
			return nil, err
		}
		for k, i := range idx {
			out[i] = probs[k]
		}
	}
	return out, nil
}

// run is one ONNX Runtime call on a batch, padded to its longest encoding.
func (m *Model) run(batch []*Encoding) ([]Probs, error) {
	rows := make([]onnx.Row, len(batch))
	for i, e := range batch {
		rows[i] = onnx.Row{IDs: e.IDs, TypeIDs: e.TypeIDs}
	}
	logits, err := m.session.Run(rows, int64(m.tok.PadID()))
	if err != nil {
		return nil, err
	}
	out := make([]Probs, len(batch))
	for r := range batch {
		p := softmax3(logits[r*3:r*3+3], m.temperature)
		out[r] = Probs{Contradiction: p[m.labels[0]], Entailment: p[m.labels[1]], Neutral: p[m.labels[2]]}
	}
	return out, nil
}

// softmax3 of logits divided by a temperature, in float64, shifted by the maximum for stability.
func softmax3(l []float32, temperature float64) [3]float64 {
	mx := math.Max(float64(l[0]), math.Max(float64(l[1]), float64(l[2])))
	var e [3]float64
	sum := 0.0
	for i := range 3 {
		e[i] = math.Exp((float64(l[i]) - mx) / temperature)
		sum += e[i]
	}
	for i := range 3 {
		e[i] /= sum
	}
	return e
}
