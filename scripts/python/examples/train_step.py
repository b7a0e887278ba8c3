#!/usr/bin/env python3
"""One unlikelihood training step's worth of gainsay, end to end, without a real generator.

1. "Sample" replies (here: fixed strings standing in for your model's samples).
2. POST them with the character profile to a running `gainsay serve`.
3. Turn each record's penalty spans into per-token weights for the generator's tokenizer.
4. Compute the token-level unlikelihood loss on the sampled tokens (here with random log-probabilities
   standing in for the generator's) and mix it with a likelihood loss.

    gainsay serve &
    python scripts/python/examples/train_step.py --tokenizer path/to/generator/tokenizer.json \
        --profile testdata/demo/maren.yaml

In a real loop the log-probabilities come from the generator's forward pass on the sampled sequence, and
the torch losses (gainsay_train.torch_losses) give gradients.
"""
from __future__ import annotations

import argparse
import json

import numpy as np

from gainsay_train import GainsayClient, token_unlikelihood_np, token_weights
from gainsay_train.losses import mle_np

SAMPLES = [
    "Morning! I have just come back from my swim in the sea.",
    "I have never seen the sea in my whole life.",
    "My three sisters visit me every summer.",
]


def load_profile(path: str) -> dict:
    if path.endswith(".json"):
        with open(path) as f:
            return json.load(f)
    # A tiny reader for the demo's YAML (character + facts with id/text), to avoid a YAML dependency.
    prof, fact = {"facts": []}, None
    with open(path) as f:
        for line in f:
            s = line.strip()
            if s.startswith("character:"):
                prof["character"] = s.split(":", 1)[1].strip()
            elif s.startswith("- id:"):
                fact = {"id": s.split(":", 1)[1].strip()}
                prof["facts"].append(fact)
            elif s.startswith("text:") and fact is not None:
                fact["text"] = s.split(":", 1)[1].strip()
    return prof


def main(argv=None) -> dict:
    ap = argparse.ArgumentParser()
    ap.add_argument("--url", default="http://127.0.0.1:8734")
    ap.add_argument("--tokenizer", required=True, help="the generator's tokenizer.json")
    ap.add_argument("--profile", required=True)
    ap.add_argument("--alpha", type=float, default=0.5, help="mixing weight of the unlikelihood loss")
    args = ap.parse_args(argv)

    from tokenizers import Tokenizer

    tok = Tokenizer.from_file(args.tokenizer)
    tok.no_padding()
    tok.no_truncation()
    client = GainsayClient(args.url)
    records = client.check(load_profile(args.profile), [{"id": f"s{i}", "text": t} for i, t in enumerate(SAMPLES)])

    rng = np.random.default_rng(0)
    total = 0.0
    summary = {}
    for rec in records:
        ids, weights, _ = token_weights(rec, tok)
        vocab = tok.get_vocab_size()
        logits = rng.normal(size=(len(ids), vocab))  # stands in for the generator's next-token logits
        top = logits.max(-1, keepdims=True)
        logp = logits - (top + np.log(np.exp(logits - top).sum(-1, keepdims=True)))  # log-softmax
        ul = token_unlikelihood_np(logp, ids, weights)
        loss = mle_np(logp, ids) + args.alpha * ul
        total += loss
        summary[rec["id"]] = {"verdict": rec["verdict"], "penalised_tokens": int(sum(w > 0 for w in weights)), "unlikelihood": ul}
        print(f"{rec['id']}: {rec['verdict']:13} {summary[rec['id']]['penalised_tokens']} penalised tokens, "
              f"unlikelihood {ul:.4f}, loss {loss:.4f}")
    print(f"batch loss {total:.4f}")
    return summary


if __name__ == "__main__":
    main()
