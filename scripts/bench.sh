#!/usr/bin/env bash
# Throughput, side by side in one run (timings live here, never in pass/fail tests):
#   1. gainsay check as it is, as it was at $BASE (the last landing before the judgement, reliability
#      and performance work), and a straightforward Python pipeline (tokenizers + onnxruntime, batches
#      of 32, length-sorted) doing the same judgement on the same pairs, with the same thread count;
#   2. scoring alone (nothing attributed, one way) against the same Python pipeline and ONNX Runtime's
#      Run alone, the physical limit here;
#   3. 6, 60 and 300 facts, with and without the relevance gate;
#   4. peak memory on 1,000 and 20,000 replies;
#   5. serve: concurrent clients against sequential check calls (Go benchmark).
# Needs a Python with tokenizers and onnxruntime ($PYTHON, default .venv/bin/python) and git.
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$PWD
PYTHON=${PYTHON:-$ROOT/.venv/bin/python}
BASE=${BASE:-3a3fd39}
THREADS=${THREADS:-$(nproc)}
WORK=$(mktemp -d)
trap 'git worktree remove --force "$WORK/base" >/dev/null 2>&1 || true; rm -rf "$WORK"' EXIT

go build -o "$WORK/gainsay" ./cmd/gainsay
git worktree add --detach "$WORK/base" "$BASE" >/dev/null 2>&1
(cd "$WORK/base" && go build -o "$WORK/gainsay-base" ./cmd/gainsay)
"$PYTHON" scripts/bench/inputs.py "$WORK"

t() { # seconds of a command's wall time
  local s e; s=$(date +%s.%N); "$@" >/dev/null 2>"$WORK/last.err"; e=$(date +%s.%N)
  echo "$e - $s" | bc -l
}
rate() { echo "scale=1; $1 / $2" | bc -l; }
ratio() { echo "scale=2; $1 / $2" | bc -l; }

echo "# $(nproc) cores, $THREADS ONNX Runtime threads; built-in model; base $BASE"
for set in demo persona; do
  n=$(wc -l < "$WORK/$set.replies.jsonl")
  new=$(t "$WORK/gainsay" check --threads "$THREADS" --profile "$WORK/$set.yaml" --replies "$WORK/$set.replies.jsonl")
  base=$(t "$WORK/gainsay-base" check --threads "$THREADS" --profile "$WORK/$set.yaml" --replies "$WORK/$set.replies.jsonl")
  py=$("$PYTHON" scripts/bench/python_pipeline.py --model models/builtin --threads "$THREADS" --profile "$WORK/$set.yaml" --replies "$WORK/$set.replies.jsonl")
  pys=$(echo "$py" | "$PYTHON" -c 'import json,sys; print(json.load(sys.stdin)["seconds"])')
  echo "## $set: $n replies, default settings (both ways, attribution; gainsay also its relevance gate)"
  echo "gainsay now      $(rate "$n" "$new") replies/s"
  echo "gainsay at base  $(rate "$n" "$base") replies/s   now/base x$(ratio "$base" "$new")"
  echo "python pipeline  $(rate "$n" "$pys") replies/s   gainsay/python x$(ratio "$pys" "$new")"
done

echo "## scoring alone: demo replies, one way, nothing attributed (--threshold 1), no relevance gate"
n=$(wc -l < "$WORK/demo.replies.jsonl")
"$WORK/gainsay" check --threads "$THREADS" --one-way --threshold 1 --relevance 0 --timings \
  --profile "$WORK/demo.yaml" --replies "$WORK/demo.replies.jsonl" >/dev/null 2>"$WORK/score.err"
tail -1 "$WORK/score.err"
gs=$(sed -n 's/.*timings: \([0-9.]*\) s in all, \([0-9.]*\) s in .*/\1/p' "$WORK/score.err")
gr=$(sed -n 's/.*timings: \([0-9.]*\) s in all, \([0-9.]*\) s in .*/\2/p' "$WORK/score.err")
py=$("$PYTHON" scripts/bench/python_pipeline.py --model models/builtin --threads "$THREADS" --one-way --no-attribution --profile "$WORK/demo.yaml" --replies "$WORK/demo.replies.jsonl")
echo "python pipeline: $py"
pys=$(echo "$py" | "$PYTHON" -c 'import json,sys; print(json.load(sys.stdin)["seconds"])')
echo "gainsay/python x$(ratio "$pys" "$gs"); gainsay's time outside Run $(echo "scale=1; 100 * ($gs - $gr) / $gs" | bc -l)%"
echo "## default settings with timings (demo)"
"$WORK/gainsay" check --threads "$THREADS" --timings --profile "$WORK/demo.yaml" --replies "$WORK/demo.replies.jsonl" 2>&1 >/dev/null | tail -2

echo "## profile size: the same 400 replies against 6, 60 and 300 facts"
for f in 6 60 300; do
  with=$(t "$WORK/gainsay" check --threads "$THREADS" --profile "$WORK/facts$f.yaml" --replies "$WORK/demo.replies.jsonl")
  # Without the gate 300 facts take about an hour on 2 cores; BENCH_FULL=1 measures it anyway.
  if [ "$f" -lt 300 ] || [ -n "${BENCH_FULL:-}" ]; then
    without=$(t "$WORK/gainsay" check --threads "$THREADS" --relevance 0 --profile "$WORK/facts$f.yaml" --replies "$WORK/demo.replies.jsonl")
    echo "$f facts: ${with}s with the relevance gate, ${without}s without"
  else
    echo "$f facts: ${with}s with the relevance gate"
  fi
done

echo "## peak memory (maximum resident set)"
for n in 1000 20000; do
  /usr/bin/time -f "%M" -o "$WORK/rss" "$WORK/gainsay" check --threads "$THREADS" --one-way --threshold 1 \
    --profile "$WORK/demo.yaml" --replies "$WORK/big$n.jsonl" >/dev/null 2>&1
  echo "$n replies: $(cat "$WORK/rss") KB"
done

echo "## serve vs sequential check, built-in model"
go test -run '^$' -bench 'Benchmark(Sequential|Serve)' -benchtime 3x ./serve | grep -E '^Benchmark'
