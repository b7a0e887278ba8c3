package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/models/builtin"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/relevance"
)

// checkFlags are the flags of every command that runs the check (check, eval on replies, serve).
type checkFlags struct {
	threshold     float64
	occlusion     string
	spanMin       float64
	spanRel       float64
	measure       string
	phrases       bool
	functionWords bool
	oneWay        bool
	relevance     float64
	relevanceTop  int
	encoder       string
	budget        int
}

func (f *checkFlags) register(c *cobra.Command) {
	def := gainsay.DefaultSpanRule()
	fl := c.Flags()
	fl.Float64Var(&f.threshold, "threshold", gainsay.DefaultThreshold, "contradiction probability at which a pair is flagged")
	fl.StringVar(&f.occlusion, "occlusion", string(nli.Delete), "how attribution leaves a word out: delete or mask")
	fl.StringVar(&f.measure, "span-weight", string(def.Measure), "what a span's weight reports: odds (the share of the contradiction odds that goes with it) or prob (the drop in probability)")
	fl.Float64Var(&f.spanMin, "span-min-drop", def.MinWeight, "least drop in contradiction probability for a word to be penalised")
	fl.Float64Var(&f.spanRel, "span-relative", def.Relative, "least share of the strongest word's drop for a word to be penalised")
	fl.BoolVar(&f.phrases, "phrases", def.Phrases, "also leave out every two adjacent words together")
	fl.BoolVar(&f.functionWords, "function-word-spans", def.FunctionWords, "let pronouns, articles, auxiliaries, prepositions and conjunctions be spans")
	fl.BoolVar(&f.oneWay, "one-way", false, "read each pair only as fact then sentence (no check that the contradiction holds both ways)")
	fl.Float64Var(&f.relevance, "relevance", builtin.DefaultRelevance, "least cosine similarity of fact and sentence for the pair to be read (0: read every pair)")
	fl.IntVar(&f.relevanceTop, "relevance-top", gainsay.DefaultRelevanceTop, "read at most this many facts per sentence, the most similar (0: no limit)")
	fl.StringVar(&f.encoder, "encoder", "", "sentence-encoder folder for the relevance gate (default: the built-in all-MiniLM-L6-v2)")
	fl.IntVar(&f.budget, "attribution-budget", gainsay.DefaultAttributionBudget, "model inputs spent on attributing one reply at most (its most probable finding always)")
}

// options are the check's options from the flags.
func (f *checkFlags) options(model string) (gainsay.Options, error) {
	how, err := nli.ParseOcclusion(f.occlusion)
	if err != nil {
		return gainsay.Options{}, unusable(err)
	}
	switch {
	case f.threshold <= 0 || f.threshold > 1:
		return gainsay.Options{}, unusable(fmt.Errorf("--threshold must be in (0, 1]"))
	case f.spanMin < 0 || f.spanMin > 1 || f.spanRel < 0 || f.spanRel > 1:
		return gainsay.Options{}, unusable(fmt.Errorf("--span-min-drop and --span-relative must be in [0, 1]"))
	case f.measure != string(gainsay.OddsShare) && f.measure != string(gainsay.ProbDrop):
		return gainsay.Options{}, unusable(fmt.Errorf("--span-weight %q: want odds or prob", f.measure))
	case f.relevance < 0 || f.relevance > 1 || f.relevanceTop < 0:
		return gainsay.Options{}, unusable(fmt.Errorf("--relevance must be in [0, 1] and --relevance-top at least 0"))
	case f.budget < 1:
		return gainsay.Options{}, unusable(fmt.Errorf("--attribution-budget must be at least 1"))
	}
	return gainsay.Options{
		Threshold: f.threshold, Occlusion: how, Model: model, Relevance: f.relevance, RelevanceTop: f.relevanceTop,
		AttributionBudget: f.budget,
		Spans: gainsay.SpanRule{MinWeight: f.spanMin, Relative: f.spanRel, Measure: gainsay.Measure(f.measure),
			Phrases: f.phrases, FunctionWords: f.functionWords},
	}, nil
}

// embedder opens the sentence encoder when the relevance gate is on (nil when it is off); close it.
func (f *checkFlags) embedder(c *cobra.Command) (*relevance.Embedder, error) {
	if f.relevance == 0 {
		return nil, nil
	}
	lib, _ := c.Flags().GetString("ort-lib")
	opts := relevance.Options{Library: lib}
	var e *relevance.Embedder
	var err error
	if f.encoder == "" {
		e, err = builtin.OpenRelevance(opts)
	} else {
		e, err = relevance.OpenDir(f.encoder, opts)
	}
	if err != nil {
		return nil, unusable(err)
	}
	return e, nil
}

// checker builds the check from the flags around an open model; the returned function closes the
// sentence encoder.
func (f *checkFlags) checker(c *cobra.Command, model *nli.Model, name string) (*gainsay.Checker, func(), error) {
	opts, err := f.options(name)
	if err != nil {
		return nil, nil, err
	}
	e, err := f.embedder(c)
	if err != nil {
		return nil, nil, err
	}
	ch := &gainsay.Checker{Scorer: &nli.Scorer{Model: model, OneWay: f.oneWay}, Options: opts}
	done := func() {}
	encoder := ""
	if e != nil {
		ch.Embedder, done, encoder = e, func() { e.Close() }, e.SHA256()
	}
	// What changes the records, so that a resumed run or a shard can be checked to belong.
	ch.RunID = gainsay.RunID(model.SHA256(), model.MaxLength(), encoder, opts, f.oneWay)
	return ch, done, nil
}
