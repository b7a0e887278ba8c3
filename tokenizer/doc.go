// Package tokenizer reads a Hugging Face tokenizer.json and encodes text exactly as the reference
// (the `tokenizers` Rust library and its Python package) does: the same token ids and the same offsets.
//
// It is organised as tokenizer.json is. Each of the five components is a small interface with one
// type per configuration the file can name, each parsed from its JSON object into a typed struct;
// unknown fields and unsupported settings are errors that name the component, so a file this package
// cannot reproduce is refused rather than encoded differently:
//
//   - normalizer (normalizer.go): rewrites the text, keeping for every character the range of the
//     original text it came from;
//   - pre-tokenizer (pretokenizer.go): cuts the normalised text into words;
//   - model (wordpiece.go, bpe.go, unigram.go): turns each word into tokens;
//   - post-processor (postprocessor.go): special tokens around one or two sequences, offset trimming;
//   - decoder (decoder.go): tokens back to text.
//
// Offsets are UTF-8 byte ranges of the original text; text.go is the one place that maps them.
//
// Why not github.com/sugarme/tokenizer, which reads the same files: its normalisers differ from the
// reference (BertNormalizer strips accents without decomposing first, so "Zürich" becomes [UNK];
// Precompiled panics on combining marks), its BPE has neither byte fallback nor ignore_merges, and its
// Split pre-tokenizer runs on Go's regexp, which has no look-ahead. Each of those sits deep in its
// pipeline, so the pipeline is written here, component by component, against the reference's source
// and checked against the reference package by the parity tests; only the SentencePiece character-map
// parser (spm) is taken from it. Patterns run on github.com/dlclark/regexp2, whose syntax has the
// look-ahead that today's pre-tokenizer patterns use.
//
// Not done, deliberately: added tokens written literally in a text are encoded as text, not as the
// added token (a reply cannot inject a separator); dropout must be null.
package tokenizer
