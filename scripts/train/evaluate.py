"""Evaluate an exported model folder on the held-out data with the onnxruntime and tokenizers Python
packages, independently of gainsay's Go code. Its numbers go into the model card.

    python scripts/train/evaluate.py --model models/builtin --out models/builtin/eval.json [--persona runs/persona]

Per held-out set (nli_data.held_out_sets and persona_held_out_sets): accuracy, per-class
precision/recall/F1 and the confusion matrix (scikit-learn), ECE over 10 bins, and the contradiction
class's precision and recall, read one way (premise, then hypothesis) as NLI benchmarks are scored;
for DECODE, also the binary contradiction figures on its held-out contradictions against the made
non-contradictions, both one way and as gainsay reads pairs (both ways, the smaller contradiction
probability at or above 0.5). Probabilities use the temperature of config.json. With --sample it also
writes the fixed CI sample (every k-th pair of each set) with its own figures, which gainsay's Go test
repeats.
"""
from __future__ import annotations

import argparse
import json
import os

import numpy as np
import onnxruntime as ort
from sklearn.metrics import confusion_matrix, precision_recall_fscore_support
from tokenizers import Tokenizer

import nli_data

LABELS = ["contradiction", "entailment", "neutral"]


def load(model_dir: str):
    tk = Tokenizer.from_file(os.path.join(model_dir, "tokenizer.json"))
    tk.no_padding()
    tk.no_truncation()
    so = ort.SessionOptions()
    so.intra_op_num_threads = 2
    sess = ort.InferenceSession(os.path.join(model_dir, "model.onnx"), so, providers=["CPUExecutionProvider"])
    with open(os.path.join(model_dir, "config.json")) as f:
        cfg = json.load(f)
    id2label = {int(k): v.lower() for k, v in cfg["id2label"].items()}
    id2label["temperature"] = float(cfg.get("temperature", 1.0))
    return tk, sess, id2label


def predict(tk, sess, id2label, pairs, batch=32, max_len=512, logits_only=False):
    """Probabilities in LABELS order (logits with logits_only), the temperature of config.json
    applied. Pairs are encoded as gainsay does: premise cut first."""
    t = id2label.get("temperature", 1.0)
    labels = {k: v for k, v in id2label.items() if k != "temperature"}
    names = [i.name for i in sess.get_inputs()]
    out = np.zeros((len(pairs), 3))
    order = sorted(range(len(pairs)), key=lambda i: len(pairs[i].premise) + len(pairs[i].hypothesis))
    for s in range(0, len(order), batch):
        idx = order[s : s + batch]
        encs = [tk.encode(pairs[i].premise, pairs[i].hypothesis) for i in idx]
        width = max(len(e.ids) for e in encs)
        feed = {n: np.zeros((len(idx), width), dtype=np.int64) for n in names}
        for r, e in enumerate(encs):
            n = len(e.ids)
            feed["input_ids"][r, :n] = e.ids
            feed["attention_mask"][r, :n] = 1
            if "token_type_ids" in feed:
                feed["token_type_ids"][r, :n] = e.type_ids
        logits = sess.run(None, feed)[0].astype(np.float64)
        if not logits_only:
            logits = logits / t
            z = np.exp(logits - logits.max(-1, keepdims=True))
            logits = z / z.sum(-1, keepdims=True)
        for r, i in enumerate(idx):
            out[i] = [logits[r][[k for k, v in labels.items() if v == lab][0]] for lab in LABELS]
    return out


def ece(probs, y, bins=10) -> float:
    """Expected calibration error of the predicted class's probability, equal-width bins."""
    conf = probs.max(-1)
    right = probs.argmax(-1) == np.array(y)
    total = 0.0
    for b in range(bins):
        lo, hi = b / bins, (b + 1) / bins
        m = (conf > lo) & (conf <= hi) if b else (conf >= lo) & (conf <= hi)
        if m.any():
            total += m.mean() * abs(right[m].mean() - conf[m].mean())
    return float(total)


def binary(truth: list[bool], pred: list[bool]) -> dict:
    p, r, f, _ = precision_recall_fscore_support(truth, pred, average="binary", zero_division=0)
    return {"pairs": len(truth), "contradictions": int(sum(truth)), "precision": float(p), "recall": float(r), "f1": float(f)}


def decode_binary(tk, sess, id2label, sets) -> dict:
    """DECODE held-out contradictions against the made and the real non-contradictions."""
    pairs = sets["decode-held-out"] + sets["decode-held-out-unrelated"] + sets["decode-held-out-consistent"]
    truth = [p.label == "contradiction" for p in pairs]
    fwd = predict(tk, sess, id2label, pairs)
    rev = predict(tk, sess, id2label, [nli_data.Pair(p.hypothesis, p.premise, p.label, p.source) for p in pairs])
    both = np.minimum(fwd[:, 0], rev[:, 0])
    real = len(sets["decode-held-out"]) + len(sets["decode-held-out-unrelated"])
    return {"one_way_argmax": binary(truth, list(fwd.argmax(-1) == 0)),
            "both_ways_at_0.5": binary(truth, list(both >= 0.5)),
            "real_non_contradictions_flagged_both_ways": float((both[real:] >= 0.5).mean())}


def figures(pairs, probs) -> dict:
    y = [LABELS.index(p.label) for p in pairs]
    pred = probs.argmax(-1).tolist()
    p, r, f, s = precision_recall_fscore_support(y, pred, labels=[0, 1, 2], zero_division=0)
    return {
        "pairs": len(pairs),
        "accuracy": float(np.mean(np.array(y) == np.array(pred))),
        "ece_10_bins": ece(probs, y),
        "per_class": {LABELS[k]: {"precision": float(p[k]), "recall": float(r[k]), "f1": float(f[k]), "support": int(s[k])}
                      for k in range(3)},
        "confusion": confusion_matrix(y, pred, labels=[0, 1, 2]).tolist(),
    }


# Sets whose licence does not let rows be copied into the project's testdata (ANLI: CC BY-NC 4.0, for
# evaluation only): measured, never sampled for CI.
NOT_COPIED = {"anli-test"}


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--model", required=True)
    ap.add_argument("--out", required=True)
    ap.add_argument("--sample", help="also write the fixed CI sample (JSON Lines) here")
    ap.add_argument("--sample-out", help="the sample's figures (JSON)")
    ap.add_argument("--sample-size", type=int, default=200, help="pairs per set in the CI sample")
    ap.add_argument("--persona", help="persona_pairs.py output folder: also its heldout.jsonl")
    args = ap.parse_args()
    tk, sess, id2label = load(args.model)
    sets = nli_data.held_out_sets() | nli_data.persona_held_out_sets(
        os.path.join(args.persona, "heldout.jsonl") if args.persona else None)
    result = {}
    for name, pairs in sets.items():
        probs = predict(tk, sess, id2label, pairs)
        result[name] = figures(pairs, probs)
        print(name, json.dumps({k: result[name][k] for k in ("pairs", "accuracy", "ece_10_bins")}), flush=True)
    result["decode-held-out-binary"] = decode_binary(tk, sess, id2label, sets)
    print("decode-held-out-binary", json.dumps(result["decode-held-out-binary"]), flush=True)
    with open(args.out, "w") as f:
        json.dump(result, f, indent=1)
        f.write("\n")
    if args.sample:
        rows, sample_result = [], {}
        for name, pairs in sets.items():
            if name in NOT_COPIED:
                continue
            step = max(1, len(pairs) // args.sample_size)
            part = pairs[::step][: args.sample_size]
            for p in part:
                rows.append({"set": name, "source": p.source, "premise": p.premise, "hypothesis": p.hypothesis, "label": p.label})
            sample_result[name] = figures(part, predict(tk, sess, id2label, part))
        with open(args.sample, "w", encoding="utf-8") as f:
            for r in rows:
                f.write(json.dumps(r, ensure_ascii=False) + "\n")
        with open(args.sample_out, "w") as f:
            json.dump(sample_result, f, indent=1)
            f.write("\n")


if __name__ == "__main__":
    main()
