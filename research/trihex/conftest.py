import mpmath
import pytest
from flint import ctx

collect_ignore = ["scripts"]


@pytest.fixture(autouse=True)
def _no_precision_leak():
    """Fails a test that leaves mpmath's or python-flint's global precision changed."""
    dps, prec = mpmath.mp.dps, ctx.prec
    yield
    assert mpmath.mp.dps == dps, "mpmath precision leaked"
    assert ctx.prec == prec, "flint precision leaked"


def pytest_configure(config):
    config.addinivalue_line("markers", "slow: slower cross-checks")
