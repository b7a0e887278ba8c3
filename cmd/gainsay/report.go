package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay/profile"
	"github.com/gainsay/gainsay/report"
)

func newReportCmd() *cobra.Command {
	var profilePath, outPath, title, stepField string
	var maxList int
	c := &cobra.Command{
		Use:   "report OUT.jsonl [MORE.jsonl ...] --profile P -o report.html",
		Short: "Write one self-contained HTML page showing where and how often replies break character",
		Long: `report reads the records of gainsay check (one file per checkpoint, say) and writes a single HTML file
with no outside resources, for reviewing a training run: counts and contradiction rates with 95%
intervals, the rate per fact (one bar per file), per file when there are several, and per training step
when records carry one (--step-field, default "step", an input field check passed through); a threshold
slider that recounts every record; every reply, the flagged ones worst first with their culprit words
highlighted and weighed, the others collapsed, each with its file and line, sortable and filterable
by fact and text. Each finding can be marked "not a contradiction"; the marks export as labelled
replies that gainsay eval --format replies reads. Long runs are capped at --max-list replies of each
kind in the list; counts, charts and the slider always include every record.`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if profilePath == "" || outPath == "" {
				return unusable(fmt.Errorf("report needs --profile and -o"))
			}
			prof, err := profile.ReadProfile(profilePath, profile.FormatAuto)
			if err != nil {
				return unusable(err)
			}
			page, err := report.Build(prof, args, report.Options{MaxList: maxList, Title: title, StepField: stepField})
			if err != nil {
				return unusable(err)
			}
			out, closeOut, err := createOutput(cmd, outPath)
			if err != nil {
				return unusable(err)
			}
			if err := report.Render(out, page); err != nil {
				closeOut()
				return err
			}
			if err := closeOut(); err != nil {
				return err
			}
			fmt.Fprintf(cmd.ErrOrStderr(), "gainsay: wrote %s (%s listed of %d flagged)\n", outPath, plural(page.Shown, "reply", "replies"), page.Flagged)
			return nil
		},
	}
	c.Flags().StringVar(&profilePath, "profile", "", "the character profile the records were checked against")
	c.Flags().StringVarP(&outPath, "out", "o", "", "the HTML file to write")
	c.Flags().StringVar(&title, "title", "", "page title (default: from the character)")
	c.Flags().IntVar(&maxList, "max-list", report.DefaultMaxList, "flagged replies listed at most (and consistent ones)")
	c.Flags().StringVar(&stepField, "step-field", "step", "the input field that holds a record's training step")
	return c
}
