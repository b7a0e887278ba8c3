"""Export all-MiniLM-L6-v2, the sentence encoder gainsay's relevance gate uses, to ONNX.

    python scripts/train/export_embedder.py --out models/builtin/relevance

The graph is the base model with its own pooling, as sentence-transformers runs it: the token vectors
mean-pooled over the attention mask, then L2-normalised, so that a dot product is the cosine. Inputs
input_ids, attention_mask, token_type_ids; output "embedding" [batch, 384]. Weights are stored as float16
and cast back to float32 at load (as the NLI model's; float32 arithmetic, so batching changes nothing).
The check compares the export with the PyTorch model on 200 sentences of SNLI test and DECODE.
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
from torch import nn
from transformers import AutoModel, AutoTokenizer

import nli_data
from export_onnx import fp16_storage
from train_nli import base_model_dir


class Encoder(nn.Module):
    def __init__(self, base: str):
        super().__init__()
        self.encoder = AutoModel.from_pretrained(base)

    def forward(self, input_ids, attention_mask, token_type_ids):
        h = self.encoder(input_ids=input_ids, attention_mask=attention_mask, token_type_ids=token_type_ids).last_hidden_state
        m = attention_mask.unsqueeze(-1).to(h.dtype)
        pooled = (h * m).sum(1) / m.sum(1).clamp(min=1e-9)
        return nn.functional.normalize(pooled, p=2, dim=1)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--out", required=True)
    args = ap.parse_args()
    base = base_model_dir()
    tok = AutoTokenizer.from_pretrained(base)
    model = Encoder(base).eval()
    os.makedirs(args.out, exist_ok=True)
    tmp = os.path.join(args.out, "model.fp32.onnx")
    dummy = tok(["I live on the coast."], return_tensors="pt")
    torch.onnx.export(
        model, (dummy["input_ids"], dummy["attention_mask"], dummy["token_type_ids"]), tmp,
        input_names=["input_ids", "attention_mask", "token_type_ids"], output_names=["embedding"],
        dynamic_axes={n: {0: "batch", 1: "sequence"} for n in ("input_ids", "attention_mask", "token_type_ids")}
        | {"embedding": {0: "batch"}}, opset_version=17, dynamo=False)
    path = os.path.join(args.out, "model.onnx")
    fp16_storage(tmp, path)
    os.remove(tmp)
    shutil.copy(os.path.join(base, "tokenizer.json"), os.path.join(args.out, "tokenizer.json"))
    with open(os.path.join(base, "config.json")) as f:
        base_cfg = json.load(f)
    cfg = {"model_type": "bert", "architectures": ["GainsaySentenceEncoder"], "pooling": "mean", "normalize": True,
           "hidden_size": base_cfg["hidden_size"], "max_position_embeddings": base_cfg["max_position_embeddings"],
           "max_length": 256, "base_model": "sentence-transformers/all-MiniLM-L6-v2"}
    with open(os.path.join(args.out, "config.json"), "w") as f:
        json.dump(cfg, f, indent=2)
        f.write("\n")
    # Check: the export against PyTorch.
    texts = [p.hypothesis for p in nli_data.snli("test")[:100]] + [p.hypothesis for p in nli_data.decode(True)[:100]]
    sess = ort.InferenceSession(path, providers=["CPUExecutionProvider"])
    worst = 0.0
    for t in texts:
        e = tok([t], return_tensors="np")
        got = sess.run(["embedding"], {k: e[k].astype(np.int64) for k in ("input_ids", "attention_mask", "token_type_ids")})[0][0]
        with torch.no_grad():
            ep = tok([t], return_tensors="pt")
            want = model(ep["input_ids"], ep["attention_mask"], ep["token_type_ids"])[0].numpy()
        worst = max(worst, float(np.abs(got - want).max()))
    h = hashlib.sha256(open(path, "rb").read()).hexdigest()
    print(json.dumps({"sha256": h, "bytes": os.path.getsize(path), "max_abs_diff_vs_torch": worst}, indent=1))


if __name__ == "__main__":
    main()
