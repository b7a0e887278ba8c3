"""The Go `gainsay align` and gainsay_train give the same weights on the same files.

Replies: align/testdata/records.jsonl (SNLI test, MultiNLI, Breaking NLI sentences, Synthetic-Persona-Chat
and DECODE utterances, the demo's replies and stress strings; see align/testdata/SOURCES.md), alone and
after a chat template's prompt. Tokenizers: one of each layout, trained by
scripts/reference/make_tokenizers.py. Token ids and offsets come from Hugging Face `tokenizers`, the
reference; the Go side tokenises with its own code."""
import json
import os
import subprocess
import sys

import pytest
from tokenizers import Tokenizer

from gainsay_train import read_records, token_weights

FAMILIES = ["wordpiece", "bpe", "unigram", "splitbpe", "splitbpe-nfc", "spbpe", "metaspace-bpe"]


@pytest.mark.parametrize("prompt", [False, True])
@pytest.mark.parametrize("normalize", [False, True])
@pytest.mark.parametrize("family", FAMILIES)
def test_go_align_matches_python(tmp_path, root, gainsay_bin, family, normalize, prompt):
    tok_path = os.path.join(root, "tokenizer", "testdata", "tokenizers", family, "tokenizer.json")
    records_path = os.path.join(root, "align", "testdata", "records.jsonl")
    out = tmp_path / "aligned.jsonl"
    subprocess.run([gainsay_bin, "align", "--spans", records_path, "--tokenizer", tok_path, "--out", str(out)]
                   + (["--normalize"] if normalize else []) + (["--prompt-field", "prompt"] if prompt else []),
                   check=True, capture_output=True)
    tk = Tokenizer.from_file(tok_path)
    tk.no_padding()
    tk.no_truncation()
    records = read_records(records_path)
    got = [json.loads(line) for line in out.read_text(encoding="utf-8").splitlines()]
    assert len(got) == len(records)
    for rec, g in zip(records, got):
        if prompt and "prompt" in rec.get("extra", {}):
            # The training loop's way: the full sequence and where the reply starts in it.
            full = rec["extra"]["prompt"] + rec["text"]
            ids, weights, offsets = token_weights(rec, tk, normalize=normalize, full_text=full,
                                                  reply_start=len(rec["extra"]["prompt"]))
            assert g["reply_start"] == len(rec["extra"]["prompt"])
        elif prompt:
            # Asked for a prompt the record does not carry: an error record, nothing made up.
            assert "extra.prompt: missing" in g["error"] and g["token_ids"] == [], rec["id"]
            continue
        else:
            ids, weights, offsets = token_weights(rec, tk, normalize=normalize)
        assert g["id"] == rec["id"]
        assert g["token_ids"] == ids, rec["id"]
        assert [tuple(o) for o in g["offsets"]] == offsets, rec["id"]
        assert g["weights"] == pytest.approx(weights, abs=1e-6), rec["id"]
        assert g["sequence_flag"] == (rec["verdict"] == "contradiction")


def test_committed_references_are_current(root):
    """The expected files the Go tests read still match what tokenizers and gainsay_train compute."""
    script = os.path.join(root, "scripts", "reference", "align_reference.py")
    subprocess.run([sys.executable, script, "--check"], check=True)
