// Package shards joins the outputs of a check split with --shard K/N back into one file in input
// order, after checking that they belong together: the same run (model, profile, settings), each
// shard once, each reply once.
package shards

import (
	"bufio"
	"container/heap"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/gainsay/gainsay"
)

// record is one line of a shard file and what the merge checks of it.
type record struct {
	raw   []byte
	line  int
	id    string
	run   string
	where string // file:line, for messages
}

// reader reads one shard file in order.
type reader struct {
	path  string
	br    *bufio.Reader
	n     int
	shard int // 0-based residue of its chunks; -1 until its first record
	last  int // last chunk seen
	cur   *record
}

func (r *reader) next() error {
	raw, err := r.br.ReadBytes('\n')
	if len(raw) == 0 && errors.Is(err, io.EOF) {
		r.cur = nil
		return nil
	}
	if err != nil && !errors.Is(err, io.EOF) {
		return err
	}
	r.n++
	if raw[len(raw)-1] != '\n' {
		return fmt.Errorf("%s:%d: the last line is cut (a killed run? finish it with check --resume)", r.path, r.n)
	}
	var v struct {
		ID      string          `json:"id"`
		Line    int             `json:"line"`
		Run     string          `json:"run"`
		Verdict gainsay.Verdict `json:"verdict"`
	}
	if json.Unmarshal(raw, &v) != nil || v.Verdict == "" || v.Line <= 0 {
		return fmt.Errorf("%s:%d: not a gainsay record", r.path, r.n)
	}
	r.cur = &record{raw: raw, line: v.Line, id: v.ID, run: v.Run, where: fmt.Sprintf("%s:%d", r.path, r.n)}
	return nil
}

type queue []*reader

func (q queue) Len() int           { return len(q) }
func (q queue) Less(i, j int) bool { return q[i].cur.line < q[j].cur.line }
func (q queue) Swap(i, j int)      { q[i], q[j] = q[j], q[i] }
func (q *queue) Push(x any)        { *q = append(*q, x.(*reader)) }
func (q *queue) Pop() any {
	old := *q
	x := old[len(old)-1]
	*q = old[:len(old)-1]
	return x
}

// Options say how the shards were made.
type Options struct {
	Shards int // N of --shard K/N (0: the number of files)
	Chunk  int // --chunk of the check (0: gainsay.DefaultChunk)
	// Lines, when set, are the input lines of the replies, in order: every one must have exactly one
	// record (without it the merge checks what the shard files alone can show).
	Lines []int
}

// Merge writes the records of the shard files at paths to w in input order and returns how many.
func Merge(paths []string, w io.Writer, opts Options) (int, error) {
	n := opts.Shards
	if n == 0 {
		n = len(paths)
	}
	chunk := opts.Chunk
	if chunk <= 0 {
		chunk = gainsay.DefaultChunk
	}
	if len(paths) != n {
		return 0, fmt.Errorf("%d shard files for %d shards: each shard once", len(paths), n)
	}
	var q, all queue
	byShard := map[int]string{}
	for _, p := range paths {
		f, err := os.Open(p)
		if err != nil {
			return 0, err
		}
		defer f.Close()
		r := &reader{path: p, br: bufio.NewReaderSize(f, 1<<16), shard: -1}
		if err := r.next(); err != nil {
			return 0, err
		}
		if r.cur == nil {
			continue // a shard with no replies (fewer chunks than shards)
		}
		r.shard = gainsay.ChunkOf(r.cur.line, chunk) % n
		if other, dup := byShard[r.shard]; dup {
			return 0, fmt.Errorf("%s and %s are both shard %d/%d", other, p, r.shard+1, n)
		}
		byShard[r.shard] = p
		q = append(q, r)
		all = append(all, r)
	}
	heap.Init(&q)
	bw := bufio.NewWriterSize(w, 1<<16)
	run, runAt := "", ""
	last, count, maxChunk := 0, 0, -1
	var want []int
	if opts.Lines != nil {
		want = opts.Lines
	}
	for q.Len() > 0 {
		r := q[0]
		rec := r.cur
		c := gainsay.ChunkOf(rec.line, chunk)
		switch {
		case runAt == "":
			run, runAt = rec.run, rec.where
		case rec.run != run:
			return 0, fmt.Errorf("%s was made with run %s, %s with run %s: another model, profile or settings", rec.where, rec.run, runAt, run)
		}
		if c%n != r.shard {
			return 0, fmt.Errorf("%s: line %d belongs to shard %d/%d, not to this file's shard %d/%d (another --shards or --chunk?)",
				rec.where, rec.line, c%n+1, n, r.shard+1, n)
		}
		if rec.line <= last {
			return 0, fmt.Errorf("%s: line %d has a record already (or is out of order): each reply once", rec.where, rec.line)
		}
		if want != nil {
			if count >= len(want) || want[count] != rec.line {
				return 0, fmt.Errorf("%s: record for line %d, but the replies' next line is %s", rec.where, rec.line, nextLine(want, count))
			}
		}
		last, count, r.last, maxChunk = rec.line, count+1, c, max(maxChunk, c)
		bw.Write(rec.raw)
		if err := r.next(); err != nil {
			return 0, err
		}
		if r.cur == nil {
			heap.Pop(&q)
		} else {
			heap.Fix(&q, 0)
		}
	}
	if want != nil && count < len(want) {
		return 0, fmt.Errorf("no record for line %d of the replies (and %d more): a shard is missing or unfinished", want[count], len(want)-count-1)
	}
	if want == nil && maxChunk >= 0 {
		for k := 0; k < n && k <= maxChunk; k++ {
			if _, ok := byShard[k]; !ok {
				return 0, fmt.Errorf("shard %d/%d is missing: no file holds its chunks", k+1, n)
			}
		}
		// Every shard must reach its last chunk before the run's last one; one that stopped a cycle
		// early is short (a chunk of blank lines only would look the same: --replies checks exactly).
		for _, r := range all {
			if end := maxChunk - (maxChunk-r.shard)%n; r.last < end {
				return 0, fmt.Errorf("%s (shard %d/%d) ends at chunk %d, but the run goes on to chunk %d: unfinished? (--replies checks exactly)",
					r.path, r.shard+1, n, r.last, maxChunk)
			}
		}
	}
	return count, bw.Flush()
}

func nextLine(want []int, i int) string {
	if i >= len(want) {
		return "none (the replies end)"
	}
	return fmt.Sprint(want[i])
}

// ReplyLines lists the input lines of a replies file's replies, for Options.Lines.
func ReplyLines(path string, format gainsay.Format) ([]int, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	rr := gainsay.NewReplyReader(f, path, format, 0)
	var out []int
	for {
		r, err := rr.Next()
		if errors.Is(err, io.EOF) {
			return out, nil
		}
		if err != nil {
			return nil, err
		}
		out = append(out, r.Line)
	}
}
