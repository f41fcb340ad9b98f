"""Shared fixtures.  The autouse fixture fails any test that leaks a changed working precision
(mpmath, python-flint or gmpy2): precision must be scoped, never set and left."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import flint
import gmpy2
import mpmath
import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(autouse=True)
def no_precision_leak():
    before = (mpmath.mp.prec, flint.ctx.prec, gmpy2.get_context().precision)
    yield
    after = (mpmath.mp.prec, flint.ctx.prec, gmpy2.get_context().precision)
    assert after == before, f"working precision leaked: {before} -> {after}"


def run_cli(*args: str, cwd: Path | None = None,
            timeout: float = 300) -> subprocess.CompletedProcess:
    """Run the command line in a subprocess, as a user would."""
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT / "src") + os.pathsep + env.get("PYTHONPATH", "")
    return subprocess.run([sys.executable, "-m", "latgreen", *args], capture_output=True,
                          text=True, cwd=cwd, timeout=timeout, env=env, stdin=subprocess.DEVNULL)
