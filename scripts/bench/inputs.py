"""Inputs for scripts/bench.sh, written into the folder given: the demo profile with 400 replies (the
demo's and Go benchmark's texts, invented), the persona dev set's replies against one of its
profiles (testdata/persona-dev, invented), profiles of 6, 60 and 300 facts (the demo's six and
persona sentences of Synthetic-Persona-Chat, CC BY 4.0, Jandaghi et al. 2023), and 1,000 and 20,000
replies for the memory figures."""
import csv
import json
import os
import shutil
import sys

ROOT = os.path.normpath(os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", ".."))
TEXTS = [
    "Morning, traveller! I have just come back from my swim in the sea.", "I have never seen the sea in my whole life.",
    "My three sisters visit me every summer.", "The lamp up there burns red all night.",
    "Pitch, my black cat, sleeps by the stove. He hates the gulls.", "My white cat sleeps by the stove.",
    "I am a young man of twenty, new to the job.", "The wind is loud tonight. I live in a small flat in the city.",
    "The gulls were loud at dawn, and the tide came in early.", "I have two sisters. Both of them hate boats.",
]


def write_replies(path, n):
    with open(path, "w", encoding="utf-8") as f:
        for i in range(n):
            f.write(json.dumps({"id": f"r{i}", "text": TEXTS[i % len(TEXTS)]}) + "\n")


def main(out):
    demo = os.path.join(ROOT, "testdata", "demo", "maren.yaml")
    shutil.copy(demo, os.path.join(out, "demo.yaml"))
    write_replies(os.path.join(out, "demo.replies.jsonl"), 400)
    for n in (1000, 20000):
        write_replies(os.path.join(out, f"big{n}.jsonl"), n)
    dev = os.path.join(ROOT, "testdata", "persona-dev")
    shutil.copy(os.path.join(dev, "ilse-marrow.yaml"), os.path.join(out, "persona.yaml"))
    with open(os.path.join(out, "persona.replies.jsonl"), "w", encoding="utf-8") as f:
        for name in sorted(os.listdir(dev)):
            if name.endswith(".jsonl"):
                with open(os.path.join(dev, name), encoding="utf-8") as g:
                    for line in g:
                        d = json.loads(line)
                        f.write(json.dumps({"id": d["id"], "text": d["text"]}, ensure_ascii=False) + "\n")
    facts = []
    with open(demo, encoding="utf-8") as f:
        facts = [l.split(":", 1)[1].strip() for l in f if l.strip().startswith("text:")]
    extra = []
    with open(os.path.join(ROOT, "..", "shared", "data", "persona_chat_synthetic", "Synthetic-Persona-Chat_valid.csv"),
              encoding="utf-8", newline="") as f:
        for r in csv.DictReader(f):
            for s in r["user 1 personas"].split("\n") + r["user 2 personas"].split("\n"):
                s = s.strip()
                if s and s not in extra:
                    extra.append(s)
    for n in (6, 60, 300):
        all_facts = facts + extra[: n - len(facts)]
        with open(os.path.join(out, f"facts{n}.yaml"), "w", encoding="utf-8") as f:
            f.write("character: bench\nfacts:\n")
            for i, t in enumerate(all_facts):
                f.write(f"  - id: f{i}\n    text: {json.dumps(t)}\n")


if __name__ == "__main__":
    main(sys.argv[1])
