package tokenizer

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestUnsupportedTokenizer(t *testing.T) {
	_, err := Load([]byte(`{"model":{"type":"Mystery"}}`))
	assert.ErrorContains(t, err, `model type "Mystery" is not supported`)
	_, err = Load([]byte(`not json`))
	assert.ErrorContains(t, err, "tokenizer.json")
}

func TestTokenizeConcurrently(t *testing.T) {
	// gainsay serve tokenises from many goroutines at once; run with -race to check.
	for _, fam := range []string{"wordpiece", "bpe", "unigram"} {
		tk := loadTokenizerFile(t, "testdata/tokenizers/"+fam+"/tokenizer.json")
		want, err := tk.Tokenize("I have never seen the sea, not once.")
		require.NoError(t, err)
		done := make(chan []Piece, 8)
		for g := 0; g < 8; g++ {
			go func() {
				var last []Piece
				for i := 0; i < 50; i++ {
					last, _ = tk.Tokenize("I have never seen the sea, not once.")
				}
				done <- last
			}()
		}
		for g := 0; g < 8; g++ {
			assert.Equal(t, want, <-done, fam)
		}
	}
}
