"""Open NLI data for the built-in model, and the fixed held-out split.

The split follows shared/data/SOURCES.md and is the one the model card documents:

* SNLI test (all rows) is held out.
* SNLI dev lines 1-1,510 (the rows e-SNLI annotates with highlights) are held out; lines 1,511-9,842 train.
* MultiNLI (TaxiNLI subset): a row is held out when the first 8 hex digits of SHA-256(pairID), read as an
  integer, are divisible by 5 (about one fifth); the rest train.
* Breaking NLI: the categories in BREAKING_HELD_OUT are held out, the others train.
* DECODE (decode_pairs/contradiction_df.tsv): a pair is held out when the first 8 hex digits of
  SHA-256(seg1 + TAB + seg2), read as an integer, are divisible by 5 (about one fifth). The ProSeCCo
  rows of decode_prosecco_size_df.tsv (label 0 contradiction, every one of them also in
  contradiction_df; label 1 a real non-contradicting pair from the same dialogues) follow the same rule.
* Dialogue NLI over the BNC (dialogue_bnc_nli): train trains, dev calibrates, test is held out.
* Counterfactual SNLI (cad_snli): train trains, dev calibrates; its test split is built from SNLI test
  and is never used.
* Persona pairs: scripts/train/persona_pairs.py writes train.jsonl and heldout.jsonl (whole attributes
  and every fourth value held out; see that script).

MultiNLI fields that the TaxiNLI file quotes twice are unquoted once more (unquote_twice).
Rows labelled with anything but the three classes ('-' in SNLI: no annotator majority) are dropped.
"""
from __future__ import annotations

import csv
import hashlib
import json
import os
from dataclasses import dataclass

LABELS = ("contradiction", "entailment", "neutral")

BREAKING_HELD_OUT = frozenset(
    {"antonyms_wordnet", "cardinals", "colors", "drinks", "nationalities", "rooms", "vegetables"}
)
ESNLI_ROWS = 1510


@dataclass(frozen=True)
class Pair:
    premise: str
    hypothesis: str
    label: str
    source: str  # e.g. "snli-test:17" (file and 1-based line or row id)


def data_dir() -> str:
    here = os.path.dirname(os.path.abspath(__file__))
    return os.environ.get("GAINSAY_DATA", os.path.join(here, "..", "..", "..", "shared", "data"))


def detok(s: str) -> str:
    """SNLI as distributed with e-SNLI is tokenised ("packages . "); undo the spaces before punctuation so
    that the model sees text as people write it."""
    s = s.strip()
    for p in (" .", " ,", " !", " ?", " ;", " :", " 's", " n't", " '"):
        s = s.replace(p, p[1:])
    return s


def unquote_twice(s: str) -> str:
    """Some TaxiNLI fields were CSV-quoted twice ('" ""You're not..."" he said."'); when a whole field
    is itself one valid quoted CSV field, take its content."""
    s = s.strip()
    if len(s) >= 2 and s[0] == '"' and s[-1] == '"':
        inner = s[1:-1]
        if '"' not in inner.replace('""', ""):
            return inner.replace('""', '"').strip()
    return s


def mnli_held_out(pair_id: str) -> bool:
    return int(hashlib.sha256(pair_id.encode("utf-8")).hexdigest()[:8], 16) % 5 == 0


def snli(split: str, lines: range | None = None) -> list[Pair]:
    d = os.path.join(data_dir(), "snli")
    with open(os.path.join(d, f"s1.{split}"), encoding="utf-8") as f1, open(
        os.path.join(d, f"s2.{split}"), encoding="utf-8"
    ) as f2, open(os.path.join(d, f"labels.{split}"), encoding="utf-8") as fl:
        out = []
        for i, (p, h, y) in enumerate(zip(f1, f2, fl), start=1):
            y = y.strip()
            if lines is not None and i not in lines:
                continue
            if y in LABELS:
                out.append(Pair(detok(p), detok(h), y, f"snli-{split}:{i}"))
        return out


def mnli(held_out: bool) -> list[Pair]:
    path = os.path.join(data_dir(), "mnli_taxinli", "taxinli10k_MNLIDev.tsv")
    with open(path, encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f, delimiter="\t"))
    return [
        Pair(unquote_twice(r["prem"]), unquote_twice(r["hyp"]), r["label"], f"mnli:{r['pairID']}")
        for r in rows
        if r["label"] in LABELS and mnli_held_out(r["pairID"]) == held_out
    ]


def breaking(held_out: bool) -> list[Pair]:
    path = os.path.join(data_dir(), "breaking_nli", "dataset.jsonl")
    out = []
    with open(path, encoding="utf-8") as f:
        for line in f:
            d = json.loads(line)
            if (d["category"] in BREAKING_HELD_OUT) == held_out and d["gold_label"] in LABELS:
                out.append(Pair(d["sentence1"], d["sentence2"], d["gold_label"], f"breaking:{d['pairID']}"))
    return out


def decode_held_out(seg1: str, seg2: str) -> bool:
    return int(hashlib.sha256((seg1 + "\t" + seg2).encode("utf-8")).hexdigest()[:8], 16) % 5 == 0


def _tsv(path: str, encoding: str = "utf-8") -> list[dict]:
    with open(path, encoding=encoding, newline="") as f:
        return list(csv.DictReader(f, delimiter="\t", quoting=csv.QUOTE_NONE))


def decode(held_out: bool) -> list[Pair]:
    """DECODE contradictions of one fold: the second utterance contradicts the first speaker's earlier one."""
    rows = _tsv(os.path.join(data_dir(), "decode_pairs", "contradiction_df.tsv"))
    out, seen = [], set()
    for i, r in enumerate(rows, start=2):
        a, b = r["seg1"].strip(), r["seg2"].strip()
        if a and b and (a, b) not in seen and decode_held_out(a, b) == held_out:
            seen.add((a, b))
            out.append(Pair(a, b, "contradiction", f"decode:{i}"))
    return out


def decode_consistent(held_out: bool) -> list[Pair]:
    """ProSeCCo's non-contradicting DECODE pairs (label 1) of one fold, labelled neutral."""
    rows = _tsv(os.path.join(data_dir(), "decode_pairs", "decode_prosecco_size_df.tsv"))
    return [Pair(r["seg1"].strip(), r["seg2"].strip(), "neutral", f"prosecco:{i}")
            for i, r in enumerate(rows, start=2)
            if r["label"] == "1" and decode_held_out(r["seg1"].strip(), r["seg2"].strip()) == held_out]


def decode_unrelated(pairs: list[Pair]) -> list[Pair]:
    """The first utterance of pair i with the second of pair i + n/2 (mod n): made non-contradictions,
    labelled neutral (as `unrelated` does for SNLI)."""
    n = len(pairs)
    return [Pair(p.premise, pairs[(i + n // 2) % n].hypothesis, "neutral", f"decode-unrelated:{p.source}")
            for i, p in enumerate(pairs) if pairs[(i + n // 2) % n].premise != p.premise]


def dialogue_bnc(split: str) -> list[Pair]:
    """Dialogue NLI over BNC excerpts; each line is premise TAB hypothesis TAB label (the CSV quoting
    is not consistent, so lines are split on their last two tabs)."""
    path = os.path.join(data_dir(), "dialogue_bnc_nli", f"{split}_5_data.csv")
    out = []
    with open(path, encoding="utf-8") as f:
        for i, line in enumerate(f, start=1):
            line = line.rstrip("\n")
            if line.startswith('"') and line.endswith('"'):
                line = line[1:-1].replace('""', '"')
            parts = line.rsplit("\t", 2)
            if len(parts) != 3:
                continue
            prem, hyp, lab = parts[0].strip(), parts[1].strip(), parts[2].strip().lower()
            if lab in LABELS and prem and hyp:
                out.append(Pair(prem, hyp, lab, f"bnc-{split}:{i}"))
    return out


def cad_snli(split: str) -> list[Pair]:
    rows = _tsv(os.path.join(data_dir(), "cad_snli", f"all_combined_{split}.tsv"))
    return [Pair(r["sentence1"].strip(), r["sentence2"].strip(), r["gold_label"], f"cad-{split}:{i}")
            for i, r in enumerate(rows, start=2) if r["gold_label"] in LABELS]


def med() -> list[Pair]:
    rows = _tsv(os.path.join(data_dir(), "med", "MED.tsv"))
    return [Pair(r["sentence1"].strip(), r["sentence2"].strip(), r["gold_label"], f"med:{r['index']}")
            for r in rows if r["gold_label"] in LABELS]


def persona(path: str) -> list[Pair]:
    """Pairs written by persona_pairs.py (train.jsonl or heldout.jsonl)."""
    out = []
    with open(path, encoding="utf-8") as f:
        for line in f:
            d = json.loads(line)
            out.append(Pair(d["premise"], d["hypothesis"], d["label"], d["source"]))
    return out


def calibration_pairs() -> list[Pair]:
    """Never trained on: the dev splits of counterfactual SNLI and dialogue NLI, for the temperature."""
    return cad_snli("dev") + dialogue_bnc("dev")


def training_pairs() -> list[Pair]:
    dev_lines = range(ESNLI_ROWS + 1, 10**9)
    return snli("dev", dev_lines) + mnli(held_out=False) + breaking(held_out=False)


def unrelated(pairs: list[Pair]) -> list[Pair]:
    """Premise of row i with the hypothesis of row i + n/2 (mod n), kept when the two premises differ:
    pairs about different things, labelled neutral. gainsay compares every fact with every sentence, so
    most pairs it sees are like this; a model that calls them contradictions flags everything."""
    n = len(pairs)
    out = []
    for i, p in enumerate(pairs):
        q = pairs[(i + n // 2) % n]
        if q.premise != p.premise:
            out.append(Pair(p.premise, q.hypothesis, "neutral", f"unrelated:{p.source}+{q.source}"))
    return out


def held_out_sets() -> dict[str, list[Pair]]:
    test = snli("test")
    return {
        "snli-test": test,
        "snli-dev-esnli": snli("dev", range(1, ESNLI_ROWS + 1)),
        "mnli-held-out": mnli(held_out=True),
        "breaking-held-out": breaking(held_out=True),
        "unrelated-snli-test": unrelated(test),
        "unrelated-mnli-held-out": unrelated(mnli(held_out=True)),
    }


def anli_test() -> list[Pair]:
    """Adversarial NLI test rounds 1-3 (CC BY-NC 4.0: evaluation only)."""
    out = []
    with open(os.path.join(data_dir(), "anli_test", "test.jsonl"), encoding="utf-8") as f:
        for i, line in enumerate(f, start=1):
            d = json.loads(line)
            if d["label"] in LABELS:
                out.append(Pair(d["premise"], d["hypothesis"], d["label"], f"anli:{d.get('tag', '')}:{i}"))
    return out


def negation_nli(name: str) -> list[Pair]:
    """The negation benchmarks (SNLI, MNLI, RTE rows rewritten with negations); labels c/e/n or words."""
    short = {"c": "contradiction", "e": "entailment", "n": "neutral"}
    out = []
    # The MNLI file has a few Windows-1252 quotes among its UTF-8; read bytes as Latin-1 there.
    enc = "utf-8" if name != "MNLI" else "latin-1"
    for i, r in enumerate(_tsv(os.path.join(data_dir(), "negation_nli", f"{name}.txt"), enc), start=2):
        y = short.get(r["gold_label"].strip(), r["gold_label"].strip())
        if y in LABELS:
            out.append(Pair(r["Text"].strip(), r["Hypothesis"].strip(), y, f"negation-{name}:{i}"))
    return out


def persona_held_out_sets(persona_heldout: str | None = None) -> dict[str, list[Pair]]:
    """The held-out sets of the persona-domain data (see the module doc)."""
    dec = decode(held_out=True)
    sets = {
        "decode-held-out": dec,
        "decode-held-out-unrelated": decode_unrelated(dec),
        "decode-held-out-consistent": decode_consistent(held_out=True),
        "dialogue-bnc-test": dialogue_bnc("test"),
        "anli-test": anli_test(),
        "negation-snli": negation_nli("SNLI"),
        "negation-mnli": negation_nli("MNLI"),
    }
    if persona_heldout:
        sets["persona-generated-held-out"] = persona(persona_heldout)
    return sets


if __name__ == "__main__":
    import collections

    tr = training_pairs()
    print("train", len(tr), collections.Counter(p.label for p in tr))
    for k, v in held_out_sets().items():
        print(k, len(v), collections.Counter(p.label for p in v))
