"""Reference per-token weights for align's parity tests, from the Hugging Face `tokenizers` package's
offsets and the gainsay_train package's weight rule.

Replies: every hypothesis of tokenizer/testdata/parity/pairs.jsonl (SNLI test, MultiNLI, Breaking NLI and the
stress strings; see its SOURCES.md) and the stress premises; the demo replies (testdata/demo, invented
for this project); every 8th utterance of the held-out fifth of Synthetic-Persona-Chat conversations
(CC BY 4.0; Jandaghi et al. 2023) and of DECODE pairs (Nie et al. 2021), up to 60 each; and chat-style
stress strings (runs of spaces and newlines, curly quotes, emoji sequences, CJK). Every third record
carries a prompt (extra.prompt: a chat template rendered before the reply, with the special tokens of
one of the chat layouts) for the prompt-and-reply alignment. Spans are placed by a fixed rule so that
they cover whole words, parts of words and punctuation: word i of a reply (split on spaces) is a span
when i % 3 == 1 (weight 0.3 + 0.1 * (i % 5)), and the first three characters of a word of 6 or more
characters when i % 4 == 2 (weight 0.9). The records go to align/testdata/records.jsonl; for each
tokenizer family the expected ids, offsets and weights go to align/testdata/<family>.expected.jsonl, and
for the prompted records, tokenised with their prompt, to align/testdata/<family>.prompt.expected.jsonl.

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
sys.path.insert(0, os.path.join(ROOT, "scripts", "train"))

from gainsay_train import token_weights  # noqa: E402
from nli_data import data_dir  # noqa: E402

OUT = os.path.join(ROOT, "align", "testdata")
FAMILIES = ("wordpiece", "bpe", "unigram", "splitbpe", "splitbpe-nfc", "spbpe", "metaspace-bpe")

CHAT_STRESS = [
    "Well…  I  suppose so.\n\nBut not today!",
    "“Never,” she said. ‘Not once.’",
    "I moved to 東京 last year — it’s lovely 🌸",
    "Family: 👨‍👩‍👧‍👦 and a dog 🐕‍🦺!",
    "  Leading spaces, and trailing ones   ",
    "Line one\nLine two\r\nLine three\tend",
    "Zoë’s café — naïve, façade, jalapeño.",
    "I'm 42; you're 19? We've met, haven't we?",
    "Ça va? Très bien, merci. Grüße aus Köln!",
    "Привет! Как дела? 你好吗？ 잘 지내요?",
    "e\u0301 \u212b \uff21\uff22\uff23 \u2167",
    "$1,000.50 + 20% = more than I have.",
]

PROMPTS = [
    "<|im_start|>system\nYou are Maren.<|im_end|>\n<|im_start|>user\nDo you swim?<|im_end|>\n<|im_start|>assistant\n",
    "<|begin_of_text|><|start_header_id|>user<|end_header_id|>\n\nWhere do you live?<|eot_id|>"
    "<|start_header_id|>assistant<|end_header_id|>\n\n",
    "<s>[INST] Tell me about your boat. [/INST] ",
]


def _persona_chat_utterances() -> list[str]:
    import csv
    import re

    path = os.path.join(data_dir(), "persona_chat_synthetic", "Synthetic-Persona-Chat_valid.csv")
    with open(path, encoding="utf-8", newline="") as f:
        rows = [r for i, r in enumerate(csv.DictReader(f)) if i % 5 == 4]
    out = []
    for r in rows:
        for line in r["Best Generated Conversation"].split("\n"):
            m = re.match(r"\s*User [12]:\s*(.+)", line)
            if m:
                out.append(m.group(1).strip())
    return out[::8][:60]


def _decode_utterances() -> list[str]:
    import csv

    path = os.path.join(data_dir(), "decode_pairs", "contradiction_df.tsv")
    with open(path, encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f, delimiter="\t", quoting=csv.QUOTE_NONE))
    return [r["seg2"].strip() for r in rows[::8][:60]]


def texts() -> list[tuple[str, str]]:
    out = []
    with open(os.path.join(ROOT, "tokenizer", "testdata", "parity", "pairs.jsonl"), encoding="utf-8") as f:
        for line in f:
            p = json.loads(line)
            out.append((p["source"], p["hypothesis"]))
            if p["source"].startswith("stress:"):
                out.append((p["source"] + ":premise", p["premise"]))
    with open(os.path.join(ROOT, "testdata", "demo", "replies.jsonl"), encoding="utf-8") as f:
        out += [("demo:" + d["id"], d["text"]) for d in map(json.loads, f)]
    out += [(f"personachat:{i}", t) for i, t in enumerate(_persona_chat_utterances())]
    out += [(f"decode:{i}", t) for i, t in enumerate(_decode_utterances())]
    out += [(f"chat-stress:{i + 1}", t) for i, t in enumerate(CHAT_STRESS)]
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
        rec = {"id": source, "verdict": "contradiction" if spans else "consistent", "score": 0.9 if spans else 0.1,
               "findings": findings, "text": text, "line": n, "threshold": 0.5}
        if n % 3 == 0:
            rec["extra"] = {"prompt": PROMPTS[(n // 3) % len(PROMPTS)]}
        out.append(rec)
    return out


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--check", action="store_true")
    args = ap.parse_args()
    files = {}
    if os.path.isdir(data_dir()):
        recs = records()
        files["records.jsonl"] = "".join(json.dumps(r, ensure_ascii=False) + "\n" for r in recs)
    elif args.check:
        # Without the open data (a clean clone on its own), check the expected values against the
        # committed records: they carry every text, so the reference libraries still recompute them.
        print(f"{data_dir()}: not found; checking against the committed records.jsonl", file=sys.stderr)
        with open(os.path.join(OUT, "records.jsonl"), encoding="utf-8") as f:
            recs = [json.loads(line) for line in f]
    else:
        print(f"{data_dir()}: not found (set GAINSAY_DATA)", file=sys.stderr)
        return 2
    for fam in FAMILIES:
        tk = Tokenizer.from_file(os.path.join(ROOT, "tokenizer", "testdata", "tokenizers", fam, "tokenizer.json"))
        tk.no_padding()
        tk.no_truncation()
        lines, prompted = [], []
        for r in recs:
            ids, weights, offsets = token_weights(r, tk)
            lines.append(json.dumps({"id": r["id"], "token_ids": ids, "offsets": [list(o) for o in offsets],
                                     "weights": [round(w, 6) for w in weights]}, ensure_ascii=False))
            if "extra" in r:
                ids, weights, offsets = token_weights(r, tk, prompt=r["extra"]["prompt"])
                prompted.append(json.dumps({"id": r["id"], "token_ids": ids, "offsets": [list(o) for o in offsets],
                                            "weights": [round(w, 6) for w in weights]}, ensure_ascii=False))
        files[f"{fam}.expected.jsonl"] = "\n".join(lines) + "\n"
        files[f"{fam}.prompt.expected.jsonl"] = "\n".join(prompted) + "\n"
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
