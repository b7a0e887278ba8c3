// Package builtin is gainsay's shipped NLI model: all-MiniLM-L6-v2 fine-tuned as a three-way NLI
// cross-encoder on open data (see README.md in this folder, the model card). The files are embedded in
// the binary so that gainsay works on machines with no model hub; their SHA-256 is checked at load.
package builtin

import (
	"embed"
	"io/fs"

	"github.com/gainsay/gainsay/nli"
)

//go:embed model.onnx tokenizer.json config.json
var files embed.FS

// SHA256 is the SHA-256 of model.onnx, as in the model card.
const SHA256 = "e164c9952899afcfba2ce4031686b01d998cd50bb0e65b28c02c1473d277ec04"

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
