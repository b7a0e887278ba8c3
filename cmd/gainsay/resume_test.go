package main

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// gainsayCommand is the test binary under the name "gainsay", which TestMain runs as the command.
func gainsayCommand(t *testing.T) string {
	t.Helper()
	self, err := os.Executable()
	require.NoError(t, err)
	bin := filepath.Join(t.TempDir(), "gainsay")
	require.NoError(t, os.Symlink(self, bin))
	return bin
}

// writeRun writes a two-fact profile and n replies (a blank line before every blankEvery-th, 0: none)
// into dir.
func writeRun(t *testing.T, dir string, n, blankEvery int) (prof, replies string) {
	t.Helper()
	prof = filepath.Join(dir, "p.yaml")
	require.NoError(t, os.WriteFile(prof, []byte("character: c\nfacts:\n  - {id: swim, text: I swim in the sea every morning.}\n  - {id: home, text: I live in the lighthouse.}\n"), 0o644))
	var in bytes.Buffer
	texts := []string{"I have never seen the sea.", "The gulls are loud. Fog again.", "Never, not once, have I swum.", "Zürich is far from here."}
	for i := range n {
		if blankEvery > 0 && i%blankEvery == 0 {
			in.WriteString("\n") // blank lines move line numbers away from reply counts
		}
		fmt.Fprintf(&in, "{\"id\": \"r%d\", \"text\": %q}\n", i, texts[i%len(texts)])
	}
	replies = filepath.Join(dir, "r.jsonl")
	require.NoError(t, os.WriteFile(replies, in.Bytes(), 0o644))
	return prof, replies
}

// A run killed with SIGKILL at several points and resumed ends with the bytes of an uninterrupted run.
func TestKilledRunResumes(t *testing.T) {
	bin := gainsayCommand(t)
	dir := t.TempDir()
	prof, replies := writeRun(t, dir, 3000, 0)
	args := func(out string, extra ...string) []string {
		return append([]string{"check", "--model", "../../nli/testdata/tiny-wordpiece", "--relevance", "0",
			"--profile", prof, "--replies", replies, "--out", out, "--chunk", "32"}, extra...)
	}
	want := filepath.Join(dir, "want.jsonl")
	run := exec.Command(bin, args(want)...)
	out, err := run.CombinedOutput()
	require.NoError(t, err, "%s", out)
	wantBytes, err := os.ReadFile(want)
	require.NoError(t, err)
	require.Equal(t, 3000, bytes.Count(wantBytes, []byte("\n")))

	for _, share := range []float64{0.05, 0.4, 0.7} {
		t.Run(fmt.Sprint(share), func(t *testing.T) {
			got := filepath.Join(t.TempDir(), "got.jsonl")
			// Killed twice: once in the first run, once while resuming.
			for i, extra := range [][]string{nil, {"--resume"}} {
				c := exec.Command(bin, args(got, extra...)...)
				require.NoError(t, c.Start())
				waitForLines(t, got+".partial", int(share*3000)+i*150)
				require.NoError(t, c.Process.Kill())
				c.Wait()
			}
			partial, err := os.ReadFile(got + ".partial")
			require.NoError(t, err)
			require.True(t, bytes.HasPrefix(wantBytes, partial[:bytes.LastIndexByte(partial, '\n')+1]), "the killed run left whole records of the uninterrupted run")
			out, err := exec.Command(bin, args(got, "--resume")...).CombinedOutput()
			require.NoError(t, err, "%s", out)
			require.Contains(t, string(out), "resuming after")
			gotBytes, err := os.ReadFile(got)
			require.NoError(t, err)
			require.True(t, bytes.Equal(wantBytes, gotBytes), "resumed output differs from an uninterrupted run")
			_, err = os.Stat(got + ".partial")
			require.True(t, os.IsNotExist(err), "the partial file became the output")
		})
	}
}

// waitForLines waits until the file holds at least n lines (or the run ended).
func waitForLines(t *testing.T, path string, n int) {
	t.Helper()
	deadline := time.Now().Add(60 * time.Second)
	for time.Now().Before(deadline) {
		if b, err := os.ReadFile(path); err == nil && strings.Count(string(b), "\n") >= n {
			return
		}
		time.Sleep(2 * time.Millisecond)
	}
	t.Fatalf("%s: fewer than %d lines after 60 s", path, n)
}
