"""Write profile/testdata/SentenceBreakTest.txt, the Unicode UAX #29 sentence-break test cases.

The official file (https://www.unicode.org/Public/15.0.0/ucd/auxiliary/SentenceBreakTest.txt) cannot be
fetched on the machines this project is built on. github.com/rivo/uniseg v0.4.7 carries all of its cases,
generated from that file, in sentencebreak_test.go; this script turns them back into the official line
format ("÷ 0001 × 0308 ÷ 0001 ÷ # comment"). Run from the repository root:

    python scripts/reference/uax29_from_uniseg.py "$(go list -m -f '{{.Dir}}' github.com/rivo/uniseg)"
"""
import os
import re
import sys

src = os.path.join(sys.argv[1], "sentencebreak_test.go")
out = os.path.join(os.path.dirname(__file__), "..", "..", "profile", "testdata", "SentenceBreakTest.txt")
row = re.compile(r'\{original: "((?:[^"\\]|\\.)*)", expected: \[\]\[\]rune\{(.*)\}\},\s*// (.*)$')
lines = []
with open(src, encoding="utf-8") as f:
    for line in f:
        m = row.search(line)
        if not m:
            continue
        groups = re.findall(r"\{([^{}]*)\}", m.group(2))
        parts = []
        for g in groups:
            cps = [c.strip() for c in g.split(",") if c.strip()]
            parts.append(" × ".join("%04X" % int(c, 16) for c in cps))
        lines.append("÷ " + " ÷ ".join(parts) + " ÷\t#  " + m.group(3).strip())
with open(out, "w", encoding="utf-8") as f:
    f.write("# SentenceBreakTest-15.0.0.txt, test cases only (the header and licence follow in SOURCES.md).\n")
    f.write("# Source: Unicode 15.0.0 UCD, auxiliary/SentenceBreakTest.txt, as carried by github.com/rivo/uniseg v0.4.7.\n")
    f.write("\n".join(lines) + "\n")
print(len(lines), "cases ->", os.path.normpath(out))
