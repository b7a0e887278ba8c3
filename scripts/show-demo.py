#!/usr/bin/env python3
"""Print the demo's records as a short table: verdict, score, and for each finding the fact and the
culprit words. Used by `make demo`."""
import json
import sys

path = sys.argv[1]
print()
with open(path, encoding="utf-8") as f:
    for line in f:
        r = json.loads(line)
        print(f"{r['id']}  {r['verdict']:13} {r['score']:.3f}  {r['text']}")
        for fd in r["findings"][:3]:
            spans = ", ".join(f"{s['text']!r} {s['weight']:.3f}" for s in fd["spans"]) or "no single word"
            print(f"      contradicts {fd['fact_id']:8} p={fd['probs']['contradiction']:.3f}  culprits: {spans}")
        if len(r["findings"]) > 3:
            print(f"      ... and {len(r['findings']) - 3} more findings")
print(f"\nrecords: {path}\nreport:  {path.rsplit('/', 1)[0]}/demo-report.html")
print("Automatic judgements are sometimes wrong: review before you train on them.")
