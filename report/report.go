// Package report renders records of gainsay check as one self-contained HTML page for reviewing a
// training run: header counts and contradiction rates with intervals, a chart of the rate per fact (and
// per file, e.g. per checkpoint, and per training step when records carry one), a threshold slider that
// recounts every record in the page, and every reply (flagged ones worst first, with their culprit
// words highlighted and weighed; consistent ones collapsed), sortable and filterable, with a
// "not a contradiction" mark per finding whose marks export as labelled replies for gainsay eval.
// Inline CSS, SVG and a small script; nothing is fetched.
package report

import (
	"cmp"
	"container/heap"
	"encoding/json"
	"errors"
	"fmt"
	"html/template"
	"io"
	"math"
	"os"
	"strconv"
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
	MaxList int    // flagged replies listed at most, and consistent ones (0: DefaultMaxList)
	Title   string // page title ("" : from the profile's character)
	// StepField is the input field (kept under extra) holding a record's training step ("": "step").
	StepField string
}

// Page is what the template renders.
type Page struct {
	Title     string
	Character string
	Files     []FileView
	Facts     []FactView
	Items     []Item // flagged replies, worst first
	// Consistent are the highest-scoring replies judged consistent (near misses first), and the
	// unreadable ones.
	Consistent []Item
	Flagged    int // flagged replies in all files
	Others     int // replies judged consistent or unreadable in all files
	Shown      int
	Models    []string
	Threshold string
	Multi     bool
	Chart     Chart
	Trend     *Trend
	Steps     *StepChart
	StepField string
	// MinThreshold is the lowest threshold the slider offers: the highest of the runs' own.
	MinThreshold float64
	// Counts holds, per file, what the threshold slider recounts (see counts).
	Counts template.JS
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

// Item is one reply.
type Item struct {
	File     string
	FileIdx  int
	Line     int
	Order    int // position over all files, for sorting by input order
	ID       string
	Verdict  gainsay.Verdict
	Score    float64
	Step     string // the training step, "" when the record has none
	Text     string
	Context  string
	Error    string
	Facts    string // space-separated fact ids, for filtering
	Findings []FindingView
}

// FindingView is one contradicted fact and the sentence with its culprit words marked.
type FindingView struct {
	FactID, Fact string
	Probs        gainsay.Probs
	Segments     []Segment
	// Culprits are the span texts, heaviest first, for the review export.
	Culprits []string
}

// Segment is a piece of a sentence; Weight > 0 marks a culprit span.
type Segment struct {
	Text   string
	Weight float64
}

// Build reads the record files and prepares the page. Files are streamed: memory grows with the
// number of facts, steps and MaxList, and with one probability per flagged reply for the slider, not
// with the number of records.
func Build(prof *profile.Profile, paths []string, opts Options) (*Page, error) {
	if opts.MaxList <= 0 {
		opts.MaxList = DefaultMaxList
	}
	field := cmp.Or(opts.StepField, "step")
	p := &Page{Character: prof.Character, Title: opts.Title, Multi: len(paths) > 1, StepField: field}
	if p.Title == "" {
		p.Title = "Where " + prof.Character + " breaks character"
	}
	flagged, others := &itemHeap{}, &itemHeap{}
	var thresholds []string
	var counts []fileCounts
	steps := map[int]map[float64]*stepCount{}
	order := 0
	for fi, path := range paths {
		f, err := os.Open(path)
		if err != nil {
			return nil, err
		}
		rr := gainsay.NewRecordReader(f, path)
		counter := rates.NewCounter(filepath.Base(path), prof.Facts)
		fc := fileCounts{Facts: map[string][]float64{}}
		for {
			rec, err := rr.Next()
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				f.Close()
				return nil, err
			}
			order++
			counter.Add(&rec)
			if t := fmt.Sprint(float64(rec.Threshold)); !slices.Contains(thresholds, t) {
				thresholds = append(thresholds, t)
			}
			p.MinThreshold = max(p.MinThreshold, float64(rec.Threshold))
			it := toItem(&rec, filepath.Base(path), fi, order, field)
			if rec.Verdict != gainsay.Failed {
				fc.N++
				if step, ok := stepOf(&rec, field); ok {
					if steps[fi] == nil {
						steps[fi] = map[float64]*stepCount{}
					}
					sc := steps[fi][step]
					if sc == nil {
						sc = &stepCount{}
						steps[fi][step] = sc
					}
					sc.n++
					if rec.Verdict == gainsay.Contradiction {
						sc.k++
					}
				}
			}
			if rec.Verdict == gainsay.Contradiction {
				p.Flagged++
				fc.Flagged = append(fc.Flagged, round3(float64(rec.Score)))
				for id, pr := range factMax(&rec) {
					fc.Facts[id] = append(fc.Facts[id], round3(pr))
				}
				pushItem(flagged, it, opts.MaxList)
			} else {
				p.Others++
				pushItem(others, it, opts.MaxList)
			}
		}
		f.Close()
		counts = append(counts, fc)
		s := counter.Summary()
		for _, m := range s.Models {
			if !slices.Contains(p.Models, m) {
				p.Models = append(p.Models, m)
			}
		}
		fv := FileView{Name: s.Name, Color: color(fi), Summary: s}
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
	p.Items, p.Consistent = drain(flagged), drain(others)
	p.Shown = len(p.Items)
	p.Chart = factChart(p)
	if p.Multi {
		p.Trend = trendChart(p)
	}
	p.Steps = stepChart(p, steps)
	raw, err := json.Marshal(counts)
	if err != nil {
		return nil, err
	}
	p.Counts = template.JS(raw)
	return p, nil
}

// fileCounts is what the threshold slider needs of one file: the readable replies, each flagged
// reply's score, and per fact the highest probability of each reply flagged against it.
type fileCounts struct {
	N       int                  `json:"n"`
	Flagged []float64            `json:"flagged"`
	Facts   map[string][]float64 `json:"facts"`
}

func round3(x float64) float64 { return math.Round(x*1000) / 1000 }

// factMax is a record's highest contradiction probability per contradicted fact.
func factMax(rec *gainsay.Record) map[string]float64 {
	out := map[string]float64{}
	for _, f := range rec.Findings {
		out[f.FactID] = max(out[f.FactID], float64(f.Probs.Contradiction))
	}
	return out
}

// stepOf reads a record's training step: a number in extra[field].
func stepOf(rec *gainsay.Record, field string) (float64, bool) {
	raw, ok := rec.Extra[field]
	if !ok {
		return 0, false
	}
	var v float64
	if json.Unmarshal(raw, &v) != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, false
	}
	return v, true
}

type stepCount struct{ k, n int }

// drain empties a heap, highest score first.
func drain(h *itemHeap) []Item {
	out := make([]Item, h.Len())
	for i := len(out) - 1; i >= 0; i-- {
		out[i] = heap.Pop(h).(Item)
	}
	return out
}

func toItem(rec *gainsay.Record, file string, fi, order int, field string) Item {
	it := Item{File: file, FileIdx: fi, Line: rec.Line, Order: order, ID: rec.ID, Verdict: rec.Verdict,
		Score: float64(rec.Score), Text: rec.Text, Context: rec.Context, Error: rec.Error}
	if step, ok := stepOf(rec, field); ok {
		it.Step = strconv.FormatFloat(step, 'f', -1, 64)
	}
	var ids []string
	for _, f := range rec.Findings {
		if !slices.Contains(ids, f.FactID) {
			ids = append(ids, f.FactID)
		}
		fv := FindingView{FactID: f.FactID, Fact: f.Fact, Probs: f.Probs, Segments: segments(rec.Text, f)}
		for _, sp := range f.Spans {
			fv.Culprits = append(fv.Culprits, sp.Text)
		}
		it.Findings = append(it.Findings, fv)
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
