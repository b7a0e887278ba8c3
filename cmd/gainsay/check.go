package main

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/outfile"
	"github.com/gainsay/gainsay/profile"
)

func newCheckCmd() *cobra.Command {
	var (
		mf                           modelFlags
		cf                           checkFlags
		profilePath, repliesPath     string
		profileFormat, repliesFormat string
		outPath                      string
		maxChars, chunk              int
		resume, force                bool
	)
	c := &cobra.Command{
		Use:   "check --profile P --replies R",
		Short: "Score replies against a profile and write one record per reply (JSON Lines)",
		Long: `check splits every reply into sentences, scores each (fact, sentence) pair with the NLI model, and for
pairs whose contradiction probability reaches --threshold finds the words that drive it: each word is
left out in turn and the pair scored again (Li, Monroe, Jurafsky 2016, "Understanding Neural Networks
through Representation Erasure"), all variants in shared batches. Each pair is read both ways (fact then
sentence, and sentence then fact) and counts only as far as both readings agree: contradiction is
symmetric, and a one-way verdict usually reacts to one sentence's wording alone (--one-way to skip). It writes one JSON object per input reply, in input order: the verdict,
the highest contradiction probability, and the findings with their penalty spans.

A reply that cannot be read (bad JSON, missing text, invalid UTF-8, over --max-reply-chars) gets a record
with verdict "error" and the reason; the run goes on. Exit status: 0 when the run completed, 1 when it
failed on the way, 2 when the arguments, model or profile are unusable.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if profilePath == "" || repliesPath == "" {
				return unusable(fmt.Errorf("check needs --profile and --replies"))
			}
			if _, err := cf.options(""); err != nil {
				return err
			}
			toFile := outPath != "" && outPath != "-"
			switch {
			case resume && !toFile:
				return unusable(fmt.Errorf("--resume needs --out FILE"))
			case resume && force:
				return unusable(fmt.Errorf("--resume and --force: choose one"))
			case chunk <= 0:
				return unusable(fmt.Errorf("--chunk must be at least 1"))
			}
			prof, err := profile.ReadProfile(profilePath, profile.Format(profileFormat))
			if err != nil {
				return unusable(err)
			}
			rf := gainsay.Format(repliesFormat)
			if rf == gainsay.FormatAuto {
				if rf, err = gainsay.ReplyFormat(repliesPath); err != nil {
					return unusable(err)
				}
			}
			progress := newProgress(cmd.ErrOrStderr())
			in, total, err := openReplies(cmd, repliesPath, progress.on)
			if err != nil {
				return unusable(err)
			}
			defer in.Close()
			model, name, err := mf.open(cmd)
			if err != nil {
				return err
			}
			defer model.Close()
			checker, closeChecker, err := cf.checker(cmd, model, name)
			if err != nil {
				return err
			}
			defer closeChecker()
			checker.RunID = gainsay.RunID(checker.RunID, prof.Character, prof.Facts, maxChars)
			rr := gainsay.NewReplyReader(in, repliesPath, rf, maxChars)
			var out io.Writer = cmd.OutOrStdout()
			var file *outfile.File
			if toFile {
				var done []outfile.Done
				if resume {
					file, done, err = outfile.Resume(outPath, chunk)
				} else {
					file, err = outfile.Create(outPath, force)
				}
				if err != nil {
					return unusable(err)
				}
				defer file.Close()
				if err := skipDone(rr, done, checker.RunID, outfile.Partial(outPath)); err != nil {
					return unusable(err)
				}
				if len(done) > 0 {
					fmt.Fprintf(cmd.ErrOrStderr(), "gainsay: resuming after %s\n", plural(len(done), "record", "records"))
					total -= len(done)
				}
				out = file
			}
			progress.total = total
			st, err := checker.Run(cmd.Context(), prof, rr, gainsay.NewRecordWriter(out),
				gainsay.RunOptions{Chunk: chunk, Progress: progress.update})
			progress.done()
			if err == nil && file != nil {
				err = file.Finish()
			}
			if err != nil {
				return err
			}
			if len(st.DuplicateIDs) > 0 {
				fmt.Fprintf(cmd.ErrOrStderr(), "gainsay: warning: %s used by more than one reply: %s\n",
					plural(st.Duplicates, "id is", "ids are"), strings.Join(st.DuplicateIDs, ", "))
			}
			fmt.Fprintln(cmd.ErrOrStderr(), summary(st))
			return nil
		},
	}
	mf.register(c)
	cf.register(c)
	f := c.Flags()
	f.StringVar(&profilePath, "profile", "", "character profile: .yaml, .json, or .txt (one fact a line)")
	f.StringVar(&repliesPath, "replies", "", "replies: .jsonl ({\"id\", \"text\"} a line), .txt (one a line), or - for standard input (JSON Lines)")
	f.StringVar(&profileFormat, "profile-format", "", "profile format when the extension does not say: yaml, json or text")
	f.StringVar(&repliesFormat, "replies-format", "", "replies format when the extension does not say: jsonl or text")
	f.StringVarP(&outPath, "out", "o", "", "output file (default: standard output)")
	f.IntVar(&maxChars, "max-reply-chars", gainsay.DefaultMaxReplyChars, "longest reply accepted, in characters; longer ones become error records")
	f.IntVar(&chunk, "chunk", 64, "replies scored together (bounds memory); records are written a chunk at a time")
	f.BoolVar(&resume, "resume", false, "continue a killed run: keep the records already in --out's partial file (same model, profile and settings) and check the rest")
	f.BoolVar(&force, "force", false, "replace an existing --out file")
	return c
}

// openReplies opens the replies file (or standard input for "-"). With count, it first counts the
// file's non-blank lines for the progress display; the total is -1 when not counted.
func openReplies(cmd *cobra.Command, path string, count bool) (io.ReadCloser, int, error) {
	if path == "-" {
		return io.NopCloser(cmd.InOrStdin()), -1, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, 0, err
	}
	if !count {
		return f, -1, nil
	}
	total := 0
	sc := bufio.NewReader(f)
	for {
		line, err := sc.ReadBytes('\n')
		if len(bytes.TrimSpace(line)) > 0 {
			total++
		}
		if err != nil {
			break
		}
	}
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		f.Close()
		return nil, 0, err
	}
	return f, total, nil
}

// skipDone reads past the replies whose records an earlier run wrote, checking that they are the same
// replies and that the records were made with the same model, profile and settings.
func skipDone(rr *gainsay.ReplyReader, done []outfile.Done, run, partial string) error {
	for i, d := range done {
		if d.Run != run {
			return fmt.Errorf("%s: record %d (%q) was made with another model, profile or settings (run %s, this run %s); rerun with --force to start again",
				partial, i+1, d.ID, d.Run, run)
		}
		r, err := rr.Next()
		if errors.Is(err, io.EOF) {
			return fmt.Errorf("%s has %d records but the replies end after %d", partial, len(done), i)
		}
		if err != nil {
			return err
		}
		if r.Line != d.Line || r.ID != d.ID {
			return fmt.Errorf("%s: record %d is reply %q of line %d, but line %d of the replies is %q: not the same replies",
				partial, i+1, d.ID, d.Line, r.Line, r.ID)
		}
	}
	return nil
}

// createOutput opens the output file or standard output; the returned function flushes and closes it.
func createOutput(cmd *cobra.Command, path string) (io.Writer, func() error, error) {
	if path == "" || path == "-" {
		return cmd.OutOrStdout(), func() error { return nil }, nil
	}
	f, err := os.Create(path)
	if err != nil {
		return nil, nil, err
	}
	return f, f.Close, nil
}

func summary(st gainsay.Stats) string {
	rate := 0.0
	if s := st.Elapsed.Seconds(); s > 0 {
		rate = float64(st.Pairs) / s
	}
	skipped := ""
	if st.Skipped > 0 {
		skipped = fmt.Sprintf(", %d skipped as unrelated", st.Skipped)
	}
	return fmt.Sprintf("gainsay: %s, %s, %s; %s scored%s, %d attributed, %.0f pairs/s",
		plural(st.Replies, "reply", "replies"), plural(st.Contradictions, "contradiction", "contradictions"),
		plural(st.Errors, "error", "errors"), plural(st.Pairs, "pair", "pairs"), skipped, st.Attributed, rate)
}

func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}
