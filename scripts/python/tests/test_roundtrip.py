"""The example training step against a real `gainsay serve` (nli's tiny test model, exact and fast):
sample, POST, align, loss."""
import os
import re
import subprocess
import sys

import pytest


@pytest.fixture
def server(root, gainsay_bin):
    tiny = os.path.join(root, "nli", "testdata", "tiny-wordpiece")
    proc = subprocess.Popen([gainsay_bin, "serve", "--model", tiny, "--addr", "127.0.0.1:0"],
                            stderr=subprocess.PIPE, text=True)
    line = proc.stderr.readline()
    m = re.search(r"on (http://\S+)", line)
    if not m:
        proc.kill()
        pytest.fail(f"gainsay serve did not start: {line}")
    yield m.group(1)
    proc.terminate()
    assert proc.wait(timeout=30) == 0, "graceful shutdown exits 0"


def test_train_step_round_trip(root, server):
    sys.path.insert(0, os.path.join(root, "scripts", "python", "examples"))
    import train_step

    summary = train_step.main(["--url", server, "--profile", os.path.join(root, "testdata", "demo", "maren.yaml"),
                               "--tokenizer", os.path.join(root, "tokenizer", "testdata", "tokenizers", "bpe", "tokenizer.json")])
    # The tiny model flags "never" (and only that): the second sample.
    assert summary["s1"]["verdict"] == "contradiction"
    assert summary["s1"]["penalised_tokens"] >= 1
    assert summary["s1"]["unlikelihood"] > 0
    assert summary["s0"]["verdict"] == "consistent"
    assert summary["s0"]["unlikelihood"] == 0


def test_client_reports_busy_and_errors(server):
    from gainsay_train import GainsayClient

    c = GainsayClient(server)
    assert c.health()["status"] == "ok"
    with pytest.raises(RuntimeError, match="HTTP 400"):
        c.check({"facts": []}, [])
