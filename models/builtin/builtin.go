// Package builtin is gainsay's shipped models: all-MiniLM-L6-v2 fine-tuned as a three-way NLI
// cross-encoder on open data (see README.md in this folder, the model card), and all-MiniLM-L6-v2
// itself, exported as a sentence encoder for the relevance gate (relevance/). The files are embedded in
// the binary so that gainsay works on machines with no model hub; their SHA-256 is checked at load.
package builtin

import (
	"embed"
	"io/fs"

	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/relevance"
)

//go:embed model.onnx tokenizer.json config.json
var files embed.FS

//go:embed relevance/model.onnx relevance/tokenizer.json relevance/config.json
var relevanceFiles embed.FS

// RelevanceSHA256 is the SHA-256 of relevance/model.onnx.
const RelevanceSHA256 = "2e6f053804955c5960d5fa3fe2b8a229fed794a600da50e03fa35a513c537a7d"

// DefaultRelevance is the relevance floor for the built-in sentence encoder: chosen on training-side
// data only (scripts/train/relevance_floor.py), the largest floor that keeps 99% of the contradictions
// of the persona training pairs and of DECODE's training fold.
const DefaultRelevance = 0.08

// SHA256 is the SHA-256 of model.onnx, as in the model card.
const SHA256 = "d07d99e5e1f680088a244cbcd4aec037f9518bb20a8f0c6e52ec65db622268c5"

// FS holds model.onnx, tokenizer.json and config.json.
func FS() fs.FS { return files }

// Open loads the built-in model, checking model.onnx against SHA256.
func Open(opts nli.Options) (*nli.Model, error) {
	opts.SHA256 = SHA256
	m, err := nli.Open(files, opts)
	if err != nil {
		return nil, err
	}
	return m, nil
}

// OpenRelevance loads the built-in sentence encoder, checking relevance/model.onnx against
// RelevanceSHA256.
func OpenRelevance(opts relevance.Options) (*relevance.Embedder, error) {
	sub, err := fs.Sub(relevanceFiles, "relevance")
	if err != nil {
		return nil, err
	}
	opts.SHA256 = RelevanceSHA256
	return relevance.Open(sub, opts)
}
