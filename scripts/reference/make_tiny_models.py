"""Write tiny ONNX NLI models whose outputs are known functions of chosen tokens, for exact tests.

Each model takes the inputs of a cross-encoder and returns three logits per row:

    logit[label] = bias[label] + sum over counted tokens t of W[id(t), label]

where a token is counted when attention_mask is 1; for models with token_type_ids, the entailment
column counts hypothesis tokens (type id 1) only, as entailment is directional, while contradiction
counts both sentences, as contradiction is symmetric. W is zero except for the words below. So the
contradiction logit of a pair is 4 x (number of "never") + 2 x (number of "not"), entailment has +2 per
"also" in the hypothesis, and neutral is a constant 1. Padding changes nothing (masked out), and leaving
out "never" changes the contradiction probability by an amount the tests compute from the softmax by hand.

* nli/testdata/tiny-wordpiece/: inputs input_ids, attention_mask, token_type_ids; output "logits";
  id2label in the order entailment, neutral, contradiction (as some DeBERTa NLI models);
  tokenizer: ../tokenizers/wordpiece.
* nli/testdata/tiny-bpe/: inputs input_ids, attention_mask only (RoBERTa style); output "scores";
  id2label CONTRADICTION, NEUTRAL, ENTAILMENT (as roberta-large-mnli); tokenizer: ../tokenizers/bpe.
  Without type ids every real token counts for every label, premise included.

Needs the `onnx` and `tokenizers` packages.  python scripts/reference/make_tiny_models.py
"""
from __future__ import annotations

import json
import os
import shutil

import numpy as np
import onnx
from onnx import TensorProto, helper, numpy_helper
from tokenizers import Tokenizer

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.normpath(os.path.join(HERE, "..", ".."))
TESTDATA = os.path.join(ROOT, "nli", "testdata")

# word -> {label: weight}, on the word's single token (for byte-level BPE, the token with its leading space).
WEIGHTS = {
    "never": {"contradiction": 4.0},
    "not": {"contradiction": 2.0},
    "also": {"entailment": 2.0},
}
BIAS = {"contradiction": 0.0, "entailment": 0.0, "neutral": 1.0}


def build(name: str, tokenizer_dir: str, id2label: dict[int, str], output: str, type_ids: bool):
    tk = Tokenizer.from_file(os.path.join(TESTDATA, "tokenizers", tokenizer_dir, "tokenizer.json"))
    vocab = tk.get_vocab_size()
    canon = {i: lab.lower() for i, lab in id2label.items()}
    w = np.zeros((vocab, 3), dtype=np.float32)
    for word, per_label in WEIGHTS.items():
        # Byte-level BPE: the form with its leading space, as inside a sentence.
        form = " " + word if tokenizer_dir == "bpe" else word
        ids = tk.encode(form, add_special_tokens=False).ids
        if len(ids) != 1:
            raise SystemExit(f"{name}: {word!r} is {len(ids)} tokens; pick words that are one token")
        for col, lab in canon.items():
            w[ids[0], col] = per_label.get(lab, 0.0)
    bias = np.array([BIAS[canon[c]] for c in range(3)], dtype=np.float32)

    inputs = [
        helper.make_tensor_value_info("input_ids", TensorProto.INT64, ["batch", "sequence"]),
        helper.make_tensor_value_info("attention_mask", TensorProto.INT64, ["batch", "sequence"]),
    ]
    # Split W: the columns counted on every token, and (with type ids) those counted on the hypothesis.
    directional = {c for c, lab in canon.items() if lab == "entailment"} if type_ids else set()
    w_all, w_hyp = w.copy(), np.zeros_like(w)
    for c in directional:
        w_hyp[:, c], w_all[:, c] = w[:, c], 0
    nodes = [
        helper.make_node("Cast", ["attention_mask"], ["mask_f"], to=TensorProto.FLOAT),
        helper.make_node("Unsqueeze", ["mask_f", "axis2"], ["mask"]),  # [B,S,1]
        helper.make_node("Gather", ["W_all", "input_ids"], ["emb_all"], axis=0),  # [B,S,3]
        helper.make_node("Mul", ["emb_all", "mask"], ["counted_all"]),
        helper.make_node("ReduceSum", ["counted_all", "axis1"], ["sum_all"], keepdims=0),  # [B,3]
    ]
    last = "sum_all"
    if type_ids:
        inputs.append(helper.make_tensor_value_info("token_type_ids", TensorProto.INT64, ["batch", "sequence"]))
        nodes += [
            helper.make_node("Mul", ["attention_mask", "token_type_ids"], ["hyp_i"]),
            helper.make_node("Cast", ["hyp_i"], ["hyp_f"], to=TensorProto.FLOAT),
            helper.make_node("Unsqueeze", ["hyp_f", "axis2"], ["hyp"]),
            helper.make_node("Gather", ["W_hyp", "input_ids"], ["emb_hyp"], axis=0),
            helper.make_node("Mul", ["emb_hyp", "hyp"], ["counted_hyp"]),
            helper.make_node("ReduceSum", ["counted_hyp", "axis1"], ["sum_hyp"], keepdims=0),
            helper.make_node("Add", ["sum_all", "sum_hyp"], ["summed"]),
        ]
        last = "summed"
    nodes.append(helper.make_node("Add", [last, "bias"], [output]))
    inits = [numpy_helper.from_array(w_all, "W_all")]
    if type_ids:
        inits.append(numpy_helper.from_array(w_hyp, "W_hyp"))
    graph = helper.make_graph(
        nodes, f"gainsay-{name}", inputs,
        [helper.make_tensor_value_info(output, TensorProto.FLOAT, ["batch", 3])],
        initializer=inits + [
            numpy_helper.from_array(bias, "bias"),
            numpy_helper.from_array(np.array([1], dtype=np.int64), "axis1"),
            numpy_helper.from_array(np.array([2], dtype=np.int64), "axis2"),
        ],
    )
    model = helper.make_model(graph, opset_imports=[helper.make_opsetid("", 17)], producer_name="gainsay-tests")
    model.ir_version = 8
    onnx.checker.check_model(model)
    out = os.path.join(TESTDATA, name)
    os.makedirs(out, exist_ok=True)
    onnx.save(model, os.path.join(out, "model.onnx"))
    shutil.copy(os.path.join(TESTDATA, "tokenizers", tokenizer_dir, "tokenizer.json"), out)
    with open(os.path.join(out, "config.json"), "w") as f:
        json.dump({"model_type": "tiny-test", "max_position_embeddings": 64,
                   "id2label": {str(k): v for k, v in id2label.items()},
                   "label2id": {v: k for k, v in id2label.items()}}, f, indent=2)
        f.write("\n")
    print(name, "->", out)


def main():
    build("tiny-wordpiece", "wordpiece", {0: "entailment", 1: "neutral", 2: "contradiction"}, "logits", True)
    build("tiny-bpe", "bpe", {0: "CONTRADICTION", 1: "NEUTRAL", 2: "ENTAILMENT"}, "scores", False)


if __name__ == "__main__":
    main()
