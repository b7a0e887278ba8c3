"""Export a trained cross-encoder (train_nli.py) to ONNX, quantise it, and lay out a model folder.

    python scripts/train/export_onnx.py --run scripts/train/runs/r1 --out models/builtin

Writes model.onnx (the int8 or the float32 export, see --keep), tokenizer.json (the base model's, as
shipped), config.json (id2label and the run's hyper-parameters) and export.json (sizes, SHA-256 and the
accuracy of both exports on a fixed held-out slice, which decides --keep auto).
"""
from __future__ import annotations

import argparse
import hashlib
import json
import os
import shutil

import numpy as np
import onnxruntime as ort
import torch
from onnxruntime.quantization import QuantType, quantize_dynamic
from transformers import AutoTokenizer

import nli_data
from train_nli import LABEL2ID, CrossEncoder, base_model_dir

ID2LABEL = {v: k for k, v in LABEL2ID.items()}


def sha256(path: str) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for chunk in iter(lambda: f.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def onnx_accuracy(path: str, pairs, tok, max_len: int) -> float:
    so = ort.SessionOptions()
    so.intra_op_num_threads = 2
    sess = ort.InferenceSession(path, so, providers=["CPUExecutionProvider"])
    correct = 0
    for s in range(0, len(pairs), 64):
        b = pairs[s : s + 64]
        enc = tok([p.premise for p in b], [p.hypothesis for p in b], truncation="only_first",
                  max_length=max_len, padding=True, return_tensors="np")
        logits = sess.run(["logits"], {k: enc[k].astype(np.int64) for k in ("input_ids", "attention_mask", "token_type_ids")})[0]
        correct += int((logits.argmax(-1) == np.array([LABEL2ID[p.label] for p in b])).sum())
    return correct / len(pairs)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--run", required=True)
    ap.add_argument("--out", required=True)
    ap.add_argument("--keep", choices=("auto", "int8", "fp32"), default="auto",
                    help="auto: int8 when it loses at most 1 point of accuracy on the check slice")
    ap.add_argument("--check-pairs", type=int, default=1500)
    args = ap.parse_args()

    base = base_model_dir()
    tok = AutoTokenizer.from_pretrained(base)
    with open(os.path.join(args.run, "train_log.json")) as f:
        log = json.load(f)
    max_len = log["args"]["max_len"]
    model = CrossEncoder(base)
    model.load_state_dict(torch.load(os.path.join(args.run, "model.pt"), map_location="cpu"))
    model.eval()

    fp32 = os.path.join(args.run, "model.fp32.onnx")
    int8 = os.path.join(args.run, "model.int8.onnx")
    dummy = tok(["I live on the coast."], ["I have never seen the sea."], return_tensors="pt")
    torch.onnx.export(
        model, (dummy["input_ids"], dummy["attention_mask"], dummy["token_type_ids"]), fp32,
        input_names=["input_ids", "attention_mask", "token_type_ids"], output_names=["logits"],
        dynamic_axes={n: {0: "batch", 1: "sequence"} for n in ("input_ids", "attention_mask", "token_type_ids")}
        | {"logits": {0: "batch"}},
        opset_version=17, dynamo=False,
    )
    quantize_dynamic(fp32, int8, weight_type=QuantType.QInt8)

    # The check slice: held-out SNLI test pairs (every sixth, a fixed sample).
    check = nli_data.snli("test")[:: max(1, 9824 // args.check_pairs)][: args.check_pairs]
    acc = {"fp32": onnx_accuracy(fp32, check, tok, max_len), "int8": onnx_accuracy(int8, check, tok, max_len)}
    keep = args.keep
    if keep == "auto":
        keep = "int8" if acc["fp32"] - acc["int8"] <= 0.01 else "fp32"
    chosen = int8 if keep == "int8" else fp32

    os.makedirs(args.out, exist_ok=True)
    shutil.copy(chosen, os.path.join(args.out, "model.onnx"))
    shutil.copy(os.path.join(base, "tokenizer.json"), os.path.join(args.out, "tokenizer.json"))
    with open(os.path.join(base, "config.json")) as f:
        base_cfg = json.load(f)
    cfg = {
        "model_type": "bert",
        "architectures": ["GainsayNLICrossEncoder"],
        "id2label": {str(i): l for i, l in ID2LABEL.items()},
        "label2id": LABEL2ID,
        "max_position_embeddings": base_cfg["max_position_embeddings"],
        "hidden_size": base_cfg["hidden_size"],
        "num_hidden_layers": base_cfg["num_hidden_layers"],
        "pooling": "mean",
        "base_model": "sentence-transformers/all-MiniLM-L6-v2",
        "training": log["args"],
    }
    with open(os.path.join(args.out, "config.json"), "w") as f:
        json.dump(cfg, f, indent=2)
        f.write("\n")
    report = {
        "kept": keep, "check_pairs": len(check), "check_accuracy": acc,
        "bytes": {"fp32": os.path.getsize(fp32), "int8": os.path.getsize(int8)},
        "sha256": sha256(os.path.join(args.out, "model.onnx")),
        "onnxruntime": ort.__version__, "torch": torch.__version__,
    }
    with open(os.path.join(args.out, "export.json"), "w") as f:
        json.dump(report, f, indent=2)
        f.write("\n")
    print(json.dumps(report, indent=2))


if __name__ == "__main__":
    main()
