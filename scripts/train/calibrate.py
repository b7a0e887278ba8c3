"""Fit the calibration temperature of an exported model and write it into its config.json.

    python scripts/train/calibrate.py --model models/builtin

One scalar T divides the logits (temperature scaling; Guo, Pleiss, Sun, Weinberger 2017, "On
Calibration of Modern Neural Networks"), chosen to minimise the negative log-likelihood on pairs the
model never trained on and that no held-out figure uses: the dev splits of counterfactual SNLI and of
dialogue NLI (nli_data.calibration_pairs). The argmax does not change, so accuracy does not either.
"""
from __future__ import annotations

import argparse
import json
import os

import numpy as np

import nli_data
from evaluate import LABELS, load, predict


def nll(logits: np.ndarray, y: np.ndarray, t: float) -> float:
    z = logits / t
    z = z - z.max(-1, keepdims=True)
    logp = z - np.log(np.exp(z).sum(-1, keepdims=True))
    return float(-logp[np.arange(len(y)), y].mean())


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--model", required=True)
    args = ap.parse_args()
    tk, sess, id2label = load(args.model)
    pairs = nli_data.calibration_pairs()
    logits = predict(tk, sess, id2label, pairs, logits_only=True)
    y = np.array([LABELS.index(p.label) for p in pairs])
    ts = np.exp(np.linspace(np.log(0.25), np.log(8), 400))
    losses = [nll(logits, y, t) for t in ts]
    best = float(ts[int(np.argmin(losses))])
    path = os.path.join(args.model, "config.json")
    with open(path) as f:
        cfg = json.load(f)
    cfg["temperature"] = round(best, 4)
    cfg["calibration"] = {"pairs": len(pairs), "sets": ["cad_snli dev", "dialogue_bnc_nli dev"],
                          "nll_at_1": round(nll(logits, y, 1.0), 4), "nll": round(min(losses), 4)}
    with open(path, "w") as f:
        json.dump(cfg, f, indent=2)
        f.write("\n")
    print(json.dumps(cfg["calibration"] | {"temperature": cfg["temperature"]}))


if __name__ == "__main__":
    main()
