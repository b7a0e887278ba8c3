// Command gainsay finds where a character chat model's replies contradict its character profile and
// writes token-level penalty spans for unlikelihood training. See README.md.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/gainsay/gainsay"
	"github.com/spf13/cobra"
)

// Exit statuses: 0 the run completed (even with error records), 1 it failed on the way, 2 the
// arguments, model or profile are unusable.
const (
	exitFailed   = 1
	exitUnusable = 2
)

// usageError marks errors that mean the arguments, the model or the profile cannot be used.
type usageError struct{ err error }

func (e usageError) Error() string { return e.err.Error() }
func (e usageError) Unwrap() error { return e.err }

func unusable(err error) error {
	if err == nil {
		return nil
	}
	return usageError{err}
}

func main() { os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)) }

// run executes the command line and returns the exit status.
func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	root := newRoot()
	// Errors that cobra returns before a command runs (unknown commands, wrong argument counts, bad
	// flags) are usage errors; mark when a command's own code starts.
	started := false
	markStart(root, &started)
	root.SetArgs(args)
	root.SetIn(stdin)
	root.SetOut(stdout)
	root.SetErr(stderr)
	err := root.Execute()
	if err == nil {
		return 0
	}
	fmt.Fprintf(stderr, "gainsay: %v\n", err)
	var ue usageError
	var ie *gainsay.InputError
	if !started || errors.As(err, &ue) || errors.As(err, &ie) {
		return exitUnusable
	}
	return exitFailed
}

func markStart(c *cobra.Command, started *bool) {
	if run := c.RunE; run != nil {
		c.RunE = func(cmd *cobra.Command, args []string) error {
			*started = true
			return run(cmd, args)
		}
	}
	for _, sub := range c.Commands() {
		markStart(sub, started)
	}
}

func newRoot() *cobra.Command {
	root := &cobra.Command{
		Use:   "gainsay",
		Short: "Find replies that contradict a character profile and the words that cause it",
		Long: `gainsay scores every (profile fact, reply sentence) pair with an NLI model, flags contradictions,
finds the words that drive each one by leaving one word out at a time, and writes penalty spans that an
unlikelihood training loop can use.

Its judgements are automatic and sometimes wrong: it ranks and localises likely contradictions for
training; it is no safety filter and no substitute for human review.`,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.PersistentFlags().String("ort-lib", "", "ONNX Runtime shared library (default $GAINSAY_ORT_LIB, then the set-up location)")
	root.AddCommand(newCheckCmd(), newMergeCmd(), newPairCmd(), newEvalCmd(), newCompareCmd(), newAlignCmd(), newServeCmd(), newReportCmd(), newModelCmd())
	return root
}
