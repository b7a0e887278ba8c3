"""Reference values for internal/metrics from scikit-learn and statsmodels.

Fixed inputs (numpy seed 20261201) go through the reference functions:
  * sklearn.metrics.confusion_matrix, precision_recall_fscore_support (zero_division=0), accuracy_score
  * sklearn.metrics.average_precision_score
  * statsmodels.stats.proportion.proportion_confint(method="wilson")
  * statsmodels.stats.proportion.confint_proportions_2indep(compare="diff", method="newcomb")
and the inputs with the results are written to internal/metrics/testdata/reference.json, which the Go
tests read.

    python scripts/reference/metrics_reference.py          # (re)write the file
    python scripts/reference/metrics_reference.py --check  # fail if the committed file differs
"""
from __future__ import annotations

import argparse
import json
import math
import os
import sys

import numpy as np
from sklearn.metrics import accuracy_score, average_precision_score, confusion_matrix, precision_recall_fscore_support
from statsmodels.stats.proportion import confint_proportions_2indep, proportion_confint

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "internal", "metrics", "testdata", "reference.json")


def build() -> dict:
    rng = np.random.default_rng(20261201)
    cases = {}
    # Three-class predictions, one class never predicted (zero_division) and scores with ties.
    truth = rng.integers(0, 3, 200)
    pred = np.where(rng.random(200) < 0.7, truth, rng.integers(0, 2, 200))
    p, r, f, s = precision_recall_fscore_support(truth, pred, labels=[0, 1, 2], zero_division=0)
    cases["classification"] = {
        "truth": truth.tolist(), "pred": pred.tolist(),
        "confusion": confusion_matrix(truth, pred, labels=[0, 1, 2]).tolist(),
        "accuracy": accuracy_score(truth, pred),
        "precision": p.tolist(), "recall": r.tolist(), "f1": f.tolist(), "support": s.tolist(),
    }
    ap = []
    for n, ties in ((50, False), (120, True), (7, True)):
        y = (rng.random(n) < 0.4).astype(int)
        score = rng.random(n)
        if ties:
            score = np.round(score, 1)
        ap.append({"truth": y.tolist(), "score": score.tolist(), "ap": average_precision_score(y, score)})
    cases["average_precision"] = ap
    wilson = []
    for k, n in ((0, 10), (3, 10), (10, 10), (81, 263), (1, 1)):
        lo, hi = proportion_confint(k, n, alpha=0.05, method="wilson")
        wilson.append({"k": k, "n": n, "low": lo, "high": hi})
    cases["wilson"] = wilson
    newcombe = []
    for k1, n1, k2, n2 in ((56, 70, 48, 80), (9, 10, 3, 10), (0, 25, 4, 25), (120, 400, 95, 410)):
        lo, hi = confint_proportions_2indep(k1, n1, k2, n2, compare="diff", method="newcomb", alpha=0.05)
        newcombe.append({"k1": k1, "n1": n1, "k2": k2, "n2": n2, "low": lo, "high": hi})
    cases["newcombe"] = newcombe
    return cases


def canonical(d) -> str:
    def fix(x):
        if isinstance(x, float):
            return round(x, 12) if math.isfinite(x) else None
        if isinstance(x, dict):
            return {k: fix(v) for k, v in x.items()}
        if isinstance(x, list):
            return [fix(v) for v in x]
        if isinstance(x, (np.integer,)):
            return int(x)
        if isinstance(x, (np.floating,)):
            return fix(float(x))
        return x
    return json.dumps(fix(d), indent=1) + "\n"


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--check", action="store_true")
    args = ap.parse_args()
    text = canonical(build())
    if args.check:
        with open(OUT, encoding="utf-8") as f:
            if f.read() != text:
                print(f"{OUT}: differs from what scikit-learn and statsmodels compute now", file=sys.stderr)
                return 1
        return 0
    with open(OUT, "w", encoding="utf-8") as f:
        f.write(text)
    print("->", os.path.normpath(OUT))
    return 0


if __name__ == "__main__":
    sys.exit(main())
