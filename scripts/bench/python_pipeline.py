"""A straightforward Python pipeline doing gainsay's judgement, for scripts/bench.sh to time gainsay
against: the tokenizers and onnxruntime Python packages, the same model folder, the same pairs.

    python scripts/bench/python_pipeline.py --model DIR --profile P.yaml --replies R.jsonl --threads 2 [--one-way] [--no-attribution]

Every (fact, sentence) pair (sentences split as gainsay does, approximately: on . ! ? followed by
space), read fact then sentence and, unless --one-way, sentence then fact (the smaller contradiction
probability counts); pairs at or above 0.5 are attributed by leaving each sentence word out, and each
two adjacent words, read fact then sentence (words: whitespace-separated, as a plain implementation
would). What it leaves out is the relevance gate: it reads every pair. Batches of 32, sorted by length
("length-sorted", the fair rival: unsorted batches pad more). Prints JSON: seconds, replies/s, model inputs, time in
ONNX Runtime's run, padding share.
"""
from __future__ import annotations

import argparse
import json
import os
import re
import time

import numpy as np
import onnxruntime as ort
from tokenizers import Tokenizer


def read_facts(path: str) -> list[str]:
    facts = []
    with open(path, encoding="utf-8") as f:
        for line in f:
            m = re.match(r"\s*(?:-\s*)?text:\s*(.+)$", line)
            if m:
                facts.append(m.group(1).strip())
    return facts


class Model:
    def __init__(self, folder: str, threads: int):
        self.tk = Tokenizer.from_file(os.path.join(folder, "tokenizer.json"))
        self.tk.no_padding()
        self.tk.no_truncation()
        so = ort.SessionOptions()
        so.intra_op_num_threads = threads
        so.inter_op_num_threads = 1
        self.sess = ort.InferenceSession(os.path.join(folder, "model.onnx"), so, providers=["CPUExecutionProvider"])
        self.names = [i.name for i in self.sess.get_inputs()]
        with open(os.path.join(folder, "config.json")) as f:
            cfg = json.load(f)
        labels = {v.lower(): int(k) for k, v in cfg["id2label"].items()}
        self.c = labels["contradiction"]
        self.temperature = cfg.get("temperature", 1.0)
        self.inputs = 0
        self.run_seconds = 0.0
        self.tokens = 0
        self.padded = 0

    def contradiction(self, pairs: list[tuple[str, str]]) -> np.ndarray:
        out = np.zeros(len(pairs))
        encs = [self.tk.encode(a, b) for a, b in pairs]
        order = sorted(range(len(pairs)), key=lambda i: len(encs[i].ids))
        for s in range(0, len(order), 32):
            idx = order[s:s + 32]
            w = max(len(encs[i].ids) for i in idx)
            feed = {n: np.zeros((len(idx), w), dtype=np.int64) for n in self.names}
            for r, i in enumerate(idx):
                e = encs[i]
                n = len(e.ids)
                feed["input_ids"][r, :n] = e.ids
                feed["attention_mask"][r, :n] = 1
                if "token_type_ids" in feed:
                    feed["token_type_ids"][r, :n] = e.type_ids
                self.tokens += n
            self.padded += len(idx) * w
            t0 = time.perf_counter()
            logits = self.sess.run(None, feed)[0].astype(np.float64) / self.temperature
            self.run_seconds += time.perf_counter() - t0
            self.inputs += len(idx)
            z = np.exp(logits - logits.max(-1, keepdims=True))
            p = z / z.sum(-1, keepdims=True)
            out[idx] = p[:, self.c]
        return out


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--model", required=True)
    ap.add_argument("--profile", required=True)
    ap.add_argument("--replies", required=True)
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--one-way", action="store_true")
    ap.add_argument("--no-attribution", action="store_true")
    args = ap.parse_args()
    model = Model(args.model, args.threads)
    facts = read_facts(args.profile)
    with open(args.replies, encoding="utf-8") as f:
        replies = [json.loads(x)["text"] for x in f if x.strip()]
    t0 = time.perf_counter()
    pairs = []
    for r in replies:
        for s in re.split(r"(?<=[.!?])\s+", r.strip()):
            if s:
                pairs += [(fact, s) for fact in facts]
    p = model.contradiction(pairs)
    if not args.one_way:
        p = np.minimum(p, model.contradiction([(b, a) for a, b in pairs]))
    flagged = [i for i in range(len(pairs)) if p[i] >= 0.5]
    if not args.no_attribution and flagged:
        # Each variant is read fact then sentence, as gainsay attributes.
        variants = []
        for i in flagged:
            fact, sent = pairs[i]
            words = sent.split()
            for k in range(len(words)):
                v = " ".join(words[:k] + words[k + 1:])
                variants.append((fact, v))
            for k in range(len(words) - 1):  # and every two adjacent words, as gainsay's phrases
                v = " ".join(words[:k] + words[k + 2:])
                variants.append((fact, v))
        model.contradiction(variants)  # timed and counted; the weights themselves are not needed here
    seconds = time.perf_counter() - t0
    print(json.dumps({"seconds": seconds, "replies_per_s": len(replies) / seconds, "pairs": len(pairs),
                      "flagged": len(flagged), "inputs": model.inputs, "run_seconds": model.run_seconds,
                      "padding_share": 1 - model.tokens / max(1, model.padded)}))


if __name__ == "__main__":
    main()
