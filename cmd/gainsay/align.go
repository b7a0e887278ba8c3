package main

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/align"
	"github.com/gainsay/gainsay/tokenizer"
)

func newAlignCmd() *cobra.Command {
	var spansPath, tokPath, outPath, promptField string
	var normalize bool
	c := &cobra.Command{
		Use:   "align --spans OUT.jsonl --tokenizer GEN/tokenizer.json",
		Short: "Turn penalty spans into per-token weights in the generator's tokenisation",
		Long: `align reads the records of gainsay check and, for each, tokenises the reply with the generator's
tokenizer.json (on its own, without special tokens) and writes one JSON object per record:
{"id", "verdict", "sequence_flag", "score", "token_ids", "weights", "offsets"}.

A token's weight is the largest weight of the spans it overlaps times the share of the token's
characters that the span covers (leading white space not counted); tokens outside every span get 0.
sequence_flag is true for replies judged contradicting as a whole. Offsets are code-point ranges.

With --prompt-field, each record's prompt (the text a chat template renders before the reply, passed
through check from the replies file) is tokenised together with the reply, as the training loop
tokenises the full sequence; prompt tokens get weight 0 and reply_start says where the reply begins.
Added tokens written in the text (a template's special tokens) are matched as the tokenizer does.

Supported layouts: WordPiece; byte-level BPE (GPT-2, RoBERTa; Llama 3 and Qwen2 behind a regex
Split); BPE with byte fallback (Llama 2, Mistral, Gemma); Unigram with Metaspace.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if spansPath == "" || tokPath == "" {
				return unusable(fmt.Errorf("align needs --spans and --tokenizer"))
			}
			data, err := os.ReadFile(tokPath)
			if err != nil {
				return unusable(err)
			}
			tok, err := tokenizer.Load(data)
			if err != nil {
				return unusable(fmt.Errorf("%s: %w", tokPath, err))
			}
			in, err := os.Open(spansPath)
			if err != nil {
				return unusable(err)
			}
			defer in.Close()
			out, closeOut, err := createOutput(cmd, outPath)
			if err != nil {
				return unusable(err)
			}
			w := bufio.NewWriter(out)
			rr := gainsay.NewRecordReader(in, spansPath)
			n := 0
			for {
				rec, err := rr.Next()
				if errors.Is(err, io.EOF) {
					break
				}
				if err != nil {
					return err
				}
				opts := align.Options{Normalize: normalize}
				var promptErr error
				if promptField != "" && rec.Verdict != gainsay.Failed {
					opts.Prompt, promptErr = promptOf(&rec, promptField)
				}
				t, err := align.Record(&rec, tok, opts)
				if promptErr != nil {
					err = promptErr
					t.TokenIDs, t.Weights, t.Offsets = []int{}, []gainsay.Prob{}, [][2]int{}
				}
				if err != nil {
					// Still one output line per record: the failure is said in it.
					t.Error = fmt.Sprintf("%s: record %q: %v", spansPath, rec.ID, err)
					t.SequenceFlag = false
				}
				b, err := json.Marshal(t)
				if err != nil {
					return err
				}
				w.Write(b)
				w.WriteByte('\n')
				n++
			}
			if err := w.Flush(); err != nil {
				return err
			}
			if err := closeOut(); err != nil {
				return err
			}
			fmt.Fprintf(cmd.ErrOrStderr(), "gainsay: aligned %s\n", plural(n, "record", "records"))
			return nil
		},
	}
	c.Flags().StringVar(&spansPath, "spans", "", "records written by gainsay check")
	c.Flags().StringVar(&tokPath, "tokenizer", "", "the generator's tokenizer.json")
	c.Flags().StringVarP(&outPath, "out", "o", "", "output file (default: standard output)")
	c.Flags().BoolVar(&normalize, "normalize", false, "divide each record's weights by their largest, so the strongest token weighs 1")
	c.Flags().StringVar(&promptField, "prompt-field", "", "the input field (kept under extra) holding the text before each reply, e.g. a rendered chat template")
	return c
}

// promptOf reads the prompt text from a record's extra fields.
func promptOf(rec *gainsay.Record, field string) (string, error) {
	raw, ok := rec.Extra[field]
	if !ok {
		return "", fmt.Errorf("extra.%s: missing (was it in the replies file given to check?)", field)
	}
	var s string
	if err := json.Unmarshal(raw, &s); err != nil {
		return "", fmt.Errorf("extra.%s: must be a string", field)
	}
	return s, nil
}
