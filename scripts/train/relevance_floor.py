"""Choose the relevance floor of gainsay's retrieve-then-verify gate on training-side data.

    python scripts/train/relevance_floor.py --embedder models/builtin/relevance --persona runs/persona

A (fact, sentence) pair whose sentence-embedding cosine is below the floor is not given to the NLI
model: a sentence about something else cannot contradict the fact. The floor is chosen on pairs the
model trains on, never on the held-out sets: the largest floor (in steps of 0.01) that keeps at least
--keep of the contradictions of the persona pairs (persona_pairs.py train.jsonl) and of DECODE's training
fold. It prints the cosine percentiles per set, the chosen floor and the share of each set the floor
skips, with the onnxruntime and tokenizers Python packages (as gainsay computes it in Go).
"""
from __future__ import annotations

import argparse
import json
import os

import numpy as np
import onnxruntime as ort
from tokenizers import Tokenizer

import nli_data


def embedder(folder: str):
    tk = Tokenizer.from_file(os.path.join(folder, "tokenizer.json"))
    tk.no_padding()
    tk.enable_truncation(256)
    so = ort.SessionOptions()
    so.intra_op_num_threads = 2
    sess = ort.InferenceSession(os.path.join(folder, "model.onnx"), so, providers=["CPUExecutionProvider"])
    cache: dict[str, np.ndarray] = {}

    def embed(texts: list[str]) -> np.ndarray:
        todo = sorted({t for t in texts if t not in cache}, key=len)
        for s in range(0, len(todo), 64):
            batch = todo[s:s + 64]
            encs = [tk.encode(t) for t in batch]
            w = max(len(e.ids) for e in encs)
            feed = {n: np.zeros((len(batch), w), dtype=np.int64) for n in ("input_ids", "attention_mask", "token_type_ids")}
            for r, e in enumerate(encs):
                feed["input_ids"][r, :len(e.ids)] = e.ids
                feed["attention_mask"][r, :len(e.ids)] = 1
            for t, v in zip(batch, sess.run(["embedding"], feed)[0]):
                cache[t] = v
        return np.stack([cache[t] for t in texts])

    return embed


def cosines(embed, pairs) -> np.ndarray:
    if not pairs:
        return np.zeros(0)
    a = embed([p.premise for p in pairs])
    b = embed([p.hypothesis for p in pairs])
    return (a * b).sum(1)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--embedder", required=True)
    ap.add_argument("--persona", required=True, help="persona_pairs.py output folder")
    ap.add_argument("--keep", type=float, default=0.99)
    ap.add_argument("--out", help="write the figures as JSON here")
    args = ap.parse_args()
    embed = embedder(args.embedder)
    persona = nli_data.persona(os.path.join(args.persona, "train.jsonl"))
    dec = nli_data.decode(held_out=False)[::4]
    sets = {
        "persona contradiction": [p for p in persona if p.label == "contradiction"],
        "persona entailment": [p for p in persona if p.label == "entailment"],
        "persona neutral": [p for p in persona if p.label == "neutral"],
        "decode contradiction": dec,
        "decode unrelated": nli_data.decode_unrelated(dec),
        "prosecco consistent": nli_data.decode_consistent(held_out=False),
    }
    cos = {k: cosines(embed, v) for k, v in sets.items()}
    pos = np.concatenate([cos["persona contradiction"], cos["decode contradiction"]])
    floor = 0.0
    for f in np.arange(0.0, 1.0, 0.01):
        if (pos >= f).mean() >= args.keep:
            floor = round(float(f), 2)
    report = {"floor": floor, "keep": args.keep, "sets": {}}
    for k, v in cos.items():
        report["sets"][k] = {"pairs": int(len(v)), "percentiles_5_25_50_75_95": [round(float(x), 3) for x in np.percentile(v, [5, 25, 50, 75, 95])],
                             "skipped_at_floor": round(float((v < floor).mean()), 4)}
    print(json.dumps(report, indent=1))
    if args.out:
        with open(args.out, "w") as f:
            json.dump(report, f, indent=1)
            f.write("\n")


if __name__ == "__main__":
    main()
