package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/outfile"
	"github.com/gainsay/gainsay/internal/shards"
)

func newMergeCmd() *cobra.Command {
	var (
		outPath, repliesPath string
		n, chunk             int
		force                bool
	)
	c := &cobra.Command{
		Use:   "merge SHARD.jsonl... -o OUT.jsonl",
		Short: "Join the outputs of check --shard K/N into one file in input order",
		Long: `merge joins the record files that check --shard 1/N ... N/N wrote, in input order, into the file one
run without --shard would have written (the same bytes). It checks that the files belong together:
every record made with the same model, profile and settings, each shard once, each reply once; with
--replies, that every reply of that file has exactly one record. --shards and --chunk must be those
of the check (defaults: the number of files, and check's default chunk).`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts := shards.Options{Shards: n, Chunk: chunk}
			if repliesPath != "" {
				f, err := gainsay.ReplyFormat(repliesPath)
				if err != nil {
					return unusable(err)
				}
				if opts.Lines, err = shards.ReplyLines(repliesPath, f); err != nil {
					return unusable(err)
				}
			}
			out := cmd.OutOrStdout()
			var file *outfile.File
			if outPath != "" && outPath != "-" {
				var err error
				if file, err = outfile.Create(outPath, force); err != nil {
					return unusable(err)
				}
				defer file.Close()
				out = file
			}
			count, err := shards.Merge(args, out, opts)
			if err != nil {
				return unusable(err)
			}
			if file != nil {
				if err := file.Finish(); err != nil {
					return err
				}
			}
			fmt.Fprintf(cmd.ErrOrStderr(), "gainsay: merged %s from %s\n", plural(count, "record", "records"), plural(len(args), "shard", "shards"))
			return nil
		},
	}
	f := c.Flags()
	f.StringVarP(&outPath, "out", "o", "", "output file (default: standard output)")
	f.IntVar(&n, "shards", 0, "N of --shard K/N (default: the number of files)")
	f.IntVar(&chunk, "chunk", gainsay.DefaultChunk, "check's --chunk")
	f.StringVar(&repliesPath, "replies", "", "the replies file the shards checked: verify that every reply has exactly one record")
	f.BoolVar(&force, "force", false, "replace an existing output file")
	return c
}
