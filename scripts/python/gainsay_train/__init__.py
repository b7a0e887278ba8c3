"""Read gainsay's penalty spans in a Python training loop.

* read_records / iter_records: the JSON Lines records of `gainsay check` and `gainsay serve`.
* token_weights: per-token penalty weights for a Hugging Face tokenizer, the rule of `gainsay align`.
* token_unlikelihood_np / sequence_unlikelihood_np / mixed_loss_np: reference losses in NumPy;
  the same names with _torch in gainsay_train.torch_losses when PyTorch is installed.
* GainsayClient: a small client for `gainsay serve` (standard library only).
"""
from .records import iter_records, read_records
from .weights import WHITE_SPACE, token_weights, weights_from_offsets
from .losses import mixed_loss_np, sequence_unlikelihood_np, token_unlikelihood_np
from .client import GainsayBusy, GainsayClient

__all__ = [
    "iter_records", "read_records", "WHITE_SPACE", "token_weights", "weights_from_offsets",
    "token_unlikelihood_np", "sequence_unlikelihood_np", "mixed_loss_np", "GainsayClient", "GainsayBusy",
]
