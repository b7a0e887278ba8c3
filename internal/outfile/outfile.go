// Package outfile writes gainsay check's output file so that nothing is lost when a run is killed:
// records go to NAME.partial in the same folder, whole chunks at a time, and the finished file is
// renamed into place in one step; a killed run's partial file can be resumed.
package outfile

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/gainsay/gainsay"
)

// Partial is where the records of an unfinished run of path are written.
func Partial(path string) string { return path + ".partial" }

// File is an output being written.
type File struct {
	f             *os.File
	path, partial string
	cut           int64 // where a resumed file is cut before its first write (-1: nowhere)
	wasFinal      bool  // resumed from the finished file
	done          bool
}

// Create starts a new output for path. It refuses to replace an existing path or the partial file of
// an unfinished run unless force.
func Create(path string, force bool) (*File, error) {
	partial := Partial(path)
	if !force {
		for _, p := range []string{path, partial} {
			if _, err := os.Lstat(p); err == nil {
				what := "exists"
				if p == partial {
					what = "exists (an unfinished run)"
				}
				return nil, fmt.Errorf("%s %s; --resume to continue it, --force to start again", p, what)
			}
		}
	}
	f, err := os.OpenFile(partial, os.O_WRONLY|os.O_CREATE|os.O_TRUNC, 0o644)
	if err != nil {
		return nil, err
	}
	return &File{f: f, path: path, partial: partial, cut: -1}, nil
}

// Done is one record already written: the reply it answers.
type Done struct {
	ID   string
	Line int
	Run  string
}

// Resume reopens the output of an earlier run of path: its partial file, or the finished file, which
// goes back to being partial until the run finishes again. Only whole lines count; the records of the
// last chunk present (chunks of input lines, as gainsay.ChunkOf) are dropped and redone, so that the
// run scores the same chunks as an uninterrupted one and writes the same bytes, and the file is cut
// there (when the run first writes or finishes: a run that refuses to go on leaves the file as it
// was). It returns the kept records, for the caller to check against the replies and settings, and
// the last input line their chunks cover (0 when none is kept).
func Resume(path string, chunk int) (*File, []Done, int, error) {
	partial := Partial(path)
	wasFinal := false
	if _, err := os.Stat(partial); errors.Is(err, os.ErrNotExist) {
		if _, err := os.Stat(path); err != nil {
			return nil, nil, 0, fmt.Errorf("--resume: neither %s nor %s exists", partial, path)
		}
		if err := os.Rename(path, partial); err != nil {
			return nil, nil, 0, err
		}
		wasFinal = true
	}
	f, err := os.OpenFile(partial, os.O_RDWR, 0o644)
	if err != nil {
		return nil, nil, 0, err
	}
	done, keep, err := read(f, partial, chunk)
	if err != nil {
		out := &File{f: f, path: path, partial: partial, cut: keep, wasFinal: wasFinal}
		out.Close()
		return nil, nil, 0, err
	}
	after := 0
	if len(done) > 0 {
		after = (gainsay.ChunkOf(done[len(done)-1].Line, chunk) + 1) * chunk
	}
	return &File{f: f, path: path, partial: partial, cut: keep, wasFinal: wasFinal}, done, after, nil
}

// read returns the records of all chunks but the last one present, and the byte length they take.
func read(r io.Reader, name string, chunk int) ([]Done, int64, error) {
	br := bufio.NewReaderSize(r, 1<<16)
	var done []Done
	var ends []int64
	var at int64
	for line := 1; ; line++ {
		raw, err := br.ReadBytes('\n')
		if len(raw) == 0 || raw[len(raw)-1] != '\n' {
			break // the end, or a line cut by the kill: redone
		}
		at += int64(len(raw))
		var rec struct {
			ID      string          `json:"id"`
			Line    int             `json:"line"`
			Run     string          `json:"run"`
			Verdict gainsay.Verdict `json:"verdict"`
		}
		if json.Unmarshal(raw, &rec) != nil || rec.Verdict == "" {
			if _, perr := br.Peek(1); perr != nil {
				break // the last line, cut: redone
			}
			return nil, 0, fmt.Errorf("%s:%d: not a gainsay record; cannot resume", name, line)
		}
		done = append(done, Done{ID: rec.ID, Line: rec.Line, Run: rec.Run})
		ends = append(ends, at)
		if err != nil {
			break
		}
	}
	n := len(done)
	if n == 0 {
		return nil, 0, nil
	}
	last := gainsay.ChunkOf(done[n-1].Line, chunk)
	for n > 0 && gainsay.ChunkOf(done[n-1].Line, chunk) == last {
		n--
	}
	if n == 0 {
		return nil, 0, nil
	}
	return done[:n], ends[n-1], nil
}

// Write writes records out (call it with whole lines).
func (f *File) Write(b []byte) (int, error) {
	if err := f.applyCut(); err != nil {
		return 0, err
	}
	return f.f.Write(b)
}

func (f *File) applyCut() error {
	if f.cut < 0 {
		return nil
	}
	if err := f.f.Truncate(f.cut); err != nil {
		return err
	}
	if _, err := f.f.Seek(f.cut, io.SeekStart); err != nil {
		return err
	}
	f.cut = -1
	return nil
}

// Finish makes the output final: synced, closed and renamed from the partial file to its path.
func (f *File) Finish() error {
	if err := f.applyCut(); err != nil {
		f.f.Close()
		return err
	}
	if err := f.f.Sync(); err != nil {
		f.f.Close()
		return err
	}
	if err := f.f.Close(); err != nil {
		return err
	}
	f.done = true
	return os.Rename(f.partial, f.path)
}

// Close closes an unfinished output, which stays as the partial file for --resume; a finished file
// that was resumed and not written to gets its name back. Close after Finish does nothing.
func (f *File) Close() error {
	if f.done {
		return nil
	}
	f.done = true
	err := f.f.Close()
	if f.wasFinal && f.cut >= 0 {
		if rerr := os.Rename(f.partial, f.path); err == nil {
			err = rerr
		}
	}
	return err
}
