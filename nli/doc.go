// Package nli runs natural language inference cross-encoders (contradiction / entailment / neutral)
// exported to ONNX, on the CPU through ONNX Runtime, and finds the words of a hypothesis that drive a
// contradiction by leaving them out.
//
// A model folder holds model.onnx, tokenizer.json and config.json (id2label naming the three labels in
// any order; an optional calibration temperature). Open it with OpenDir (or builtin.Open for the
// shipped one), score pairs with a Scorer, and attribute the scored pairs it flags:
//
//	m, err := nli.OpenDir("models/my-nli", nli.Options{})
//	s := &nli.Scorer{Model: m}                      // both ways, the product's reading
//	scored, err := s.Score([]nli.Pair{{Premise: "I live on the coast.", Hypothesis: "I have never seen the sea."}})
//	attrs, err := s.Attribute(scored, nli.AttributionOptions{Phrases: true})
//
// Each pair is tokenised and run once: attribution builds its variants from the tokens Score kept and
// reuses the whole pair's probabilities. Batches are made of pairs of similar length and padded to
// their longest, in float32, so that batching changes no result. A Runner runs encoded pairs; Model is
// one, gainsay serve's batcher (which merges concurrent requests into shared runs) another.
package nli
