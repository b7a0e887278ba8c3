"""Records of `gainsay check`: one JSON object per reply."""
from __future__ import annotations

import json
from typing import Iterator


def iter_records(path: str) -> Iterator[dict]:
    """Yield the records of a JSON Lines file, skipping blank lines."""
    with open(path, encoding="utf-8") as f:
        for n, line in enumerate(f, start=1):
            if not line.strip():
                continue
            rec = json.loads(line)
            if "verdict" not in rec:
                raise ValueError(f"{path}:{n}: verdict: missing (is this the output of gainsay check?)")
            yield rec


def read_records(path: str) -> list[dict]:
    return list(iter_records(path))
