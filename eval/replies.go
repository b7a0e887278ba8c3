package eval

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/metrics"
	"github.com/gainsay/gainsay/internal/textpos"
	"github.com/gainsay/gainsay/profile"
)

// ReplyLabels are the labels of a labelled reply.
var ReplyLabels = []string{"contradiction", "consistent"}

// LabelledReply is a reply with a person's judgement against the profile, and optionally the words
// that person blames and the facts contradicted.
type LabelledReply struct {
	Reply   gainsay.Reply
	Label   string
	Gold    []textpos.Range
	FactIDs []string
}

// Character is a profile and replies labelled against it.
type Character struct {
	Profile *profile.Profile
	Replies []LabelledReply
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
		var words, facts []string
		var spans [][2]int
		if raw, ok := rep.Extra["culprits"]; ok && json.Unmarshal(raw, &words) != nil {
			return nil, inputErr(path, rep.Line, "culprits", "must be a list of words")
		}
		if raw, ok := rep.Extra["culprit_spans"]; ok && json.Unmarshal(raw, &spans) != nil {
			return nil, inputErr(path, rep.Line, "culprit_spans", "must be a list of [start, end]")
		}
		if raw, ok := rep.Extra["fact_ids"]; ok && json.Unmarshal(raw, &facts) != nil {
			return nil, inputErr(path, rep.Line, "fact_ids", "must be a list of fact ids")
		}
		gold, err := goldFrom(rep.Text, words, spans)
		if err != nil {
			return nil, inputErr(path, rep.Line, "culprit_spans", "%v", err)
		}
		for _, k := range []string{"label", "culprits", "culprit_spans", "fact_ids"} {
			delete(rep.Extra, k)
		}
		out = append(out, LabelledReply{Reply: rep, Label: label, Gold: gold, FactIDs: facts})
	}
	return out, nil
}

// ReadCharacters reads a folder of characters: every NAME.yaml (a profile) beside NAME.jsonl (its
// labelled replies), in name order. Fact ids in the replies must be the profile's.
func ReadCharacters(dir string) ([]Character, error) {
	profiles, err := filepath.Glob(filepath.Join(dir, "*.yaml"))
	if err != nil {
		return nil, err
	}
	var out []Character
	for _, p := range profiles {
		prof, err := profile.ReadProfile(p, profile.FormatAuto)
		if err != nil {
			return nil, err
		}
		path := strings.TrimSuffix(p, ".yaml") + ".jsonl"
		items, err := ReadLabelledReplies(path)
		if err != nil {
			return nil, err
		}
		for _, it := range items {
			for _, id := range it.FactIDs {
				if _, ok := prof.FactByID(id); !ok {
					return nil, inputErr(path, it.Reply.Line, "fact_ids", "%q is not a fact of %s", id, p)
				}
			}
		}
		out = append(out, Character{Profile: prof, Replies: items})
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%s: no NAME.yaml profiles with NAME.jsonl replies", dir)
	}
	return out, nil
}

// PersonaScores are how a check does on labelled replies beyond the verdict: where its findings
// and spans fall.
type PersonaScores struct {
	// Found is the number of contradicting replies flagged.
	Found int `json:"found"`
	// HeaviestSpanHit: the share of found contradictions whose heaviest span (of the top finding)
	// overlaps a gold culprit word; of those with gold words.
	HeaviestSpanHit float64 `json:"heaviest_span_hit"`
	// TopFindingOnGoldFact: the share of found contradictions whose top finding is against a gold fact
	// (of those with gold facts).
	TopFindingOnGoldFact float64 `json:"top_finding_on_gold_fact"`
	// OffFactFindings counts findings against facts the reply does not contradict (gold facts known).
	OffFactFindings int `json:"off_fact_findings"`
	// FunctionWordSpans counts spans made only of function words, in any record.
	FunctionWordSpans int `json:"function_word_spans"`
	// FunctionWordSpanExamples are a few of them, as "id: text".
	FunctionWordSpanExamples []string `json:"function_word_span_examples,omitempty"`
	// SkippedPairs counts the pairs the relevance gate kept from the model; Pairs those it read.
	SkippedPairs int `json:"skipped_pairs"`
	Pairs        int `json:"pairs"`
	// Misses and FalseFlags name the replies judged wrong, for reading.
	Misses     []string `json:"misses,omitempty"`
	FalseFlags []string `json:"false_flags,omitempty"`
}

// Replies evaluates the whole check (sentences, every fact, the threshold) on labelled replies of one
// or more characters. The score of a reply is its record's score; rationales compare the record's
// penalty spans with the gold words: token-level precision/recall/F1 over the reply's words and
// hit@1 of the heaviest span.
func Replies(c *gainsay.Checker, chars []Character, target float64) (*Report, error) {
	var truth, pred []int
	var score, conf []float64
	var correct, pos []bool
	var inst []metrics.RationaleInstance
	ps := &PersonaScores{}
	hits, hitN, onFact, onFactN := 0, 0, 0, 0
	for _, ch := range chars {
		replies := make([]gainsay.Reply, len(ch.Replies))
		for i, it := range ch.Replies {
			replies[i] = it.Reply
		}
		recs, st := c.Check(ch.Profile, replies)
		ps.SkippedPairs += st.Skipped
		ps.Pairs += st.Pairs
		for i, rec := range recs {
			it := ch.Replies[i]
			t, p := 1, 1
			if it.Label == "contradiction" {
				t = 0
			}
			if rec.Verdict == gainsay.Contradiction {
				p = 0
			}
			s := float64(rec.Score)
			truth, pred = append(truth, t), append(pred, p)
			score, pos, correct = append(score, s), append(pos, t == 0), append(correct, t == p)
			conf = append(conf, max(s, 1-s))
			if t == 0 && len(it.Gold) > 0 {
				inst = append(inst, replyRationale(rec, it.Gold))
			}
			label := rec.ID + ": " + rec.Text
			switch {
			case t == 0 && p != 0:
				ps.Misses = append(ps.Misses, label)
			case t != 0 && p == 0:
				ps.FalseFlags = append(ps.FalseFlags, label)
			}
			gold := map[string]bool{}
			for _, id := range it.FactIDs {
				gold[id] = true
			}
			for _, f := range rec.Findings {
				if (t == 0 && len(gold) > 0 && !gold[f.FactID]) || t != 0 {
					ps.OffFactFindings++
				}
				for _, sp := range f.Spans {
					if onlyFunctionWords(sp.Text) {
						ps.FunctionWordSpans++
						if len(ps.FunctionWordSpanExamples) < 5 {
							ps.FunctionWordSpanExamples = append(ps.FunctionWordSpanExamples, rec.ID+": "+sp.Text)
						}
					}
				}
			}
			if t != 0 || p != 0 {
				continue
			}
			ps.Found++
			top := rec.Findings[0]
			if len(gold) > 0 {
				onFactN++
				if gold[top.FactID] {
					onFact++
				}
			}
			if len(it.Gold) > 0 {
				hitN++
				if len(top.Spans) > 0 {
					sp := top.Spans[0]
					for _, g := range it.Gold {
						if sp.ByteStart < g.End && g.Start < sp.ByteEnd {
							hits++
							break
						}
					}
				}
			}
		}
	}
	if hitN > 0 {
		ps.HeaviestSpanHit = float64(hits) / float64(hitN)
	}
	if onFactN > 0 {
		ps.TopFindingOnGoldFact = float64(onFact) / float64(onFactN)
	}
	r := &Report{Items: len(truth), Persona: ps}
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

// onlyFunctionWords reports a span whose every word is a function word.
func onlyFunctionWords(s string) bool {
	ws := strings.Fields(s)
	for _, w := range ws {
		if !gainsay.IsFunctionWord(w) {
			return false
		}
	}
	return len(ws) > 0
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
