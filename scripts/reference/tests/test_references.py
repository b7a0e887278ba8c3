"""The reference values committed for the Go tests still match the reference libraries.

Each script recomputes its values with the library it names and compares them with the committed file:
tokenizer parity (Hugging Face tokenizers), ONNX Runtime probabilities (onnxruntime), metrics
(scikit-learn, statsmodels)."""
import os
import subprocess
import sys

import pytest

ROOT = os.path.normpath(os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", ".."))


@pytest.mark.parametrize("script", ["tokenizer_reference.py", "ort_reference.py", "metrics_reference.py", "relevance_reference.py"])
def test_reference_is_current(script):
    subprocess.run([sys.executable, os.path.join(ROOT, "scripts", "reference", script), "--check"], check=True)


def test_get_model_lists_the_manifest():
    out = subprocess.run([sys.executable, os.path.join(ROOT, "scripts", "get-model"), "--list"],
                         check=True, capture_output=True, text=True).stdout
    assert "cross-encoder/nli-deberta-v3-small" in out
    assert "from memory" in out


def test_get_model_fails_clearly_without_the_hub(tmp_path):
    dest = tmp_path / "m"
    r = subprocess.run([sys.executable, os.path.join(ROOT, "scripts", "get-model"), "cross-encoder/nli-deberta-v3-small", str(dest)],
                       capture_output=True, text=True, timeout=300)
    assert r.returncode != 0
    assert r.stderr.startswith("get-model: ")
    assert "huggingface_hub" in r.stderr or "could not download" in r.stderr
    assert not dest.exists() or not any(dest.iterdir()), "nothing half-made is left behind"


def test_get_model_refuses_a_non_empty_destination(tmp_path):
    (tmp_path / "x").write_text("keep me")
    r = subprocess.run([sys.executable, os.path.join(ROOT, "scripts", "get-model"), "cross-encoder/nli-deberta-v3-small", str(tmp_path)],
                       capture_output=True, text=True)
    assert r.returncode != 0
    assert "is not empty" in r.stderr
