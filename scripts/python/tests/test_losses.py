"""The losses against hand-computed values of the published formulas (Welleck et al. 2019):
L_UL = -sum_t w_t log(1 - p(y_t | x_<t)), L = L_MLE + alpha L_UL."""
import math

import numpy as np
import pytest

from gainsay_train import mixed_loss_np, sequence_unlikelihood_np, token_unlikelihood_np
from gainsay_train.losses import mle_np

P = np.array([[0.5, 0.3, 0.2], [0.1, 0.8, 0.1]])
LOGP = np.log(P)


def test_token_unlikelihood_by_hand():
    # y = [0, 1]: p = 0.5 and 0.8; weights 1 and 0.5.
    # -(1 * log(1 - 0.5) + 0.5 * log(1 - 0.8)) = 0.693147... + 0.804719... = 1.497866...
    assert token_unlikelihood_np(LOGP, [0, 1], [1.0, 0.5]) == pytest.approx(-math.log(0.5) - 0.5 * math.log(0.2), abs=1e-12)
    assert token_unlikelihood_np(LOGP, [0, 1], [1.0, 0.5]) == pytest.approx(1.4978661367769954, abs=1e-12)
    assert token_unlikelihood_np(LOGP, [0, 1], [0.0, 0.0]) == 0.0


def test_sequence_unlikelihood_by_hand():
    # Every token of a flagged reply is a candidate: -(log 0.5 + log 0.2) = log 10.
    assert sequence_unlikelihood_np(LOGP, [0, 1], True) == pytest.approx(math.log(10), abs=1e-12)
    assert sequence_unlikelihood_np(LOGP, [0, 1], False) == 0.0


def test_mixed_by_hand():
    # MLE of [1, 1]: -(log 0.3 + log 0.8); plus alpha = 0.5 times the token loss above.
    mle = -(math.log(0.3) + math.log(0.8))
    assert mle_np(LOGP, [1, 1]) == pytest.approx(mle, abs=1e-12)
    got = mixed_loss_np(LOGP, [1, 1], LOGP, [0, 1], [1.0, 0.5], alpha=0.5)
    assert got == pytest.approx(mle + 0.5 * 1.4978661367769954, abs=1e-12)


def test_probability_one_stays_finite():
    logp = np.log(np.array([[1.0, 1e-30]]))
    assert math.isfinite(token_unlikelihood_np(logp, [0], [1.0]))


def test_shapes_are_checked():
    with pytest.raises(ValueError):
        token_unlikelihood_np(LOGP, [0], [1.0])


def test_torch_matches_numpy():
    torch = pytest.importorskip("torch")
    from gainsay_train.torch_losses import mixed_loss_torch, sequence_unlikelihood_torch, token_unlikelihood_torch

    logp = torch.tensor(LOGP, requires_grad=True)
    y = torch.tensor([0, 1])
    w = torch.tensor([1.0, 0.5], dtype=torch.float64)
    loss = token_unlikelihood_torch(logp, y, w)
    assert loss.item() == pytest.approx(token_unlikelihood_np(LOGP, [0, 1], [1.0, 0.5]), abs=1e-12)
    loss.backward()
    assert logp.grad is not None
    assert sequence_unlikelihood_torch(logp, y, True).item() == pytest.approx(math.log(10), abs=1e-12)
    got = mixed_loss_torch(logp, torch.tensor([1, 1]), logp, y, w, 0.5).item()
    assert got == pytest.approx(mixed_loss_np(LOGP, [1, 1], LOGP, [0, 1], [1.0, 0.5], 0.5), abs=1e-12)
