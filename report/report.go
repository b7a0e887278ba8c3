// Package report renders records of gainsay check as one self-contained HTML page: header counts and
// contradiction rates with intervals, a chart of the rate per fact (and per file, e.g. per checkpoint),
// and the flagged replies worst first with their culprit words highlighted. Inline CSS, SVG and a small
// script; nothing is fetched.
package report

import (
	"cmp"
	"container/heap"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/rates"
	"github.com/gainsay/gainsay/profile"
)

// DefaultMaxList caps the flagged replies listed; the charts always count every record.
const DefaultMaxList = 500

// Options tune a report.
type Options struct {
	MaxList int    // flagged replies listed at most (0: DefaultMaxList)
	Title   string // page title ("" : from the profile's character)
}

// Page is what the template renders.
type Page struct {
	Title     string
	Character string
	Files     []FileView
	Facts     []FactView
	Items     []Item
	Flagged   int // flagged replies in all files
	Shown     int
	Models    []string
	Threshold string
	Multi     bool
	Chart     Chart
	Trend     *Trend
}

// FileView is one input file's summary.
type FileView struct {
	Name    string
	Color   string
	Summary rates.Summary
	Change  *rates.Change // against the first file
}

// FactView is one fact's rate in every file.
type FactView struct {
	ID, Text string
	Rates    []rates.Rate
}

// Item is one flagged reply.
type Item struct {
	File     string
	FileIdx  int
	ID       string
	Score    float64
	Text     string
	Context  string
	Facts    string // space-separated fact ids, for filtering
	Findings []FindingView
}

// FindingView is one contradicted fact and the sentence with its culprit words marked.
type FindingView struct {
	FactID, Fact string
	Probs        gainsay.Probs
	Segments     []Segment
}

// Segment is a piece of a sentence; Weight > 0 marks a culprit span.
type Segment struct {
	Text   string
	Weight float64
}

// Build reads the record files and prepares the page. Files are streamed: memory grows with the
// number of facts and MaxList, not with the number of records.
func Build(prof *profile.Profile, paths []string, opts Options) (*Page, error) {
	if opts.MaxList <= 0 {
		opts.MaxList = DefaultMaxList
	}
	p := &Page{Character: prof.Character, Title: opts.Title, Multi: len(paths) > 1}
	if p.Title == "" {
		p.Title = "Where " + prof.Character + " breaks character"
	}
	top := &itemHeap{}
	var thresholds []string
	for fi, path := range paths {
		f, err := os.Open(path)
		if err != nil {
			return nil, err
		}
		rr := gainsay.NewRecordReader(f, path)
		counter := rates.NewCounter(filepath.Base(path), prof.Facts)
		for {
			rec, err := rr.Next()
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				f.Close()
				return nil, err
			}
			counter.Add(&rec)
			if t := fmt.Sprint(float64(rec.Threshold)); !slices.Contains(thresholds, t) {
				thresholds = append(thresholds, t)
			}
			if rec.Verdict == gainsay.Contradiction {
				p.Flagged++
				pushItem(top, toItem(&rec, filepath.Base(path), fi), opts.MaxList)
			}
		}
		f.Close()
		s := counter.Summary()
		for _, m := range s.Models {
			if !slices.Contains(p.Models, m) {
				p.Models = append(p.Models, m)
			}
		}
		fv := FileView{Name: s.Name, Color: palette[fi%len(palette)], Summary: s}
		if fi > 0 {
			ch := rates.Compare(p.Files[0].Summary.Overall, s.Overall)
			fv.Change = &ch
		}
		p.Files = append(p.Files, fv)
	}
	p.Threshold = strings.Join(thresholds, ", ")
	sums := make([]rates.Summary, len(p.Files))
	for i, fv := range p.Files {
		sums[i] = fv.Summary
	}
	for _, id := range rates.Facts(sums) {
		v := FactView{ID: id}
		for _, fv := range p.Files {
			if v.Text == "" {
				v.Text = fv.Summary.FactText[id]
			}
			v.Rates = append(v.Rates, fv.Summary.FactRate(id))
		}
		p.Facts = append(p.Facts, v)
	}
	p.Items = make([]Item, top.Len())
	for i := len(p.Items) - 1; i >= 0; i-- {
		p.Items[i] = heap.Pop(top).(Item)
	}
	p.Shown = len(p.Items)
	p.Chart = factChart(p)
	if p.Multi {
		p.Trend = trendChart(p)
	}
	return p, nil
}

func toItem(rec *gainsay.Record, file string, fi int) Item {
	it := Item{File: file, FileIdx: fi, ID: rec.ID, Score: float64(rec.Score), Text: rec.Text, Context: rec.Context}
	var ids []string
	for _, f := range rec.Findings {
		if !slices.Contains(ids, f.FactID) {
			ids = append(ids, f.FactID)
		}
		it.Findings = append(it.Findings, FindingView{FactID: f.FactID, Fact: f.Fact, Probs: f.Probs, Segments: segments(rec.Text, f)})
	}
	it.Facts = strings.Join(ids, " ")
	return it
}

// segments cuts the finding's sentence at its spans (which never overlap within a finding).
func segments(text string, f gainsay.Finding) []Segment {
	s0, s1 := f.Sentence.ByteStart, f.Sentence.ByteEnd
	if s0 < 0 || s1 > len(text) || s0 > s1 {
		return []Segment{{Text: f.Sentence.Text}}
	}
	spans := slices.Clone(f.Spans)
	slices.SortFunc(spans, func(a, b gainsay.Span) int { return cmp.Compare(a.ByteStart, b.ByteStart) })
	var out []Segment
	at := s0
	for _, sp := range spans {
		a, b := max(sp.ByteStart, at), min(sp.ByteEnd, s1)
		if a >= b {
			continue
		}
		if a > at {
			out = append(out, Segment{Text: text[at:a]})
		}
		out = append(out, Segment{Text: text[a:b], Weight: float64(sp.Weight)})
		at = b
	}
	if at < s1 {
		out = append(out, Segment{Text: text[at:s1]})
	}
	return out
}

// itemHeap keeps the MaxList highest-scoring items: a min-heap by score, ties broken by file and id
// so that the page does not depend on input order within equal scores.
type itemHeap []Item

func less(a, b Item) bool {
	if a.Score != b.Score {
		return a.Score < b.Score
	}
	if a.FileIdx != b.FileIdx {
		return a.FileIdx > b.FileIdx
	}
	return a.ID > b.ID
}

func (h itemHeap) Len() int           { return len(h) }
func (h itemHeap) Less(i, j int) bool { return less(h[i], h[j]) }
func (h itemHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *itemHeap) Push(x any)        { *h = append(*h, x.(Item)) }
func (h *itemHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}

func pushItem(h *itemHeap, it Item, limit int) {
	if h.Len() < limit {
		heap.Push(h, it)
		return
	}
	if less((*h)[0], it) {
		(*h)[0] = it
		heap.Fix(h, 0)
	}
}
