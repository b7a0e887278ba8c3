package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay/nli"
)

func newModelCmd() *cobra.Command {
	c := &cobra.Command{Use: "model", Short: "Inspect model folders"}
	var mf modelFlags
	verify := &cobra.Command{
		Use:   "verify [DIR]",
		Short: "Check that a folder is a usable NLI model (default: the built-in model, against its SHA-256)",
		Long: `verify loads a model folder as check would (model.onnx, tokenizer.json, config.json), reports its labels,
inputs, tokenizer family and length limit, and scores one pair to prove it runs. Exit status 2 when the
folder is incomplete or unusable.`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) == 1 {
				mf.dir = args[0]
			}
			m, name, err := mf.open(cmd)
			if err != nil {
				return err
			}
			defer m.Close()
			pair := nli.Pair{Premise: "I live on the coast.", Hypothesis: "I have never seen the sea."}
			probs, err := m.Predict([]nli.Pair{pair})
			if err != nil {
				return unusable(fmt.Errorf("the model does not run: %w", err))
			}
			out := cmd.OutOrStdout()
			fmt.Fprintf(out, "model       %s\n", name)
			fmt.Fprintf(out, "sha256      %s\n", m.SHA256())
			fmt.Fprintf(out, "labels      contradiction=%d entailment=%d neutral=%d\n", m.LabelIndex(nli.Contradiction), m.LabelIndex(nli.Entailment), m.LabelIndex(nli.Neutral))
			fmt.Fprintf(out, "inputs      %s\n", strings.Join(m.Inputs(), ", "))
			fmt.Fprintf(out, "tokenizer   %s\n", m.Tokenizer().Family())
			fmt.Fprintf(out, "max length  %d tokens\n", m.MaxLength())
			fmt.Fprintf(out, "runtime     ONNX Runtime %s\n", nli.RuntimeVersion())
			p := probs[0]
			fmt.Fprintf(out, "smoke test  %q / %q: contradiction %.3f, entailment %.3f, neutral %.3f\n",
				pair.Premise, pair.Hypothesis, p.Contradiction, p.Entailment, p.Neutral)
			return nil
		},
	}
	mf.register(verify)
	verify.Flags().MarkHidden("model")
	c.AddCommand(verify)
	return c
}
