package main

import (
	"bufio"
	"bytes"
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
		resume, force, timings       bool
		shard                        shardFlag
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
			checker.RunID = gainsay.RunID(checker.RunID, prof.Character, prof.Facts, maxChars, chunk)
			rr := gainsay.NewReplyReader(in, repliesPath, rf, maxChars)
			var out io.Writer = cmd.OutOrStdout()
			runOpts := gainsay.RunOptions{Chunk: chunk, Shard: shard.k, Shards: shard.n, Progress: progress.update}
			var file *outfile.File
			var allSkipped func() error
			if toFile {
				var done []outfile.Done
				if resume {
					file, done, runOpts.After, err = outfile.Resume(outPath, chunk)
				} else {
					file, err = outfile.Create(outPath, force)
				}
				if err != nil {
					return unusable(err)
				}
				defer file.Close()
				runOpts.Skipped, allSkipped = resumeCheck(done, checker.RunID, outfile.Partial(outPath))
				if len(done) > 0 {
					fmt.Fprintf(cmd.ErrOrStderr(), "gainsay: resuming after %s\n", plural(len(done), "record", "records"))
					total -= len(done)
				}
				out = file
			}
			progress.total = total
			st, err := checker.Run(cmd.Context(), prof, rr, gainsay.NewRecordWriter(out), runOpts)
			if err == nil && allSkipped != nil {
				err = allSkipped()
			}
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
			if timings {
				// For benchmarks (scripts/bench.sh): where the time went.
				fmt.Fprintf(cmd.ErrOrStderr(), "gainsay: timings: %.3f s in all, %.3f s in ONNX Runtime's Run (NLI model), %d model inputs, %.1f%% padding\n",
					st.Elapsed.Seconds(), model.RunTime().Seconds(), model.Rows(), 100*model.Padding())
			}
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
	f.IntVar(&chunk, "chunk", gainsay.DefaultChunk, "input lines whose replies are scored together (bounds memory); records are written a chunk at a time")
	f.BoolVar(&resume, "resume", false, "continue a killed run: keep the records already in --out's partial file (same model, profile and settings) and check the rest")
	f.BoolVar(&force, "force", false, "replace an existing --out file")
	f.BoolVar(&timings, "timings", false, "also print where the time went (for benchmarks)")
	f.Var(&shard, "shard", "check only shard K of N: the chunks (of --chunk input lines) whose index modulo N is K-1; join the shards with gainsay merge")
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

// resumeCheck returns the check of each reply that an earlier run wrote a record for (the same reply,
// in order, and a record made with the same model, profile and settings), and the check, at the end,
// that every such record met its reply.
func resumeCheck(done []outfile.Done, run, partial string) (func(gainsay.Reply) error, func() error) {
	i := 0
	each := func(r gainsay.Reply) error {
		if i >= len(done) {
			return unusable(fmt.Errorf("%s: line %d of the replies has no record in it: not the same replies", partial, r.Line))
		}
		d := done[i]
		i++
		if d.Run != run {
			return unusable(fmt.Errorf("%s: record %d (%q) was made with another model, profile or settings (run %s, this run %s); rerun with --force to start again",
				partial, i, d.ID, d.Run, run))
		}
		if r.Line != d.Line || r.ID != d.ID {
			return unusable(fmt.Errorf("%s: record %d is reply %q of line %d, but line %d of the replies is %q: not the same replies",
				partial, i, d.ID, d.Line, r.Line, r.ID))
		}
		return nil
	}
	end := func() error {
		if i < len(done) {
			return unusable(fmt.Errorf("%s has %d records but the replies end before record %d: not the same replies", partial, len(done), i+1))
		}
		return nil
	}
	return each, end
}

// shardFlag is --shard K/N.
type shardFlag struct{ k, n int }

func (s *shardFlag) String() string {
	if s.n == 0 {
		return ""
	}
	return fmt.Sprintf("%d/%d", s.k, s.n)
}

func (s *shardFlag) Set(v string) error {
	if _, err := fmt.Sscanf(v, "%d/%d", &s.k, &s.n); err != nil || s.n < 1 || s.k < 1 || s.k > s.n {
		return fmt.Errorf("want K/N with 1 <= K <= N, e.g. 2/8")
	}
	return nil
}

func (s *shardFlag) Type() string { return "K/N" }

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
