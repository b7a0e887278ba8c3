"""Reference cosines for the built-in sentence encoder, from the onnxruntime and tokenizers Python
packages, for the Go test of the relevance gate (models/builtin TestRelevanceMatchesReference).

Pairs: the demo profile's facts against the demo replies (invented for this project) and 40 SNLI test
pairs (CC BY-SA 4.0; Bowman et al. 2015). Writes models/builtin/testdata/relevance-reference.jsonl.

    python scripts/reference/relevance_reference.py          # (re)write
    python scripts/reference/relevance_reference.py --check  # fail if the committed file differs
"""
from __future__ import annotations

import argparse
import json
import os
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.normpath(os.path.join(HERE, "..", ".."))
sys.path.insert(0, os.path.join(ROOT, "scripts", "train"))

import nli_data  # noqa: E402
from relevance_floor import embedder  # noqa: E402

OUT = os.path.join(ROOT, "models", "builtin", "testdata", "relevance-reference.jsonl")


def pairs() -> list[tuple[str, str]]:
    facts = []
    with open(os.path.join(ROOT, "testdata", "demo", "maren.yaml"), encoding="utf-8") as f:
        for line in f:
            line = line.strip()
            if line.startswith("text:"):
                facts.append(line.split(":", 1)[1].strip())
    with open(os.path.join(ROOT, "testdata", "demo", "replies.jsonl"), encoding="utf-8") as f:
        replies = [json.loads(x)["text"] for x in f]
    out = [(a, b) for a in facts for b in replies]
    out += [(p.premise, p.hypothesis) for p in nli_data.snli("test")[:40]]
    return out


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--check", action="store_true")
    args = ap.parse_args()
    embed = embedder(os.path.join(ROOT, "models", "builtin", "relevance"))
    if os.path.isdir(nli_data.data_dir()):
        ps = pairs()
    elif args.check:
        # Without the open data (a clean clone on its own), recompute the committed pairs' cosines.
        print(f"{nli_data.data_dir()}: not found; checking the committed pairs", file=sys.stderr)
        with open(OUT, encoding="utf-8") as f:
            ps = [(d["a"], d["b"]) for d in map(json.loads, f)]
    else:
        print(f"{nli_data.data_dir()}: not found (set GAINSAY_DATA)", file=sys.stderr)
        return 2
    a, b = embed([p[0] for p in ps]), embed([p[1] for p in ps])
    lines = [json.dumps({"a": x, "b": y, "cosine": round(float((u * v).sum()), 6)}, ensure_ascii=False)
             for (x, y), u, v in zip(ps, a, b)]
    text = "\n".join(lines) + "\n"
    if args.check:
        with open(OUT, encoding="utf-8") as f:
            if f.read() != text:
                print(f"{OUT}: differs from what onnxruntime computes now", file=sys.stderr)
                return 1
        return 0
    with open(OUT, "w", encoding="utf-8") as f:
        f.write(text)
    print(len(lines), "pairs ->", OUT)
    return 0


if __name__ == "__main__":
    sys.exit(main())
