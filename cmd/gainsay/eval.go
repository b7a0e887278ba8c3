package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay/eval"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

func newEvalCmd() *cobra.Command {
	var (
		mf                    modelFlags
		cf                    checkFlags
		data, format, split   string
		profilePath, jsonPath string
		heldOut, rationales   bool
		target                float64
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
  pairs       gainsay JSON Lines: {"premise", "hypothesis", "label", "culprits"?: [words], "culprit_spans"?: [[start, end]]}
  replies     gainsay JSON Lines: {"id", "text", "label": "contradiction"|"consistent", "culprits"?, "fact_ids"?}, with --profile
  characters  a folder of NAME.yaml profiles, each beside NAME.jsonl replies in the replies format
              (e.g. testdata/persona-dev)
  snli        SNLI as distributed with e-SNLI: a folder with s1/s2/labels.<split> (--split test or dev)
  esnli       e-SNLI CSV; gold words are the hypothesis words any annotator marked
  breaking    Breaking NLI dataset.jsonl; the gold word is the one that differs from the premise
  taxinli     TaxiNLI TSV of MultiNLI dev pairs
--held-out keeps only what the built-in model never trained on (see models/builtin/README.md).

Replies and characters are checked as gainsay check does (both ways, relevance gate, span rule: the
same flags); pairs are read one way, as NLI benchmarks are scored.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if data == "" {
				return unusable(fmt.Errorf("eval needs --data"))
			}
			opts, err := cf.options("")
			if err != nil {
				return err
			}
			f := eval.Format(format)
			if f == eval.FormatAuto {
				if f, err = eval.DetectFormat(data); err != nil {
					return unusable(err)
				}
			}
			var items []eval.Item
			var chars []eval.Character
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
				var prof *profile.Profile
				var labelled []eval.LabelledReply
				if prof, err = profile.ReadProfile(profilePath, profile.FormatAuto); err == nil {
					labelled, err = eval.ReadLabelledReplies(data)
				}
				chars = []eval.Character{{Profile: prof, Replies: labelled}}
			case eval.FormatCharacters:
				chars, err = eval.ReadCharacters(data)
			default:
				return unusable(fmt.Errorf("--format %q: want one of %v", format, eval.Formats))
			}
			if err != nil {
				return unusable(err)
			}
			items = sample(items, every, limit)
			n := len(items)
			for i := range chars {
				chars[i].Replies = sample(chars[i].Replies, every, limit)
				n += len(chars[i].Replies)
			}
			if n == 0 {
				return unusable(fmt.Errorf("%s: no labelled items", data))
			}
			model, name, err := mf.open(cmd)
			if err != nil {
				return err
			}
			defer model.Close()
			var rep *eval.Report
			if chars != nil {
				checker, closeChecker, err := cf.checker(cmd, model, name)
				if err != nil {
					return err
				}
				defer closeChecker()
				rep, err = eval.Replies(checker, chars, target)
				if err != nil {
					return err
				}
			} else {
				rep, err = eval.Pairs(&nli.Scorer{Model: model, OneWay: true}, items, eval.Options{TargetPrecision: target,
					Rationales: rationales, Occlusion: opts.Occlusion, Spans: opts.Spans})
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
	cf.register(c)
	fl := c.Flags()
	fl.StringVar(&data, "data", "", "labelled data (file, or SNLI folder)")
	fl.StringVar(&format, "format", "", "data format: pairs, replies, characters, snli, esnli, breaking, taxinli (default: guessed)")
	fl.StringVar(&split, "split", "", "SNLI split: test or dev (default: test, or the extension of an s1.* file)")
	fl.BoolVar(&heldOut, "held-out", false, "keep only the rows the built-in model never trained on")
	fl.StringVar(&profilePath, "profile", "", "profile for the replies format")
	fl.StringVar(&jsonPath, "json", "", "also write the full results as JSON to this file")
	fl.Float64Var(&target, "target-precision", 0, "report the contradiction threshold that reaches this precision")
	fl.BoolVar(&rationales, "rationales", true, "evaluate attribution where the data has gold words")
	fl.IntVar(&limit, "limit", 0, "use at most this many items (after --every)")
	fl.IntVar(&every, "every", 1, "use every k-th item (a fixed sample)")
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
