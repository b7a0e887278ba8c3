"""Export a trained cross-encoder (train_nli.py) to ONNX, quantise it, and lay out a model folder.

    python scripts/train/export_onnx.py --run scripts/train/runs/r1 --out models/builtin

Four exports are compared on a fixed held-out slice (SNLI test):
  fp32   the plain export;
  int8   ONNX Runtime's dynamic quantisation (quantize_dynamic, int8 weights, activations quantised per
         run with a scale computed over the whole batch);
  int8s  static quantisation (quantize_static, QDQ, per-channel int8 weights, activation scales fixed
         once from 400 calibration pairs of the training data), so that no scale depends on the batch;
  fp16w  the fp32 graph with its large weights stored as float16 and cast back to float32 at load, so
         the file is half the size and the arithmetic is float32.
For each: accuracy with gainsay's batching (32 pairs, padded per batch) and the largest change in a
probability between scoring a pair alone and inside a batch. Dynamic int8 changes a pair's result with
its batch neighbours (the activation scale depends on them, padding included), which breaks gainsay's
promise that batching and padding do not change results and adds noise to leave-one-out attribution,
whose variants share batches; --keep auto therefore takes fp16w unless it loses accuracy against fp32.

Writes model.onnx, tokenizer.json (the base model's, as shipped), config.json (id2label and the run's
hyper-parameters) and export.json (sizes, SHA-256 and the comparison).
"""
from __future__ import annotations

import argparse
import hashlib
import json
import os
import shutil

import numpy as np
import onnx
import onnxruntime as ort
from onnx import TensorProto, helper, numpy_helper
import torch
from onnxruntime.quantization import CalibrationDataReader, QuantFormat, QuantType, quantize_dynamic, quantize_static
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


def fp16_storage(src: str, dst: str, min_elems: int = 1024) -> None:
    """Store float32 initializers of at least min_elems elements as float16, each followed by a Cast
    back to float32 (folded by ONNX Runtime at load)."""
    m = onnx.load(src)
    g = m.graph
    inits, casts = [], []
    for init in g.initializer:
        arr = numpy_helper.to_array(init)
        if init.data_type == TensorProto.FLOAT and arr.size >= min_elems:
            half = numpy_helper.from_array(arr.astype(np.float16), init.name + "__fp16")
            inits.append(half)
            casts.append(helper.make_node("Cast", [half.name], [init.name], to=TensorProto.FLOAT, name=init.name + "__cast"))
        else:
            inits.append(init)
    del g.initializer[:]
    g.initializer.extend(inits)
    nodes = list(g.node)
    del g.node[:]
    g.node.extend(casts + nodes)
    onnx.checker.check_model(m)
    onnx.save(m, dst)


class Calibration(CalibrationDataReader):
    """Pairs of the training data, one at a time (no padding), for static quantisation's scales."""

    def __init__(self, tok, pairs):
        self.feeds = iter([{k: v.astype(np.int64) for k, v in tok([p.premise], [p.hypothesis], return_tensors="np").items()
                            if k in ("input_ids", "attention_mask", "token_type_ids")} for p in pairs])

    def get_next(self):
        return next(self.feeds, None)


def probs_of(sess, tok, pairs, batch: int):
    """Probabilities with gainsay's scheme: batches of similar length, each padded to its longest."""
    out = np.zeros((len(pairs), 3))
    order = sorted(range(len(pairs)), key=lambda i: len(pairs[i].premise) + len(pairs[i].hypothesis))
    for s in range(0, len(order), batch):
        idx = order[s : s + batch]
        enc = tok([pairs[i].premise for i in idx], [pairs[i].hypothesis for i in idx], padding=True, return_tensors="np")
        logits = sess.run(["logits"], {k: enc[k].astype(np.int64) for k in ("input_ids", "attention_mask", "token_type_ids")})[0]
        z = np.exp(logits - logits.max(-1, keepdims=True))
        out[idx] = z / z.sum(-1, keepdims=True)
    return out


def compare(path: str, pairs, tok) -> dict:
    so = ort.SessionOptions()
    so.intra_op_num_threads = 2
    sess = ort.InferenceSession(path, so, providers=["CPUExecutionProvider"])
    batched = probs_of(sess, tok, pairs, 32)
    alone = probs_of(sess, tok, pairs[:200], 1)
    y = np.array([LABEL2ID[p.label] for p in pairs])
    return {"accuracy": float((batched.argmax(-1) == y).mean()),
            "batch_effect": float(np.abs(batched[:200] - alone).max()),
            "bytes": os.path.getsize(path)}


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--run", required=True)
    ap.add_argument("--out", required=True)
    ap.add_argument("--keep", choices=("auto", "int8", "int8s", "fp32", "fp16w"), default="auto",
                    help="auto: int8s if within 0.5 points of fp32 and without batch effect, else fp16w unless it "
                         "loses over 0.2 points against fp32")
    ap.add_argument("--check-pairs", type=int, default=1500)
    args = ap.parse_args()

    base = base_model_dir()
    tok = AutoTokenizer.from_pretrained(base)
    with open(os.path.join(args.run, "train_log.json")) as f:
        log = json.load(f)
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
    int8s = os.path.join(args.run, "model.int8s.onnx")
    calib = nli_data.training_pairs()[::40][:400]
    quantize_static(fp32, int8s, Calibration(tok, calib), quant_format=QuantFormat.QDQ, per_channel=True,
                    activation_type=QuantType.QInt8, weight_type=QuantType.QInt8)
    fp16w = os.path.join(args.run, "model.fp16w.onnx")
    fp16_storage(fp32, fp16w)
    files = {"fp32": fp32, "int8": int8, "int8s": int8s, "fp16w": fp16w}

    # The check slice: held-out SNLI test pairs, a fixed sample spread over the file.
    check = nli_data.snli("test")[:: max(1, 9824 // args.check_pairs)][: args.check_pairs]
    results = {name: compare(path, check, tok) for name, path in files.items()}
    keep = args.keep
    if keep == "auto":
        keep = "fp16w" if results["fp32"]["accuracy"] - results["fp16w"]["accuracy"] <= 0.002 else "fp32"
        s8 = results["int8s"]
        if results["fp32"]["accuracy"] - s8["accuracy"] <= 0.005 and s8["batch_effect"] <= 1e-5:
            keep = "int8s"
    chosen = files[keep]

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
        "export": keep,
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
        "kept": keep, "check_pairs": len(check), "exports": results,
        "sha256": sha256(os.path.join(args.out, "model.onnx")),
        "onnxruntime": ort.__version__, "torch": torch.__version__,
    }
    with open(os.path.join(args.out, "export.json"), "w") as f:
        json.dump(report, f, indent=2)
        f.write("\n")
    print(json.dumps(report, indent=2))


if __name__ == "__main__":
    main()
