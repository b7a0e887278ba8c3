#!/usr/bin/env bash
# Measure the span rule's choices on held-out data with the Go pipeline (gainsay eval):
#   phrases (adjacent word pairs) on or off and function words allowed or not, on e-SNLI's highlighted
#   contradictions, held-out Breaking NLI categories (every 4th row) and the persona dev set. Prints
#   hit@1 and token F1 per variant. (Words are chosen by their probability drop: choosing them by
#   their share of the odds picked more words, Breaking NLI token F1 0.699 against 0.851 with the
#   first model of run p1, so the odds share is only what a span's weight reports.)
#   scripts/train/span_rules.sh [MODEL_DIR]   (default: the built-in model)
set -euo pipefail
cd "$(dirname "$0")/../.."
bin=${GAINSAY:-bin/gainsay}
data=${GAINSAY_DATA:-../shared/data}
model=()
[ $# -gt 0 ] && model=(--model "$1")
variants=(
  "phrases, no function words (default)|--phrases=true"
  "no phrases|--phrases=false"
  "no phrases, function words (before)|--phrases=false --function-word-spans"
)
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
for v in "${variants[@]}"; do
  name=${v%%|*}; flags=${v#*|}
  "$bin" eval "${model[@]}" $flags --data "$data/esnli/esnli_dev_rows1-1510.csv" --json "$tmp/es.json" >/dev/null
  "$bin" eval "${model[@]}" $flags --data "$data/breaking_nli/dataset.jsonl" --held-out --every 4 --json "$tmp/br.json" >/dev/null
  "$bin" eval "${model[@]}" $flags --data testdata/persona-dev --json "$tmp/pd.json" >/dev/null
  python3 - "$name" "$tmp" <<'PY'
import json, sys
name, tmp = sys.argv[1], sys.argv[2]
es, br, pd = (json.load(open(f"{tmp}/{k}.json"))["report"] for k in ("es", "br", "pd"))
def loo(r):
    m = [m for m in r["rationales"]["methods"] if m["method"] == "leave-one-out"][0]
    return f"hit@1 {m['hit_at_1']:.3f} F1 {m['f1']:.3f}"
p = pd["persona"]
print(f"{name:34} e-SNLI {loo(es)} | Breaking {loo(br)} | persona heaviest span {p['heaviest_span_hit']:.3f}, function-word spans {p['function_word_spans']}")
PY
done
