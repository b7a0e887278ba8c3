"""Reference per-token weights for align's parity tests, from the Hugging Face `tokenizers` package's
offsets and the gainsay_train package's weight rule.

Replies: every hypothesis of tokenizer/testdata/parity/pairs.jsonl (SNLI test, MultiNLI, Breaking NLI and the
stress strings; see its SOURCES.md) and the stress premises. Spans are placed by a fixed rule so that
they cover whole words, parts of words and punctuation: word i of a reply (split on spaces) is a span
when i % 3 == 1 (weight 0.3 + 0.1 * (i % 5)), and the first three characters of a word of 6 or more
characters when i % 4 == 2 (weight 0.9). The records go to align/testdata/records.jsonl; for each
tokenizer family the expected ids, offsets and weights go to align/testdata/<family>.expected.jsonl.

    python scripts/reference/align_reference.py          # (re)write
    python scripts/reference/align_reference.py --check  # fail if the committed files differ
"""
from __future__ import annotations

import argparse
import json
import os
import sys

from tokenizers import Tokenizer

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.normpath(os.path.join(HERE, "..", ".."))
sys.path.insert(0, os.path.join(ROOT, "scripts", "python"))

from gainsay_train import token_weights  # noqa: E402

OUT = os.path.join(ROOT, "align", "testdata")
FAMILIES = ("wordpiece", "bpe", "unigram")


def texts() -> list[tuple[str, str]]:
    out = []
    with open(os.path.join(ROOT, "tokenizer", "testdata", "parity", "pairs.jsonl"), encoding="utf-8") as f:
        for line in f:
            p = json.loads(line)
            out.append((p["source"], p["hypothesis"]))
            if p["source"].startswith("stress:"):
                out.append((p["source"] + ":premise", p["premise"]))
    return out


def spans_for(text: str) -> list[dict]:
    spans = []
    pos = 0
    for i, word in enumerate(text.split(" ")):
        start, end = pos, pos + len(word)
        pos = end + 1
        if not word:
            continue
        if i % 3 == 1:
            s, e = start, end
            while s < e and not text[s].isalnum():
                s += 1
            while e > s and not text[e - 1].isalnum():
                e -= 1
            if s < e:
                spans.append({"start": s, "end": e, "weight": round(0.3 + 0.1 * (i % 5), 6)})
        elif i % 4 == 2 and len(word) >= 6:
            spans.append({"start": start, "end": start + 3, "weight": 0.9})
    return spans


def records() -> list[dict]:
    out = []
    for n, (source, text) in enumerate(texts(), start=1):
        spans = spans_for(text)
        for s in spans:
            s["byte_start"] = len(text[: s["start"]].encode("utf-8"))
            s["byte_end"] = len(text[: s["end"]].encode("utf-8"))
            s["text"] = text[s["start"] : s["end"]]
        findings = []
        if spans:
            findings.append({"fact_id": "f", "fact": "A fixed fact.", "sentence": {"start": 0, "end": len(text),
                             "byte_start": 0, "byte_end": len(text.encode("utf-8")), "text": text},
                             "probs": {"contradiction": 0.9, "entailment": 0.05, "neutral": 0.05}, "spans": spans})
        out.append({"id": source, "verdict": "contradiction" if spans else "consistent", "score": 0.9 if spans else 0.1,
                    "findings": findings, "text": text, "line": n, "threshold": 0.5})
    return out


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--check", action="store_true")
    args = ap.parse_args()
    recs = records()
    files = {"records.jsonl": "".join(json.dumps(r, ensure_ascii=False) + "\n" for r in recs)}
    for fam in FAMILIES:
        tk = Tokenizer.from_file(os.path.join(ROOT, "tokenizer", "testdata", "tokenizers", fam, "tokenizer.json"))
        tk.no_padding()
        tk.no_truncation()
        lines = []
        for r in recs:
            ids, weights, offsets = token_weights(r, tk)
            lines.append(json.dumps({"id": r["id"], "token_ids": ids, "offsets": [list(o) for o in offsets],
                                     "weights": [round(w, 6) for w in weights]}, ensure_ascii=False))
        files[f"{fam}.expected.jsonl"] = "\n".join(lines) + "\n"
    bad = 0
    for name, text in files.items():
        path = os.path.join(OUT, name)
        if args.check:
            with open(path, encoding="utf-8") as f:
                if f.read() != text:
                    print(f"{path}: differs from what tokenizers and gainsay_train compute now", file=sys.stderr)
                    bad += 1
        else:
            os.makedirs(OUT, exist_ok=True)
            with open(path, "w", encoding="utf-8") as f:
                f.write(text)
            print("->", path)
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
