package nli

import (
	"fmt"
	"strings"
)

// Label is one of the three NLI labels.
type Label int

// The labels, in the order of Probs' fields.
const (
	Contradiction Label = iota
	Entailment
	Neutral
)

// Labels are the three labels, in the order of Probs' fields.
func Labels() []Label { return []Label{Contradiction, Entailment, Neutral} }

// String is the label's name in lower case, as config.json and the data sets write it.
func (l Label) String() string {
	switch l {
	case Contradiction:
		return "contradiction"
	case Entailment:
		return "entailment"
	case Neutral:
		return "neutral"
	}
	return fmt.Sprintf("Label(%d)", int(l))
}

// ParseLabel reads a label name, in any case, with surrounding space ignored.
func ParseLabel(s string) (Label, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "contradiction":
		return Contradiction, nil
	case "entailment":
		return Entailment, nil
	case "neutral":
		return Neutral, nil
	}
	return 0, fmt.Errorf("%q is not contradiction, entailment or neutral", s)
}

// Probs are the three NLI probabilities of one pair.
type Probs struct {
	Contradiction float64 `json:"contradiction"`
	Entailment    float64 `json:"entailment"`
	Neutral       float64 `json:"neutral"`
}

// Of returns the probability of l.
func (p Probs) Of(l Label) float64 {
	switch l {
	case Contradiction:
		return p.Contradiction
	case Entailment:
		return p.Entailment
	}
	return p.Neutral
}

// Best is the most probable label (the first of equals, in Labels order).
func (p Probs) Best() Label {
	best := Contradiction
	for _, l := range Labels() {
		if p.Of(l) > p.Of(best) {
			best = l
		}
	}
	return best
}
