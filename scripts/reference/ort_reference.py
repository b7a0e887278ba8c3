"""Reference probabilities from the onnxruntime Python package, for the logit parity test of the Go path.

For the built-in model (models/builtin) and nli's tiny test models, every pair of
tokenizer/testdata/parity/pairs.jsonl (SNLI test, MultiNLI, Breaking NLI and stress strings; see its
SOURCES.md) is encoded with the Hugging Face `tokenizers` package (padding and truncation off) and run
one pair at a time, so no padding is involved; softmax in float64 over the logits (divided by the
config's calibration temperature), mapped to labels
through config.json's id2label. The results go where MODELS says, beside each model's other test data.

    python scripts/reference/ort_reference.py          # (re)write
    python scripts/reference/ort_reference.py --check  # fail if the committed values differ by over 1e-5
"""
from __future__ import annotations

import argparse
import json
import os
import sys

import numpy as np
import onnxruntime as ort
from tokenizers import Tokenizer

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.normpath(os.path.join(HERE, "..", ".."))
PAIRS = os.path.join(ROOT, "tokenizer", "testdata", "parity", "pairs.jsonl")
MODELS = {
    "builtin": (os.path.join(ROOT, "models", "builtin"), os.path.join(ROOT, "models", "builtin", "testdata", "ort-reference.jsonl")),
    "tiny-wordpiece": (os.path.join(ROOT, "nli", "testdata", "tiny-wordpiece"), os.path.join(ROOT, "nli", "testdata", "tiny-wordpiece.ort-reference.jsonl")),
    "tiny-bpe": (os.path.join(ROOT, "nli", "testdata", "tiny-bpe"), os.path.join(ROOT, "nli", "testdata", "tiny-bpe.ort-reference.jsonl")),
}
LABELS = ("contradiction", "entailment", "neutral")


def reference(folder: str, pairs: list[dict]) -> list[dict]:
    tk = Tokenizer.from_file(os.path.join(folder, "tokenizer.json"))
    tk.no_padding()
    tk.no_truncation()
    so = ort.SessionOptions()
    so.intra_op_num_threads = 1
    sess = ort.InferenceSession(os.path.join(folder, "model.onnx"), so, providers=["CPUExecutionProvider"])
    names = [i.name for i in sess.get_inputs()]
    with open(os.path.join(folder, "config.json")) as f:
        cfg = json.load(f)
    id2label = {int(k): v.lower() for k, v in cfg["id2label"].items()}
    temperature = float(cfg.get("temperature", 1.0))  # the calibration gainsay applies
    out = []
    for p in pairs:
        e = tk.encode(p["premise"], p["hypothesis"])
        feed = {"input_ids": np.array([e.ids], dtype=np.int64), "attention_mask": np.ones((1, len(e.ids)), dtype=np.int64),
                "token_type_ids": np.array([e.type_ids], dtype=np.int64)}
        logits = sess.run(None, {n: feed[n] for n in names})[0][0].astype(np.float64) / temperature
        z = np.exp(logits - logits.max())
        prob = z / z.sum()
        out.append({"source": p["source"], "premise": p["premise"], "hypothesis": p["hypothesis"],
                    "probs": {lab: float(prob[[k for k, v in id2label.items() if v == lab][0]]) for lab in LABELS}})
    return out


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--check", action="store_true")
    ap.add_argument("--limit", type=int, default=120, help="pairs per model (the first N, then every stress pair)")
    args = ap.parse_args()
    with open(PAIRS, encoding="utf-8") as f:
        allpairs = [json.loads(x) for x in f]
    pairs = allpairs[: args.limit] + [p for p in allpairs[args.limit :] if p["source"].startswith("stress:")]
    bad = 0
    for name, (folder, out) in MODELS.items():
        if not os.path.exists(os.path.join(folder, "model.onnx")):
            continue
        got = reference(folder, pairs)
        if args.check:
            with open(out, encoding="utf-8") as f:
                want = [json.loads(x) for x in f]
            if len(want) != len(got) or any(
                w["source"] != g["source"] or any(abs(w["probs"][k] - g["probs"][k]) > 1e-5 for k in LABELS)
                for w, g in zip(want, got)
            ):
                print(f"{out}: differs from what onnxruntime computes now", file=sys.stderr)
                bad += 1
            continue
        os.makedirs(os.path.dirname(out), exist_ok=True)
        with open(out, "w", encoding="utf-8") as f:
            for g in got:
                f.write(json.dumps(g, ensure_ascii=False) + "\n")
        print(name, len(got), "->", out)
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
