"""Reference encodings from the Hugging Face `tokenizers` package, for nli's tokenizer parity tests.

For every pair in tokenizer/testdata/parity/pairs.jsonl and every tokenizer under tokenizer/testdata/tokenizers/ (plus
the built-in model's), encode (premise, hypothesis) exactly as a cross-encoder does — padding and
truncation switched off — and write one JSON object per pair: ids, type_ids, offsets (code points into
the premise or hypothesis, as Python str indexes) and sequence_ids (0 premise, 1 hypothesis, -1 special).

    python scripts/reference/tokenizer_reference.py          # (re)write tokenizer/testdata/parity/*.expected.jsonl
    python scripts/reference/tokenizer_reference.py --check  # fail if the committed files differ
"""
from __future__ import annotations

import argparse
import json
import os
import sys

from tokenizers import Tokenizer

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.normpath(os.path.join(HERE, "..", ".."))
PARITY = os.path.join(ROOT, "tokenizer", "testdata", "parity")


def tokenizer_files() -> dict[str, str]:
    base = os.path.join(ROOT, "tokenizer", "testdata", "tokenizers")
    out = {name: os.path.join(base, name, "tokenizer.json") for name in sorted(os.listdir(base))}
    builtin = os.path.join(ROOT, "models", "builtin", "tokenizer.json")
    if os.path.exists(builtin):
        out["builtin"] = builtin
    return out


def encode_all(path: str, pairs: list[dict]) -> list[str]:
    tk = Tokenizer.from_file(path)
    tk.no_padding()
    tk.no_truncation()
    lines = []
    for p in pairs:
        e = tk.encode(p["premise"], p["hypothesis"])
        seq = [-1 if s is None else s for s in e.sequence_ids]
        lines.append(json.dumps({"source": p["source"], "ids": e.ids, "type_ids": e.type_ids,
                                 "offsets": [list(o) for o in e.offsets], "sequence_ids": seq,
                                 "tokens": e.tokens}, ensure_ascii=False))
    return lines


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--check", action="store_true")
    args = ap.parse_args()
    with open(os.path.join(PARITY, "pairs.jsonl"), encoding="utf-8") as f:
        pairs = [json.loads(x) for x in f]
    bad = 0
    for name, path in tokenizer_files().items():
        lines = encode_all(path, pairs)
        out = os.path.join(PARITY, f"{name}.expected.jsonl")
        text = "\n".join(lines) + "\n"
        if args.check:
            with open(out, encoding="utf-8") as f:
                if f.read() != text:
                    print(f"{out}: differs from what tokenizers computes now", file=sys.stderr)
                    bad += 1
        else:
            with open(out, "w", encoding="utf-8") as f:
                f.write(text)
            print(name, len(lines), "pairs ->", out)
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
