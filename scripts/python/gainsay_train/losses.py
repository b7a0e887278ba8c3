"""Reference unlikelihood losses in NumPy (Welleck et al. 2019, "Neural Text Generation with Unlikelihood
Training").

Token level, for one sequence with next-token log-probabilities logp[t, v] (log p(v | x_<t)), the sampled
tokens y[t] and penalty weights w[t] in [0, 1] (from gainsay):

    L_UL = - sum_t w[t] * log(1 - p(y[t] | x_<t))

Sequence level, for a reply judged contradicting as a whole, every token of it is a candidate (w = 1).
The training loss mixes them with the likelihood loss of the reference data:

    L = L_MLE + alpha * L_UL

Probabilities are clipped to at most 1 - eps before log(1 - p), common practice to keep the loss finite.
"""
from __future__ import annotations

import numpy as np

EPS = 1e-6


def _picked(logp: np.ndarray, y: np.ndarray) -> np.ndarray:
    logp = np.asarray(logp, dtype=np.float64)
    y = np.asarray(y, dtype=np.int64)
    if logp.ndim != 2 or y.shape != (logp.shape[0],):
        raise ValueError(f"want logp [T, V] and y [T], got {logp.shape} and {y.shape}")
    return logp[np.arange(len(y)), y]


def token_unlikelihood_np(logp, y, w, eps: float = EPS) -> float:
    p = np.minimum(np.exp(_picked(logp, y)), 1.0 - eps)
    w = np.asarray(w, dtype=np.float64)
    return float(-(w * np.log1p(-p)).sum())


def sequence_unlikelihood_np(logp, y, flagged: bool, eps: float = EPS) -> float:
    if not flagged:
        return 0.0
    return token_unlikelihood_np(logp, y, np.ones(len(y)), eps)


def mle_np(logp, y) -> float:
    return float(-_picked(logp, y).sum())


def mixed_loss_np(logp_ref, y_ref, logp_sample, y_sample, w, alpha: float) -> float:
    """Likelihood loss on the reference sequence plus alpha times the token-level unlikelihood loss on a
    sampled sequence with gainsay's weights."""
    return mle_np(logp_ref, y_ref) + alpha * token_unlikelihood_np(logp_sample, y_sample, w)
