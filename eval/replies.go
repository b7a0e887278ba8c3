package eval

import (
	"encoding/json"
	"errors"
	"io"
	"os"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/metrics"
	"github.com/gainsay/gainsay/internal/textpos"
	"github.com/gainsay/gainsay/profile"
)

// ReplyLabels are the labels of a labelled reply.
var ReplyLabels = []string{"contradiction", "consistent"}

// LabelledReply is a reply with a person's judgement against the profile, and optionally the words
// that person blames.
type LabelledReply struct {
	Reply gainsay.Reply
	Label string
	Gold  []textpos.Range
}

// ReadLabelledReplies reads gainsay's labelled replies: one JSON object a line with id, text, label
// (contradiction or consistent) and optionally culprits (words) or culprit_spans (code-point ranges).
// Unlike check, evaluation data must be clean: the first bad line is an error.
func ReadLabelledReplies(path string) ([]LabelledReply, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var out []LabelledReply
	rr := gainsay.NewReplyReader(f, path, gainsay.FormatJSONL, 0)
	for {
		rep, err := rr.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, err
		}
		if rep.Err != nil {
			return nil, rep.Err
		}
		var label string
		if raw, ok := rep.Extra["label"]; !ok || json.Unmarshal(raw, &label) != nil {
			return nil, inputErr(path, rep.Line, "label", "missing or not a string")
		}
		if label != "contradiction" && label != "consistent" {
			return nil, inputErr(path, rep.Line, "label", "%q is not contradiction or consistent", label)
		}
		var words []string
		var spans [][2]int
		if raw, ok := rep.Extra["culprits"]; ok && json.Unmarshal(raw, &words) != nil {
			return nil, inputErr(path, rep.Line, "culprits", "must be a list of words")
		}
		if raw, ok := rep.Extra["culprit_spans"]; ok && json.Unmarshal(raw, &spans) != nil {
			return nil, inputErr(path, rep.Line, "culprit_spans", "must be a list of [start, end]")
		}
		gold, err := goldFrom(rep.Text, words, spans)
		if err != nil {
			return nil, inputErr(path, rep.Line, "culprit_spans", "%v", err)
		}
		for _, k := range []string{"label", "culprits", "culprit_spans"} {
			delete(rep.Extra, k)
		}
		out = append(out, LabelledReply{Reply: rep, Label: label, Gold: gold})
	}
	return out, nil
}

// Replies evaluates the whole check (sentences, every fact, the threshold) on labelled replies. The
// score of a reply is its record's score; rationales compare the record's penalty spans with the gold
// words: token-level precision/recall/F1 over the reply's words and hit@1 of the heaviest span.
func Replies(c *gainsay.Checker, prof *profile.Profile, items []LabelledReply, target float64) (*Report, error) {
	replies := make([]gainsay.Reply, len(items))
	for i, it := range items {
		replies[i] = it.Reply
	}
	recs, _ := c.Check(prof, replies)
	truth, pred := make([]int, len(items)), make([]int, len(items))
	conf, score := make([]float64, len(items)), make([]float64, len(items))
	correct, pos := make([]bool, len(items)), make([]bool, len(items))
	var inst []metrics.RationaleInstance
	for i, rec := range recs {
		if items[i].Label != "contradiction" {
			truth[i] = 1
		}
		if rec.Verdict != gainsay.Contradiction {
			pred[i] = 1
		}
		s := float64(rec.Score)
		score[i], pos[i], correct[i] = s, truth[i] == 0, truth[i] == pred[i]
		conf[i] = max(s, 1-s)
		if truth[i] == 0 && len(items[i].Gold) > 0 {
			inst = append(inst, replyRationale(rec, items[i].Gold))
		}
	}
	r := &Report{Items: len(items)}
	r.Classification = classification(metrics.NewConfusion(ReplyLabels, truth, pred), metrics.ECE(conf, correct, 10))
	r.Contradiction = thresholds(pos, score, target)
	if len(inst) > 0 {
		p, rc, f := metrics.TokenPRF(inst)
		r.Rationales = &Rationales{Instances: len(inst), Methods: []RationaleScores{{
			Method: "leave-one-out", Precision: p, Recall: rc, F1: f, HitAt1: metrics.HitAt1(inst),
			AUPRC: metrics.MeanAUPRC(inst),
		}}}
	}
	return r, nil
}

// replyRationale scores the reply's space-separated words: weight is the heaviest span over the word
// in any finding, picked when a span covers it.
func replyRationale(rec gainsay.Record, gold []textpos.Range) metrics.RationaleInstance {
	words := spaceWords(rec.Text)
	x := metrics.RationaleInstance{Gold: make([]bool, len(words)), Weight: make([]float64, len(words)), Picked: make([]bool, len(words))}
	for i, w := range words {
		for _, g := range gold {
			if w.Start < g.End && g.Start < w.End {
				x.Gold[i] = true
			}
		}
		for _, f := range rec.Findings {
			for _, sp := range f.Spans {
				if w.Start < sp.ByteEnd && sp.ByteStart < w.End {
					x.Picked[i] = true
					x.Weight[i] = max(x.Weight[i], float64(sp.Weight))
				}
			}
		}
	}
	return x
}
