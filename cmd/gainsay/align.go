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
	var spansPath, tokPath, outPath string
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
Supported tokenizers: WordPiece, byte-level BPE (GPT-2, RoBERTa, ...) and Unigram/Metaspace.`,
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
				t, err := align.Record(&rec, tok, normalize)
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
	return c
}
