package eval

import (
	"fmt"
	"math/rand/v2"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/metrics"
	"github.com/gainsay/gainsay/internal/textpos"
	"github.com/gainsay/gainsay/nli"
)

// Options tune Pairs.
type Options struct {
	// TargetPrecision asks for the contradiction threshold that reaches it with the most recall (0: skip).
	TargetPrecision float64
	// Rationales evaluates attribution on gold-contradiction items that carry gold words.
	Rationales bool
	Occlusion  nli.Occlusion
	Spans      gainsay.SpanRule
	// Seed for the random baseline.
	Seed uint64
}

// ClassRow is one class's scores.
type ClassRow struct {
	Label     string  `json:"label"`
	Precision float64 `json:"precision"`
	Recall    float64 `json:"recall"`
	F1        float64 `json:"f1"`
	Support   int     `json:"support"`
}

// Classification are the three-way (or, for replies, two-way) results.
type Classification struct {
	Accuracy  float64    `json:"accuracy"`
	MacroF1   float64    `json:"macro_f1"`
	PerClass  []ClassRow `json:"per_class"`
	Labels    []string   `json:"labels"`
	Confusion [][]int    `json:"confusion"` // [true][predicted]
	ECE       float64    `json:"ece_10_bins"`
}

// Threshold are the contradiction class's threshold results, on the contradiction probability.
type Threshold struct {
	AveragePrecision float64              `json:"average_precision"`
	Sweep            []metrics.SweepPoint `json:"sweep"`
	TargetPrecision  float64              `json:"target_precision,omitempty"`
	AtTarget         *metrics.SweepPoint  `json:"at_target,omitempty"`
}

// RationaleScores are one attribution method's scores against gold words (ERASER definitions).
type RationaleScores struct {
	Method string `json:"method"`
	// Token precision/recall/F1 of the method's own picks (the span rule for leave-one-out).
	Precision float64 `json:"precision"`
	Recall    float64 `json:"recall"`
	F1        float64 `json:"f1"`
	// The same with the top k words, k = the number of gold words of each instance.
	TopKPrecision float64 `json:"topk_precision"`
	TopKRecall    float64 `json:"topk_recall"`
	TopKF1        float64 `json:"topk_f1"`
	AUPRC         float64 `json:"auprc"`
	HitAt1        float64 `json:"hit_at_1"`
	// Comprehensiveness: drop in the predicted class's probability without the picked words;
	// sufficiency: drop with only them (premise kept whole). Means over instances.
	Comprehensiveness float64 `json:"comprehensiveness"`
	Sufficiency       float64 `json:"sufficiency"`
}

// Rationales compares leave-one-out attribution with cheap baselines.
type Rationales struct {
	Instances int               `json:"instances"`
	Methods   []RationaleScores `json:"methods"`
}

// Report is everything eval prints.
type Report struct {
	Items          int            `json:"items"`
	Classification Classification `json:"classification"`
	Contradiction  Threshold      `json:"contradiction"`
	Rationales     *Rationales    `json:"rationales,omitempty"`
	// Persona: where findings and spans fall, for labelled replies.
	Persona *PersonaScores `json:"persona,omitempty"`
}

// Pairs evaluates a model on labelled pairs, read as the Scorer reads them (benchmarks are scored
// one way: nli.Scorer.OneWay).
func Pairs(s *nli.Scorer, items []Item, opts Options) (*Report, error) {
	pairs := make([]nli.Pair, len(items))
	for i, it := range items {
		pairs[i] = nli.Pair{Premise: it.Premise, Hypothesis: it.Hypothesis}
	}
	scored, err := s.Score(pairs)
	if err != nil {
		return nil, err
	}
	probs := make([]nli.Probs, len(scored))
	for i, sc := range scored {
		probs[i] = sc.Probs
	}
	truth := make([]int, len(items))
	pred := make([]int, len(items))
	conf := make([]float64, len(items))
	correct := make([]bool, len(items))
	isC := make([]bool, len(items))
	pc := make([]float64, len(items))
	for i, p := range probs {
		truth[i] = LabelIndex(items[i].Label)
		v := []float64{p.Contradiction, p.Entailment, p.Neutral}
		best := 0
		for k := range v {
			if v[k] > v[best] {
				best = k
			}
		}
		pred[i], conf[i], correct[i] = best, v[best], best == truth[i]
		isC[i], pc[i] = truth[i] == 0, p.Contradiction
	}
	r := &Report{Items: len(items)}
	r.Classification = classification(metrics.NewConfusion(Labels, truth, pred), metrics.ECE(conf, correct, 10))
	r.Contradiction = thresholds(isC, pc, opts.TargetPrecision)
	if opts.Rationales {
		ra, err := rationales(s, items, scored, opts)
		if err != nil {
			return nil, err
		}
		if ra.Instances > 0 {
			r.Rationales = ra
		}
	}
	return r, nil
}

func classification(c metrics.Confusion, ece float64) Classification {
	out := Classification{Accuracy: c.Accuracy(), MacroF1: c.MacroF1(), Labels: c.Labels, Confusion: c.Counts, ECE: ece}
	for _, s := range c.PerClass() {
		out.PerClass = append(out.PerClass, ClassRow{s.Label, s.Precision, s.Recall, s.F1, s.Support})
	}
	return out
}

func thresholds(pos []bool, score []float64, target float64) Threshold {
	t := Threshold{AveragePrecision: metrics.AveragePrecision(pos, score), Sweep: metrics.Sweep(pos, score)}
	if target > 0 {
		t.TargetPrecision = target
		if p, ok := metrics.ThresholdForPrecision(pos, score, target); ok {
			t.AtTarget = &p
		}
	}
	return t
}

// wordGold marks the words that overlap a gold range, punctuation-only words excepted.
func wordGold(text string, words []nli.WordWeight, gold []textpos.Range) []bool {
	out := make([]bool, len(words))
	for i, w := range words {
		if textpos.OnlyPunct(text[w.Start:w.End]) {
			continue
		}
		for _, g := range gold {
			if w.Start < g.End && g.Start < w.End {
				out[i] = true
				break
			}
		}
	}
	return out
}

type method struct {
	name      string
	instances []metrics.RationaleInstance
	comp, suf float64
}

func rationales(s *nli.Scorer, items []Item, scored []nli.Scored, opts Options) (*Rationales, error) {
	var idx []int
	for i, it := range items {
		if it.Label == "contradiction" && len(it.Gold) > 0 {
			idx = append(idx, i)
		}
	}
	rule := opts.Spans
	if rule == (gainsay.SpanRule{}) {
		rule = gainsay.DefaultSpanRule()
	}
	how := opts.Occlusion
	if how == "" {
		how = nli.Delete
	}
	rng := rand.New(rand.NewPCG(opts.Seed, 0x9a15a1))
	methods := []*method{{name: "leave-one-out"}, {name: "not-in-premise"}, {name: "random"}}
	for _, i := range idx {
		it := items[i]
		pair := scored[i].Pair
		attr, err := s.Attribute(scored[i:i+1], nli.AttributionOptions{Occlusion: how, Phrases: rule.Phrases})
		if err != nil {
			return nil, fmt.Errorf("%s: %w", it.Source, err)
		}
		words := attr[0].Words
		gold := wordGold(it.Hypothesis, words, it.Gold)
		k := 0
		for _, g := range gold {
			if g {
				k++
			}
		}
		if k == 0 {
			continue // the gold range fell on punctuation only
		}
		loo := rule.Drops(it.Hypothesis, attr[0])
		nip := notInPremise(it.Premise, it.Hypothesis, words)
		rnd := make([]float64, len(words))
		for j := range rnd {
			rnd[j] = rng.Float64()
		}
		picks := [][]bool{rule.Culprits(loo), pickPositive(nip), metrics.TopK(rnd, k)}
		weights := [][]float64{loo, nip, rnd}
		// Comprehensiveness and sufficiency of every method's picks: one batched run.
		var masks [][]bool
		for _, p := range picks {
			without, only := make([]bool, len(p)), make([]bool, len(p))
			for j := range p {
				without[j], only[j] = !p[j], p[j]
			}
			masks = append(masks, without, only)
		}
		kept, err := s.ScoreKept(pair, masks)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", it.Source, err)
		}
		full := asSlice(scored[i].Probs)
		cls := argmax(full)
		for mi, meth := range methods {
			meth.instances = append(meth.instances, metrics.RationaleInstance{Gold: gold, Weight: weights[mi], Picked: picks[mi]})
			meth.comp += full[cls] - asSlice(kept[2*mi])[cls]
			meth.suf += full[cls] - asSlice(kept[2*mi+1])[cls]
		}
	}
	out := &Rationales{}
	if len(methods[0].instances) == 0 {
		return out, nil
	}
	out.Instances = len(methods[0].instances)
	for _, meth := range methods {
		p, r, f := metrics.TokenPRF(meth.instances)
		topk := make([]metrics.RationaleInstance, len(meth.instances))
		for j, x := range meth.instances {
			k := 0
			for _, g := range x.Gold {
				if g {
					k++
				}
			}
			topk[j] = metrics.RationaleInstance{Gold: x.Gold, Weight: x.Weight, Picked: metrics.TopK(x.Weight, k)}
		}
		tp, tr, tf := metrics.TokenPRF(topk)
		n := float64(len(meth.instances))
		out.Methods = append(out.Methods, RationaleScores{
			Method: meth.name, Precision: p, Recall: r, F1: f, TopKPrecision: tp, TopKRecall: tr, TopKF1: tf,
			AUPRC: metrics.MeanAUPRC(meth.instances), HitAt1: metrics.HitAt1(meth.instances),
			Comprehensiveness: meth.comp / n, Sufficiency: meth.suf / n,
		})
	}
	return out, nil
}

// notInPremise is the cheap baseline: weight 1 for each hypothesis word (not punctuation) whose
// lowercase form is not a word of the premise.
func notInPremise(premise, hypothesis string, words []nli.WordWeight) []float64 {
	seen := map[string]bool{}
	for _, sp := range spaceWords(premise) {
		seen[normWord(premise[sp.Start:sp.End])] = true
	}
	out := make([]float64, len(words))
	for i, w := range words {
		s := hypothesis[w.Start:w.End]
		if !textpos.OnlyPunct(s) && !seen[normWord(s)] {
			out[i] = 1
		}
	}
	return out
}

func pickPositive(w []float64) []bool {
	out := make([]bool, len(w))
	for i, x := range w {
		out[i] = x > 0
	}
	return out
}

func asSlice(p nli.Probs) []float64 { return []float64{p.Contradiction, p.Entailment, p.Neutral} }

func argmax(v []float64) int {
	best := 0
	for i := range v {
		if v[i] > v[best] {
			best = i
		}
	}
	return best
}
