package gainsay_test

import (
	"fmt"
	"log"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

// Check a reply against a profile: the verdict, the fact it contradicts and the words to blame. The
// model here is nli's tiny test model (its contradiction logit counts "never"); use builtin.Open or
// nli.OpenDir for a real one.
func ExampleChecker_Check() {
	model, err := nli.OpenDir("nli/testdata/tiny-wordpiece", nli.Options{})
	if err != nil {
		log.Fatal(err)
	}
	defer model.Close()
	prof, err := profile.ParseProfile("maren.yaml", []byte(`
character: maren
facts:
  - id: swim
    text: I swim in the sea every morning.
`), profile.FormatYAML)
	if err != nil {
		log.Fatal(err)
	}
	c := &gainsay.Checker{Scorer: &nli.Scorer{Model: model}}
	records, _ := c.Check(prof, []gainsay.Reply{{ID: "s1", Text: "Good morning! I have never seen the sea."}})
	for _, r := range records {
		fmt.Println(r.ID, r.Verdict)
		for _, f := range r.Findings {
			fmt.Printf("  against %s: %q, blame %q\n", f.FactID, f.Sentence.Text, f.Spans[0].Text)
		}
	}
	// Output:
	// s1 contradiction
	//   against swim: "I have never seen the sea.", blame "never"
}
