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
	return &File{f: f, path: path, partial: partial}, nil
}

// Done is one record already written: the reply it answers.
type Done struct {
	ID   string
	Line int
	Run  string
}

// Resume reopens the output of an earlier run of path: its partial file, or the finished file, which
// goes back to being partial until the run finishes again. Only whole lines count; of those, the
// records up to the last multiple of chunk are kept (the rest are redone, so that the run scores the
// same chunks as an uninterrupted one and writes the same bytes) and the file is cut there. It
// returns the kept records, for the caller to check against the replies and settings.
func Resume(path string, chunk int) (*File, []Done, error) {
	partial := Partial(path)
	if _, err := os.Stat(partial); errors.Is(err, os.ErrNotExist) {
		if _, err := os.Stat(path); err != nil {
			return nil, nil, fmt.Errorf("--resume: neither %s nor %s exists", partial, path)
		}
		if err := os.Rename(path, partial); err != nil {
			return nil, nil, err
		}
	}
	f, err := os.OpenFile(partial, os.O_RDWR, 0o644)
	if err != nil {
		return nil, nil, err
	}
	done, keep, err := read(f, partial, chunk)
	if err == nil {
		err = f.Truncate(keep)
	}
	if err == nil {
		_, err = f.Seek(keep, io.SeekStart)
	}
	if err != nil {
		f.Close()
		return nil, nil, err
	}
	return &File{f: f, path: path, partial: partial}, done, nil
}

// read returns the records of whole chunks and the byte length they take.
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
	n := len(done) / chunk * chunk
	if n == 0 {
		return nil, 0, nil
	}
	return done[:n], ends[n-1], nil
}

// Write writes records out (call it with whole lines).
func (f *File) Write(b []byte) (int, error) { return f.f.Write(b) }

// Finish makes the output final: synced, closed and renamed from the partial file to its path.
func (f *File) Finish() error {
	if err := f.f.Sync(); err != nil {
		f.f.Close()
		return err
	}
	if err := f.f.Close(); err != nil {
		return err
	}
	return os.Rename(f.partial, f.path)
}

// Close closes an unfinished output, which stays as the partial file for --resume.
func (f *File) Close() error { return f.f.Close() }
