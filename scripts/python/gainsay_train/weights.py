"""Per-token penalty weights, the rule of `gainsay align`.

A token's weight is the largest weight of the penalty spans it overlaps, times the share of the token's
characters that the span covers; the token's leading white space (Unicode White_Space) is not counted,
and a token of white space only gets 0. Offsets are code points, as Python str indexing and Hugging Face
offset mappings count them.
"""
from __future__ import annotations

from typing import Sequence

# The Unicode White_Space property (PropList.txt); str.isspace() differs on a few control characters.
WHITE_SPACE = frozenset(
    "\t\n\x0b\x0c\r \x85\xa0\u1680\u2000\u2001\u2002\u2003\u2004\u2005\u2006\u2007\u2008\u2009\u200a"
    "\u2028\u2029\u202f\u205f\u3000"
)


def spans_of(record: dict) -> list[dict]:
    """All penalty spans of a record, over all its findings."""
    return [s for f in record.get("findings", []) for s in f.get("spans", [])]


def weights_from_offsets(text: str, offsets: Sequence[tuple[int, int]], spans: Sequence[dict]) -> list[float]:
    out = []
    for start, end in offsets:
        while start < end and text[start] in WHITE_SPACE:
            start += 1
        w = 0.0
        if start < end:
            for s in spans:
                a, b = max(start, s["start"]), min(end, s["end"])
                if a < b:
                    w = max(w, s["weight"] * (b - a) / (end - start))
        out.append(w)
    return out


def _encode(tokenizer, text: str):
    """ids and code-point offsets of text without special tokens, for a tokenizers.Tokenizer or a
    transformers fast tokenizer."""
    if hasattr(tokenizer, "encode") and hasattr(tokenizer, "no_padding"):  # tokenizers.Tokenizer
        enc = tokenizer.encode(text, add_special_tokens=False)
        return list(enc.ids), [tuple(o) for o in enc.offsets]
    enc = tokenizer(text, add_special_tokens=False, return_offsets_mapping=True)
    return list(enc["input_ids"]), [tuple(o) for o in enc["offset_mapping"]]


def token_weights(record: dict, tokenizer, normalize: bool = False, prompt: str | None = None,
                  full_text: str | None = None, reply_start: int | None = None,
                  ) -> tuple[list[int], list[float], list[tuple[int, int]]]:
    """Token ids, the penalty weight of each and their offsets (code points) for the record's reply.

    Tokenised on its own by default. A training loop that tokenises the prompt and the reply together
    (a chat template) gives either prompt, the text before the reply (the sequence is prompt + reply
    text, as `gainsay align --prompt-field`), or full_text and reply_start, the whole sequence and the
    code-point offset where the reply text starts in it. The spans move with the reply; prompt tokens
    get 0. With normalize, weights are divided by their largest (as `gainsay align --normalize`)."""
    reply = record.get("text", "")
    if prompt is not None:
        full_text, reply_start = prompt + reply, len(prompt)
    if full_text is None:
        full_text, reply_start = reply, 0
    elif full_text[reply_start:reply_start + len(reply)] != reply:
        raise ValueError(f"record {record.get('id')!r}: the reply text is not at offset {reply_start} of the full text")
    ids, offsets = _encode(tokenizer, full_text)
    spans = [dict(s, start=s["start"] + reply_start, end=s["end"] + reply_start) for s in spans_of(record)]
    weights = weights_from_offsets(full_text, offsets, spans)
    top = max(weights, default=0.0)
    if normalize and top > 0:
        weights = [w / top for w in weights]
    return ids, weights, offsets
