package main

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/rates"
	"github.com/gainsay/gainsay/profile"
)

func newCompareCmd() *cobra.Command {
	var profilePath, jsonPath string
	c := &cobra.Command{
		Use:   "compare A.jsonl B.jsonl [more.jsonl ...]",
		Short: "Contradiction rate per output file (e.g. per checkpoint), overall and per fact, with 95% intervals",
		Long: `compare reads the records of gainsay check for several sets of replies (one file per checkpoint, say) and
prints each file's contradiction rate with its Wilson 95% interval, and each later file's change against
the first with Newcombe's hybrid score 95% interval for a difference of independent proportions
(Newcombe 1998, method 10). "clear" marks changes whose interval excludes zero. Error records are left
out of the rates. With --profile, facts that no reply broke are listed too.`,
		Args: cobra.MinimumNArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			var known []profile.Fact
			if profilePath != "" {
				p, err := profile.ReadProfile(profilePath, profile.FormatAuto)
				if err != nil {
					return unusable(err)
				}
				known = p.Facts
			}
			sums, err := summarize(args, known)
			if err != nil {
				return err
			}
			writeComparison(cmd.OutOrStdout(), sums)
			if jsonPath == "" {
				return nil
			}
			return writeJSON(jsonPath, comparisonJSON(sums))
		},
	}
	c.Flags().StringVar(&profilePath, "profile", "", "the profile, to list facts that no reply broke")
	c.Flags().StringVar(&jsonPath, "json", "", "also write the comparison as JSON to this file")
	return c
}

func summarize(paths []string, known []profile.Fact) ([]rates.Summary, error) {
	var out []rates.Summary
	for _, p := range paths {
		f, err := os.Open(p)
		if err != nil {
			return nil, unusable(err)
		}
		recs, err := gainsay.ReadAllRecords(f, p)
		f.Close()
		if err != nil {
			return nil, unusable(err)
		}
		out = append(out, rates.Summarize(filepath.Base(p), recs, known))
	}
	return out, nil
}

func pct(x float64) string { return fmt.Sprintf("%.1f%%", 100*x) }

func changeCell(ch rates.Change) string {
	s := fmt.Sprintf("%+.1f pts [%+.1f, %+.1f]", 100*ch.Diff, 100*ch.CI.Low, 100*ch.CI.High)
	if ch.Clear {
		s += " clear"
	}
	return s
}

func writeComparison(w io.Writer, sums []rates.Summary) {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "file\treplies\terrors\tcontradiction rate [95% Wilson]\tchange vs first [95% Newcombe]")
	for i, s := range sums {
		change := ""
		if i > 0 {
			change = changeCell(rates.Compare(sums[0].Overall, s.Overall))
		}
		fmt.Fprintf(tw, "%s\t%d\t%d\t%s [%s, %s]\t%s\n", s.Name, s.Overall.N, s.Errors, pct(s.Overall.Rate), pct(s.Overall.CI.Low), pct(s.Overall.CI.High), change)
	}
	facts := rates.Facts(sums)
	if len(facts) > 0 {
		fmt.Fprint(tw, "\nfact")
		for _, s := range sums {
			fmt.Fprintf(tw, "\t%s", s.Name)
		}
		fmt.Fprintln(tw, "\tchange last vs first")
		for _, f := range facts {
			fmt.Fprint(tw, f)
			for _, s := range sums {
				fmt.Fprintf(tw, "\t%s", pct(s.PerFact[f].Rate))
			}
			first, last := sums[0].FactRate(f), sums[len(sums)-1].FactRate(f)
			fmt.Fprintf(tw, "\t%s\n", changeCell(rates.Compare(first, last)))
		}
	}
	tw.Flush()
	var thresholds []float64
	for _, s := range sums {
		for _, t := range s.Thresholds {
			if !slices.Contains(thresholds, t) {
				thresholds = append(thresholds, t)
			}
		}
	}
	if len(thresholds) > 1 {
		fmt.Fprintf(w, "\nnote: the files were checked at different thresholds %v; their rates are not directly comparable\n", thresholds)
	}
	fmt.Fprintln(w, "\nRates count automatic judgements, which are sometimes wrong; review samples before drawing conclusions.")
}

type comparisonFile struct {
	rates.Summary
	Change        *rates.Change           `json:"change_vs_first,omitempty"`
	PerFactChange map[string]rates.Change `json:"per_fact_change_vs_first,omitempty"`
}

func comparisonJSON(sums []rates.Summary) []comparisonFile {
	out := make([]comparisonFile, len(sums))
	for i, s := range sums {
		out[i].Summary = s
		if i == 0 {
			continue
		}
		ch := rates.Compare(sums[0].Overall, s.Overall)
		out[i].Change = &ch
		out[i].PerFactChange = map[string]rates.Change{}
		for _, f := range s.Facts {
			out[i].PerFactChange[f] = rates.Compare(sums[0].FactRate(f), s.FactRate(f))
		}
	}
	return out
}

func writeJSON(path string, v any) error {
	b, err := json.MarshalIndent(v, "", " ")
	if err != nil {
		return err
	}
	return os.WriteFile(path, append(b, '\n'), 0o644)
}
