package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay/profile"
	"github.com/gainsay/gainsay/report"
)

func newReportCmd() *cobra.Command {
	var profilePath, outPath, title string
	var maxList int
	c := &cobra.Command{
		Use:   "report OUT.jsonl [MORE.jsonl ...] --profile P -o report.html",
		Short: "Write one self-contained HTML page showing where and how often replies break character",
		Long: `report reads the records of gainsay check (one file per checkpoint, say) and writes a single HTML file
with no outside resources: counts and contradiction rates with 95% intervals, a chart of the rate per
fact (one bar per file), the rate per file when there are several, and the flagged replies worst first
with their culprit words highlighted, filterable by fact and by text. Long runs are capped at --max-list
replies in the list; counts and charts always include every record.`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if profilePath == "" || outPath == "" {
				return unusable(fmt.Errorf("report needs --profile and -o"))
			}
			prof, err := profile.ReadProfile(profilePath, profile.FormatAuto)
			if err != nil {
				return unusable(err)
			}
			page, err := report.Build(prof, args, report.Options{MaxList: maxList, Title: title})
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
	c.Flags().IntVar(&maxList, "max-list", report.DefaultMaxList, "flagged replies listed at most")
	return c
}
