import os
import shutil
import sys

import pytest

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.normpath(os.path.join(HERE, "..", "..", ".."))
sys.path.insert(0, os.path.join(ROOT, "scripts", "python"))


@pytest.fixture(scope="session")
def root():
    return ROOT


@pytest.fixture(scope="session")
def gainsay_bin():
    """The gainsay binary: $GAINSAY_BIN, bin/gainsay (make build), or gainsay on PATH."""
    for cand in (os.environ.get("GAINSAY_BIN"), os.path.join(ROOT, "bin", "gainsay"), shutil.which("gainsay")):
        if cand and os.path.exists(cand):
            return cand
    pytest.fail("no gainsay binary: run `make build` or set GAINSAY_BIN")
