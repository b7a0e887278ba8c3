#!/usr/bin/env bash
# Measure the span rule's choices on held-out data with the Go pipeline (gainsay eval):
#   the measure (odds share, probability drop), phrases (adjacent word pairs) on or off, and function
#   words allowed or not, on e-SNLI's highlighted contradictions, held-out Breaking NLI categories
#   (every 4th row) and the persona dev set. Prints hit@1 and token F1 per variant.
#   scripts/train/span_rules.sh [MODEL_DIR]   (default: the built-in model)
set -euo pipefail
cd "$(dirname "$0")/../.."
bin=${GAINSAY:-bin/gainsay}
data=${GAINSAY_DATA:-../shared/data}
model=()
[ $# -gt 0 ] && model=(--model "$1")
variants=(
  "odds+phrases|--span-measure odds --phrases=true"
  "odds|--span-measure odds --phrases=false"
  "prob+phrases|--span-measure prob --phrases=true --span-min-weight 0.001"
  "prob, function words (before)|--span-measure prob --phrases=false --span-min-weight 0.001 --function-word-spans"
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
