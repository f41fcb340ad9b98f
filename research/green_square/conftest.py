import sys
from pathlib import Path

import mpmath
import pytest
from flint import ctx

sys.path.insert(0, str(Path(__file__).parent))


@pytest.fixture(autouse=True)
def no_precision_leak():
    """Every test must leave mpmath's and python-flint's working precision as it found it."""
    before = (mpmath.mp.prec, ctx.prec)
    yield
    assert (mpmath.mp.prec, ctx.prec) == before, "working precision leaked"


def pytest_configure(config):
    config.addinivalue_line("markers", "slow: slower cross-checks (run with -m slow)")
