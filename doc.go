// Package gainsay finds where a character chat model's replies contradict its character profile, and
// which words are to blame, so that unlikelihood training can push exactly those tokens down.
//
// A Checker splits each reply into sentences, scores every (fact, sentence) pair with an NLI model
// (package nli), flags the pairs whose contradiction probability reaches the threshold, and for each
// finds the words that drive it by leaving them out one at a time. It writes one Record per reply:
//
//	model, err := nli.OpenDir("models/my-nli", nli.Options{}) // or builtin.Open
//	if err != nil { ... }
//	defer model.Close()
//	prof, err := profile.ReadProfile("maren.yaml", profile.FormatAuto)
//	if err != nil { ... }
//	c := &gainsay.Checker{Scorer: &nli.Scorer{Model: model}}
//	records, stats := c.Check(prof, []gainsay.Reply{{ID: "s1", Text: "I have never seen the sea."}})
//	for _, f := range records[0].Findings { fmt.Println(f.FactID, f.Spans) }
//
// Checker.Run does the same for a stream (a ReplyReader in, a RecordWriter out, chunk by chunk, so
// memory stays bounded); RecordReader reads records back.
//
// Why the design is so. This package is the library and holds what every use shares: the check and
// the record schema, which eval, compare, align, report and serve all read or write. The model is a
// value that a caller opens and closes, not a global; the one process-wide thing is the ONNX Runtime
// environment, which nli loads once. The extension point is small: nli.Runner, which runs encoded
// pairs, is how gainsay serve merges the work of concurrent requests into shared ONNX Runtime runs;
// a test can put anything there. Input formats are here (replies, records) and in package profile
// (profiles); helpers that no other program needs live under internal/.
//
// gainsay judges text automatically and is sometimes wrong: it ranks and localises likely
// contradictions for training; it is no safety filter and no substitute for human review.
package gainsay
