// Package profile owns gainsay's inputs and outputs: character profiles (facts), reply batches, their
// validation with file:line:field errors, sentence splitting, the check pipeline that scores every
// (fact, reply sentence) pair and turns contradictions into token-level penalty spans, and the record
// schema with its JSON Lines reader and writer. It knows nothing of the command line or HTTP.
package profile
