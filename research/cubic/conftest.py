import os
import sys

import flint
import gmpy2
import mpmath
import pytest

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))


@pytest.fixture(autouse=True)
def no_precision_leak():
    """Fail a test that leaves mpmath, python-flint or gmpy2 precision changed."""
    before = (mpmath.mp.prec, flint.ctx.prec, gmpy2.get_context().precision)
    yield
    after = (mpmath.mp.prec, flint.ctx.prec, gmpy2.get_context().precision)
    assert after == before, f"precision leaked: {before} -> {after}"
