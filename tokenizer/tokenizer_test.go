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

func TestUnsupportedComponentsNamed(t *testing.T) {
	wp := `"model":{"type":"WordPiece","unk_token":"[UNK]","vocab":{"[UNK]":0,"a":1}}`
	cases := []struct{ json, want string }{
		{`{` + wp + `,"pre_tokenizer":{"type":"UnicodeScripts"}}`, `pre_tokenizer (UnicodeScripts): pre_tokenizer type "UnicodeScripts" is not supported`},
		{`{` + wp + `,"pre_tokenizer":{"type":"Sequence","pretokenizers":[{"type":"Whitespace"},{"type":"Split","pattern":{"Regex":"a"},"behavior":"Sideways","invert":false}]}}`,
			`pre_tokenizer.pretokenizers[1] (Split): split behavior "Sideways" is not supported`},
		{`{` + wp + `,"normalizer":{"type":"NFC","extra":1}}`, `normalizer (NFC): unknown field "extra"`},
		{`{` + wp + `,"normalizer":{"type":"Sequence","normalizers":[{"type":"Nmt"}]}}`, `normalizer.normalizers[0] (Nmt): normalizer type "Nmt" is not supported`},
		{`{"model":{"type":"BPE","dropout":0.1,"vocab":{},"merges":[]}}`, `model (BPE): dropout 0.1 is not supported`},
		{`{"model":{"type":"Unigram","unk_id":0,"vocab":[["<unk>",0]],"byte_fallback":true}}`, `model (Unigram): byte_fallback with a Unigram model is not supported`},
		{`{` + wp + `,"post_processor":{"type":"Sequence","processors":[{"type":"Mystery"}]}}`, `post_processor.processors[0] (Mystery): post_processor type "Mystery" is not supported`},
		{`{` + wp + `,"decoder":{"type":"CTC"}}`, `decoder (CTC): decoder type "CTC" is not supported`},
	}
	for _, c := range cases {
		_, err := Load([]byte(c.json))
		assert.ErrorContains(t, err, c.want)
	}
}

func TestDecode(t *testing.T) {
	// Round trips through each layout's decoder (the reference decodes these texts back unchanged).
	for _, fam := range []string{"bpe", "splitbpe", "splitbpe-nfc", "spbpe", "metaspace-bpe"} {
		tk, err := LoadFile("testdata/tokenizers/" + fam + "/tokenizer.json")
		require.NoError(t, err)
		for _, s := range []string{"I have never seen the sea.", "Zoë’s café 🌊 東京"} {
			pieces, err := tk.EncodeText(s)
			require.NoError(t, err)
			ids := make([]int, len(pieces))
			for i, p := range pieces {
				ids[i] = p.ID
			}
			assert.Equal(t, s, tk.Decode(ids), fam)
		}
	}
}

func TestEncodeTextMatchesAddedTokens(t *testing.T) {
	tk, err := LoadFile("testdata/tokenizers/splitbpe-nfc/tokenizer.json")
	require.NoError(t, err)
	s := "<|im_start|>user\nHi<|im_end|>"
	pieces, err := tk.EncodeText(s)
	require.NoError(t, err)
	assert.Equal(t, "<|im_start|>", tk.Token(pieces[0].ID))
	assert.Equal(t, Piece{ID: pieces[0].ID, Start: 0, End: 12}, pieces[0])
	assert.Equal(t, "<|im_end|>", tk.Token(pieces[len(pieces)-1].ID))
	plain, err := tk.Tokenize(s)
	require.NoError(t, err)
	assert.Greater(t, len(plain), len(pieces), "Tokenize encodes added tokens as text")
}
