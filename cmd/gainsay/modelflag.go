package main

import (
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay/models/builtin"
	"github.com/gainsay/gainsay/nli"
)

// modelFlags are the flags of every command that runs a model.
type modelFlags struct {
	dir       string
	batchSize int
	maxLength int
	threads   int
}

func (f *modelFlags) register(c *cobra.Command) {
	c.Flags().StringVar(&f.dir, "model", "", "model folder with model.onnx, tokenizer.json and config.json (default: the built-in model)")
	c.Flags().IntVar(&f.batchSize, "batch-size", 32, "pairs per ONNX Runtime run")
	c.Flags().IntVar(&f.maxLength, "max-length", 0, "most tokens per pair (default: the model's limit)")
	c.Flags().IntVar(&f.threads, "threads", 0, "ONNX Runtime threads (default: all cores)")
}

// open loads the chosen model and names it for records: the folder's name, or "builtin", with the
// first 12 hex digits of the model's SHA-256.
func (f *modelFlags) open(c *cobra.Command) (*nli.Model, string, error) {
	lib, _ := c.Flags().GetString("ort-lib")
	opts := nli.Options{BatchSize: f.batchSize, MaxLength: f.maxLength, Threads: f.threads, Library: lib}
	if f.batchSize <= 0 {
		return nil, "", unusable(fmt.Errorf("--batch-size must be at least 1"))
	}
	var m *nli.Model
	var err error
	name := "builtin"
	if f.dir == "" {
		m, err = builtin.Open(opts)
	} else {
		m, err = nli.OpenDir(f.dir, opts)
		name = filepath.Base(filepath.Clean(f.dir))
	}
	if err != nil {
		return nil, "", unusable(err)
	}
	return m, fmt.Sprintf("%s@%s", name, m.SHA256()[:12]), nil
}
