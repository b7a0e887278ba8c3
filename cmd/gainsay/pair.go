package main

import (
	"encoding/json"
	"fmt"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/nli"
)

func newPairCmd() *cobra.Command {
	var (
		mf        modelFlags
		asJSON    bool
		words     bool
		occlusion string
	)
	c := &cobra.Command{
		Use:   "pair PREMISE HYPOTHESIS",
		Short: "Print the model's three probabilities for one pair (for checking a model by hand)",
		Long: `pair prints the model's probabilities for one premise and hypothesis, read one way, as the model sees
them (check reads each pair both ways); with --words, each hypothesis word's leave-one-out weight.`,
		Args: cobra.ExactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			how, err := nli.ParseOcclusion(occlusion)
			if err != nil {
				return unusable(err)
			}
			model, _, err := mf.open(cmd)
			if err != nil {
				return err
			}
			defer model.Close()
			pair := nli.Pair{Premise: args[0], Hypothesis: args[1]}
			oneWay := &nli.Scorer{Model: model, OneWay: true}
			scored, err := oneWay.Score([]nli.Pair{pair})
			if err != nil {
				return err
			}
			p := scored[0].Probs
			var attr []nli.WordWeight
			if words {
				a, err := oneWay.Attribute(scored, nli.AttributionOptions{Occlusion: how})
				if err != nil {
					return err
				}
				attr = a[0].Words
			}
			out := cmd.OutOrStdout()
			if asJSON {
				type word struct {
					Text   string       `json:"text"`
					Weight gainsay.Prob `json:"weight"`
				}
				v := struct {
					Probs gainsay.Probs `json:"probs"`
					Words []word        `json:"words,omitempty"`
				}{Probs: gainsay.ProbsOf(p)}
				for _, w := range attr {
					v.Words = append(v.Words, word{args[1][w.Start:w.End], gainsay.Prob(w.Weight)})
				}
				b, _ := json.Marshal(v)
				fmt.Fprintln(out, string(b))
				return nil
			}
			fmt.Fprintf(out, "contradiction  %.4f\nentailment     %.4f\nneutral        %.4f\n", p.Contradiction, p.Entailment, p.Neutral)
			if words {
				fmt.Fprintln(out, "\nword weights (drop in contradiction probability without the word):")
				for _, w := range attr {
					fmt.Fprintf(out, "  %-20s %.4f\n", args[1][w.Start:w.End], w.Weight)
				}
			}
			return nil
		},
	}
	mf.register(c)
	c.Flags().BoolVar(&asJSON, "json", false, "print JSON")
	c.Flags().BoolVar(&words, "words", false, "also print each hypothesis word's leave-one-out weight")
	c.Flags().StringVar(&occlusion, "occlusion", string(nli.Delete), "with --words: delete or mask")
	return c
}
