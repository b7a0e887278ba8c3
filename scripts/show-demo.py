#!/usr/bin/env python3
"""Print check's records as a short table for a terminal: verdict and score of each reply, then for
each finding the fact, the sentence it is about and the culprit words with their weights. Used by
`make demo`."""
import json
import sys


def plural(n: int, one: str, many: str) -> str:
    return f"{n} {one if n == 1 else many}"


path = sys.argv[1]
print()
flagged = 0
with open(path, encoding="utf-8") as f:
    for line in f:
        r = json.loads(line)
        score = "    -" if r["score"] is None else f"{r['score']:.3f}"
        print(f"{r['id']}  {r['verdict']:13} {score}  {r['text']}")
        if r["verdict"] == "error":
            print(f"      {r['error']}")
        flagged += r["verdict"] == "contradiction"
        for fd in r["findings"][:3]:
            spans = ", ".join(f"{s['text']!r} {s['weight']:.2f}" for s in fd["spans"]) or "no single word"
            print(f"      contradicts {fd['fact_id']} (p={fd['probs']['contradiction']:.3f}): "
                  f"\u201c{fd['sentence']['text']}\u201d; culprits: {spans}")
        if len(r["findings"]) > 3:
            print(f"      ... and {plural(len(r['findings']) - 3, 'more finding', 'more findings')}")
print(f"\n{plural(flagged, 'reply', 'replies')} flagged. records: {path}\nreport:  {path.rsplit('/', 1)[0]}/demo-report.html")
print("Automatic judgements are sometimes wrong: review before you train on them.")
