# gainsay: `make demo` and `make test` work on a fresh machine with Go, Python 3, npm and (for the
# browser test) apt; each installs what it needs first.

GO      ?= go
PYTHON  ?= python3
VENV    := .venv
VPY     := $(VENV)/bin/python
BIN     := bin/gainsay
OUT     := out

.PHONY: all setup ort build demo test test-go test-python browser fuzz bench clean

all: build

# ONNX Runtime 1.30.0 into ~/.local/share/gainsay/onnxruntime (see scripts/install-onnxruntime).
ort:
	@scripts/install-onnxruntime >/dev/null

setup: ort
	$(GO) mod download

build: setup
	$(GO) build -o $(BIN) ./cmd/gainsay

# The main job on the built-in model: check the demo character's replies, then write the report.
demo: build
	@mkdir -p $(OUT)
	$(BIN) check --profile testdata/demo/maren.yaml --replies testdata/demo/replies.jsonl --out $(OUT)/demo.jsonl
	$(BIN) report $(OUT)/demo.jsonl --profile testdata/demo/maren.yaml -o $(OUT)/demo-report.html
	@$(PYTHON) scripts/show-demo.py $(OUT)/demo.jsonl

# Python for the reference checks and the training-loop package (no torch: the NumPy losses suffice).
$(VENV)/.ok: scripts/requirements-test.txt scripts/python/pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(VPY) -m pip install --quiet --upgrade pip
	$(VPY) -m pip install --quiet -r scripts/requirements-test.txt
	$(VPY) -m pip install --quiet -e scripts/python
	@touch $@

# Chromium and ChromeDriver for the report's browser test, from Debian's packages.
browser:
	@command -v chromium >/dev/null && command -v chromedriver >/dev/null || scripts/install-browser

test: build $(VENV)/.ok browser
	$(GO) vet ./...
	GAINSAY_REQUIRE_BROWSER=1 $(GO) test ./...
	GAINSAY_BIN=$(CURDIR)/$(BIN) $(VPY) -m pytest -q scripts/python/tests scripts/reference/tests
	$(MAKE) --no-print-directory fuzz

# Each fuzz test for a short fixed time (the seed corpora in testdata/fuzz run in every go test).
FUZZ_TIME ?= 10s
FUZZ := ./profile:FuzzParseProfile ./:FuzzReplyReader ./internal/sentence:FuzzSplit \
	./tokenizer:FuzzEncodePair ./serve:FuzzDecodeRequest
fuzz:
	@for t in $(FUZZ); do \
		$(GO) test -run '^$$' -fuzz "^$${t#*:}$$" -fuzztime $(FUZZ_TIME) "$${t%%:*}" || exit 1; \
	done

# Timings live here, never in pass/fail tests.
bench: build
	$(GO) test -run '^$$' -bench . -benchtime 3x ./nli ./serve ./models/builtin
	scripts/bench.sh

clean:
	rm -rf bin $(OUT) $(VENV)
