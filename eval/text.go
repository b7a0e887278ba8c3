package eval

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"
)

// WriteText prints a report as aligned tables for a terminal.
func WriteText(w io.Writer, r *Report) error {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	c := r.Classification
	fmt.Fprintf(tw, "items\t%d\n", r.Items)
	fmt.Fprintf(tw, "accuracy\t%.4f\n", c.Accuracy)
	fmt.Fprintf(tw, "macro F1\t%.4f\n", c.MacroF1)
	fmt.Fprintf(tw, "ECE (10 bins)\t%.4f\n\n", c.ECE)
	fmt.Fprintln(tw, "class\tprecision\trecall\tF1\tsupport")
	for _, row := range c.PerClass {
		fmt.Fprintf(tw, "%s\t%.4f\t%.4f\t%.4f\t%d\n", row.Label, row.Precision, row.Recall, row.F1, row.Support)
	}
	fmt.Fprintf(tw, "\nconfusion (rows: true, columns: predicted)\n\t%s\n", strings.Join(c.Labels, "\t"))
	for i, row := range c.Confusion {
		cells := make([]string, len(row))
		for j, v := range row {
			cells[j] = fmt.Sprint(v)
		}
		fmt.Fprintf(tw, "%s\t%s\n", c.Labels[i], strings.Join(cells, "\t"))
	}
	t := r.Contradiction
	fmt.Fprintf(tw, "\ncontradiction threshold sweep (average precision %.4f)\nthreshold\tprecision\trecall\tF1\tflagged\n", t.AveragePrecision)
	for _, p := range t.Sweep {
		fmt.Fprintf(tw, "%.2f\t%.4f\t%.4f\t%.4f\t%d\n", p.Threshold, p.Precision, p.Recall, p.F1, p.Flagged)
	}
	if t.TargetPrecision > 0 {
		if t.AtTarget == nil {
			fmt.Fprintf(tw, "\nno threshold reaches precision %.2f\n", t.TargetPrecision)
		} else {
			a := t.AtTarget
			fmt.Fprintf(tw, "\nfor precision >= %.2f use --threshold %.4f (precision %.4f, recall %.4f)\n", t.TargetPrecision, a.Threshold, a.Precision, a.Recall)
		}
	}
	if ra := r.Rationales; ra != nil {
		fmt.Fprintf(tw, "\nrationales (%d gold-contradiction items with gold words)\n", ra.Instances)
		fmt.Fprintln(tw, "method\tP\tR\tF1\ttop-k P\ttop-k R\ttop-k F1\tAUPRC\thit@1\tcompr.\tsuff.")
		for _, m := range ra.Methods {
			fmt.Fprintf(tw, "%s\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\n", m.Method, m.Precision, m.Recall, m.F1,
				m.TopKPrecision, m.TopKRecall, m.TopKF1, m.AUPRC, m.HitAt1, m.Comprehensiveness, m.Sufficiency)
		}
	}
	if ps := r.Persona; ps != nil {
		fmt.Fprintf(tw, "\nfound contradictions\t%d\n", ps.Found)
		fmt.Fprintf(tw, "heaviest span on a gold word\t%.3f\n", ps.HeaviestSpanHit)
		fmt.Fprintf(tw, "top finding on a gold fact\t%.3f\n", ps.TopFindingOnGoldFact)
		fmt.Fprintf(tw, "findings against other facts\t%d\n", ps.OffFactFindings)
		fmt.Fprintf(tw, "spans of function words only\t%d\n", ps.FunctionWordSpans)
		fmt.Fprintf(tw, "pairs read / skipped by relevance\t%d / %d\n", ps.Pairs, ps.SkippedPairs)
		for _, m := range ps.Misses {
			fmt.Fprintf(tw, "missed\t%s\n", m)
		}
		for _, m := range ps.FalseFlags {
			fmt.Fprintf(tw, "false flag\t%s\n", m)
		}
	}
	fmt.Fprintln(tw, "\nThese figures describe this data only; automatic judgements are sometimes wrong.")
	return tw.Flush()
}
