"""The losses of losses.py in PyTorch, for use inside a training step (differentiable)."""
from __future__ import annotations

import torch

EPS = 1e-6


def token_unlikelihood_torch(logp: torch.Tensor, y: torch.Tensor, w: torch.Tensor, eps: float = EPS) -> torch.Tensor:
    """logp [T, V] log-probabilities, y [T] sampled tokens, w [T] weights: -sum w log(1 - p(y))."""
    p = logp.gather(-1, y.unsqueeze(-1)).squeeze(-1).exp().clamp(max=1.0 - eps)
    return -(w * torch.log1p(-p)).sum()


def sequence_unlikelihood_torch(logp: torch.Tensor, y: torch.Tensor, flagged: bool, eps: float = EPS) -> torch.Tensor:
    if not flagged:
        return logp.new_zeros(())
    return token_unlikelihood_torch(logp, y, torch.ones_like(y, dtype=logp.dtype), eps)


def mixed_loss_torch(logp_ref, y_ref, logp_sample, y_sample, w, alpha: float) -> torch.Tensor:
    mle = -logp_ref.gather(-1, y_ref.unsqueeze(-1)).sum()
    return mle + alpha * token_unlikelihood_torch(logp_sample, y_sample, w)
