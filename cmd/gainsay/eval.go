package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/eval"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

func newEvalCmd() *cobra.Command {
	var (
		mf                    modelFlags
		data, format, split   string
		profilePath, jsonPath string
		occlusion             string
		heldOut, rationales   bool
		oneWay                bool
		target, threshold     float64
		limit, every          int
	)
	c := &cobra.Command{
		Use:   "eval --data PATH",
		Short: "Measure the model on labelled data: accuracy, per-class scores, calibration, thresholds, rationales",
		Long: `eval runs the model over labelled data and reports accuracy, per-class precision/recall/F1, the
confusion matrix, expected calibration error (10 bins), a threshold sweep for the contradiction class
(with --target-precision, the threshold that reaches it with the most recall), and, where the data has
gold culprit words, how well leave-one-word-out attribution finds them (ERASER token F1, AUPRC,
comprehensiveness, sufficiency, hit@1) next to two cheap baselines.

Formats (--format, guessed from the path when left out):
  pairs     gainsay JSON Lines: {"premise", "hypothesis", "label", "culprits"?: [words], "culprit_spans"?: [[start, end]]}
  replies   gainsay JSON Lines: {"id", "text", "label": "contradiction"|"consistent", "culprits"?}, with --profile
  snli      SNLI as distributed with e-SNLI: a folder with s1/s2/labels.<split> (--split test or dev)
  esnli     e-SNLI CSV; gold words are the hypothesis words any annotator marked
  breaking  Breaking NLI dataset.jsonl; the gold word is the one that differs from the premise
  taxinli   TaxiNLI TSV of MultiNLI dev pairs
--held-out keeps only what the built-in model never trained on (see models/builtin/README.md).`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if data == "" {
				return unusable(fmt.Errorf("eval needs --data"))
			}
			how, err := nli.ParseOcclusion(occlusion)
			if err != nil {
				return unusable(err)
			}
			f := eval.Format(format)
			if f == eval.FormatAuto {
				if f, err = eval.DetectFormat(data); err != nil {
					return unusable(err)
				}
			}
			var items []eval.Item
			var labelled []eval.LabelledReply
			switch f {
			case eval.FormatPairs:
				items, err = eval.ReadPairs(data)
			case eval.FormatSNLI:
				items, err = eval.ReadSNLI(data, split, heldOut)
			case eval.FormatESNLI:
				items, err = eval.ReadESNLI(data)
			case eval.FormatBreaking:
				items, err = eval.ReadBreaking(data, heldOut)
			case eval.FormatTaxiNLI:
				items, err = eval.ReadTaxiNLI(data, heldOut)
			case eval.FormatReplies:
				if profilePath == "" {
					return unusable(fmt.Errorf("the replies format needs --profile"))
				}
				labelled, err = eval.ReadLabelledReplies(data)
			default:
				return unusable(fmt.Errorf("--format %q: want one of %v", format, eval.Formats))
			}
			if err != nil {
				return unusable(err)
			}
			items = sample(items, every, limit)
			labelled = sample(labelled, every, limit)
			if len(items) == 0 && len(labelled) == 0 {
				return unusable(fmt.Errorf("%s: no labelled items", data))
			}
			model, name, err := mf.open(cmd)
			if err != nil {
				return err
			}
			defer model.Close()
			var rep *eval.Report
			if f == eval.FormatReplies {
				prof, err := profile.ReadProfile(profilePath, profile.FormatAuto)
				if err != nil {
					return unusable(err)
				}
				checker := &gainsay.Checker{Scorer: &nli.Scorer{Model: model, OneWay: oneWay},
					Options: gainsay.Options{Threshold: threshold, Occlusion: how, Model: name}}
				rep, err = eval.Replies(checker, prof, labelled, target)
				if err != nil {
					return err
				}
			} else {
				rep, err = eval.Pairs(&nli.Scorer{Model: model, OneWay: true}, items, eval.Options{TargetPrecision: target, Rationales: rationales, Occlusion: how})
				if err != nil {
					return err
				}
			}
			fmt.Fprintf(cmd.OutOrStdout(), "data %s (%s), model %s\n\n", data, f, name)
			if err := eval.WriteText(cmd.OutOrStdout(), rep); err != nil {
				return err
			}
			if jsonPath == "" {
				return nil
			}
			return writeJSON(jsonPath, struct {
				Data   string       `json:"data"`
				Format eval.Format  `json:"format"`
				Model  string       `json:"model"`
				Report *eval.Report `json:"report"`
			}{data, f, name, rep})
		},
	}
	mf.register(c)
	fl := c.Flags()
	fl.StringVar(&data, "data", "", "labelled data (file, or SNLI folder)")
	fl.StringVar(&format, "format", "", "data format: pairs, replies, snli, esnli, breaking, taxinli (default: guessed)")
	fl.StringVar(&split, "split", "", "SNLI split: test or dev (default: test, or the extension of an s1.* file)")
	fl.BoolVar(&heldOut, "held-out", false, "keep only the rows the built-in model never trained on")
	fl.StringVar(&profilePath, "profile", "", "profile for the replies format")
	fl.StringVar(&jsonPath, "json", "", "also write the full results as JSON to this file")
	fl.Float64Var(&target, "target-precision", 0, "report the contradiction threshold that reaches this precision")
	fl.Float64Var(&threshold, "threshold", gainsay.DefaultThreshold, "replies format: contradiction threshold of the check")
	fl.BoolVar(&rationales, "rationales", true, "evaluate attribution where the data has gold words")
	fl.StringVar(&occlusion, "occlusion", string(nli.Delete), "how attribution leaves a word out: delete or mask")
	fl.IntVar(&limit, "limit", 0, "use at most this many items (after --every)")
	fl.IntVar(&every, "every", 1, "use every k-th item (a fixed sample)")
	fl.BoolVar(&oneWay, "one-way", false, "replies format: read pairs only as fact then sentence, as check --one-way")
	return c
}

// sample keeps every k-th element, then at most limit of them.
func sample[T any](xs []T, every, limit int) []T {
	if every > 1 {
		var out []T
		for i := 0; i < len(xs); i += every {
			out = append(out, xs[i])
		}
		xs = out
	}
	if limit > 0 && len(xs) > limit {
		xs = xs[:limit]
	}
	return xs
}
