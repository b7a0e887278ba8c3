package main

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// check --shard K/N for N = 1, 3 and 7, run as separate processes, merges into the bytes of a single
// run (default settings, relevance gate included); merge refuses what does not belong together.
func TestShardsMergeToSingleRun(t *testing.T) {
	bin := gainsayCommand(t)
	dir := t.TempDir()
	prof, replies := writeRun(t, dir, 500, 37)
	check := func(out string, extra ...string) {
		t.Helper()
		args := append([]string{"check", "--model", "../../nli/testdata/tiny-wordpiece", "--profile", prof,
			"--replies", replies, "--out", out, "--chunk", "16"}, extra...)
		b, err := exec.Command(bin, args...).CombinedOutput()
		require.NoError(t, err, "%s", b)
	}
	single := filepath.Join(dir, "single.jsonl")
	check(single)
	want, err := os.ReadFile(single)
	require.NoError(t, err)

	shardFiles := map[int][]string{}
	for _, n := range []int{1, 3, 7} {
		var files []string
		for k := 1; k <= n; k++ {
			f := filepath.Join(dir, fmt.Sprintf("s%d-%d.jsonl", n, k))
			check(f, "--shard", fmt.Sprintf("%d/%d", k, n))
			files = append(files, f)
		}
		shardFiles[n] = files
		merged := filepath.Join(dir, fmt.Sprintf("merged%d.jsonl", n))
		args := append([]string{"merge", "--chunk", "16", "--replies", replies, "-o", merged}, files...)
		b, err := exec.Command(bin, args...).CombinedOutput()
		require.NoError(t, err, "%s", b)
		got, err := os.ReadFile(merged)
		require.NoError(t, err)
		assert.True(t, bytes.Equal(want, got), "%d shards merge to the single run's bytes", n)
	}

	other := filepath.Join(dir, "other.jsonl")
	check(other, "--shard", "2/3", "--threshold", "0.9")
	three := shardFiles[3]
	for _, c := range []struct {
		name  string
		files []string
		extra []string
		want  string
	}{
		{"missing", three[:2], []string{"--shards", "3"}, "2 shard files for 3 shards"},
		{"missing, no count", three[:2], nil, "belongs to shard"},
		{"duplicate", []string{three[0], three[1], three[1]}, nil, "are both shard 2/3"},
		{"mismatched", []string{three[0], other, three[2]}, nil, "another model, profile or settings"},
		{"other chunk", three, []string{"--chunk", "8"}, "another --shards or --chunk"},
	} {
		args := append(append([]string{"merge", "--chunk", "16"}, c.extra...), c.files...)
		b, err := exec.Command(bin, args...).CombinedOutput()
		assert.Error(t, err, c.name)
		assert.Contains(t, string(b), c.want, c.name)
	}
}
