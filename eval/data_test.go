package eval

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The readers on excerpts of the open sets (testdata/SOURCES.md names each source).

func goldText(it Item) []string {
	var out []string
	for _, g := range it.Gold {
		out = append(out, it.Hypothesis[g.Start:g.End])
	}
	return out
}

func TestReadSNLI(t *testing.T) {
	items, err := ReadSNLI("testdata/snli", "test", false)
	require.NoError(t, err)
	require.Len(t, items, 5)
	assert.Equal(t, "This church choir sings to the masses as they sing joyous songs from the book at a church.", items[0].Premise, "tokenisation undone")
	assert.Equal(t, "neutral", items[0].Label)
	assert.Equal(t, "snli-test:1", items[0].Source)
	assert.Equal(t, "snli-test:5", items[4].Source, "the fifth line of the excerpt")
	f, err := DetectFormat("testdata/snli")
	require.NoError(t, err)
	assert.Equal(t, FormatSNLI, f)
	byFile, err := ReadSNLI("testdata/snli/s1.test", "", false)
	require.NoError(t, err)
	assert.Equal(t, items, byFile, "a file of the split names the split")
}

func TestReadESNLIGold(t *testing.T) {
	items, err := ReadESNLI("testdata/esnli.csv")
	require.NoError(t, err)
	require.Len(t, items, 3)
	// Row 1: one annotator marked "lunch." (punctuation not gold); others "sisters", "hugging", ...
	assert.Contains(t, goldText(items[0]), "lunch")
	assert.Contains(t, goldText(items[0]), "sisters")
	assert.NotContains(t, goldText(items[0]), "lunch.")
	// Row 3 (contradiction): "men" and "fighting" marked by the first annotator.
	assert.Equal(t, "contradiction", items[2].Label)
	assert.Subset(t, goldText(items[2]), []string{"men", "fighting"})
}

func TestReadBreakingGold(t *testing.T) {
	all, err := ReadBreaking("testdata/breaking.jsonl", false)
	require.NoError(t, err)
	require.Len(t, all, 4)
	assert.Equal(t, []string{"red"}, goldText(all[0]), "the substituted colour")
	assert.Equal(t, []string{"little"}, goldText(all[1]))
	assert.Equal(t, []string{"far", "away", "from"}, goldText(all[2]), "a phrase for a word")
	assert.Equal(t, []string{"10"}, goldText(all[3]))
	held, err := ReadBreaking("testdata/breaking.jsonl", true)
	require.NoError(t, err)
	assert.Len(t, held, 2, "colors and cardinals are held out; synonyms and antonyms trained on")
}

func TestReadTaxiNLI(t *testing.T) {
	items, err := ReadTaxiNLI("testdata/taxinli.tsv", false)
	require.NoError(t, err)
	require.Len(t, items, 3)
	assert.Equal(t, `"You're not going to marry him, do you hear?" he said dictatorially.`, items[2].Premise, "second quoting layer removed")
	assert.Equal(t, "mnli:132042e", items[2].Source)
	// The held-out rule (SHA-256 of the pairID) agrees with scripts/train/nli_data.py's mnli_held_out,
	// which gave True, False, False, False, True for these ids.
	ids := []string{"53438c", "26374e", "132042e", "10000n", "3c"}
	var got []bool
	for _, id := range ids {
		got = append(got, MNLIHeldOut(id))
	}
	assert.Equal(t, []bool{true, false, false, false, true}, got)
	held, err := ReadTaxiNLI("testdata/taxinli.tsv", true)
	require.NoError(t, err)
	require.Len(t, held, 1)
	assert.Equal(t, "mnli:53438c", held[0].Source)
}

func TestReadPairs(t *testing.T) {
	items, err := ReadPairs("testdata/pairs.jsonl")
	require.NoError(t, err)
	require.Len(t, items, 3)
	assert.Equal(t, []string{"never"}, goldText(items[0]), "culprit words match without case")
	assert.Equal(t, []string{"Zürich"}, goldText(items[1]), "code-point spans over non-ASCII text")
	assert.Equal(t, "testdata/pairs.jsonl:4", items[2].Source, "blank lines still count")
	_, err = ReadPairs("testdata/bad-span.jsonl")
	assert.EqualError(t, err, "testdata/bad-span.jsonl:1: culprit_spans: [0, 5] is not a range of the hypothesis (1 characters)")
}
