"""Run the command line inside the test process (no interpreter start-up: a subprocess costs
about a second here), capturing what it prints and its exit status."""

from __future__ import annotations

import contextlib
import io
import signal
import subprocess


def cli(*args: str) -> subprocess.CompletedProcess:
    from latgreen.cli import main

    out, err = io.StringIO(), io.StringIO()
    old = signal.getsignal(signal.SIGTERM)  # main() installs its own handler
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            try:
                rc = main(list(args))
            except SystemExit as e:  # argparse
                rc = e.code if isinstance(e.code, int) else 2
    finally:
        signal.signal(signal.SIGTERM, old)
    return subprocess.CompletedProcess(list(args), rc, out.getvalue(), err.getvalue())
