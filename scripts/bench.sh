#!/usr/bin/env bash
# Throughput figures for the README (timings live here, never in pass/fail tests):
#   check on the built-in model: scored pairs/s and the share of wall time outside ONNX Runtime's Run;
#   serve: concurrent clients against sequential check calls on the same batches.
set -euo pipefail
cd "$(dirname "$0")/.."
echo "# check, built-in model, batch size 32 ($(nproc) cores)"
go test -run '^$' -bench 'BenchmarkCheck$' -benchtime 3x ./models/builtin | grep -E '^Benchmark'
echo "# serve vs sequential check, built-in model"
go test -run '^$' -bench 'Benchmark(Sequential|Serve)' -benchtime 3x ./internal/serve | grep -E '^Benchmark'
