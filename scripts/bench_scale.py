#!/usr/bin/env python3
"""Benchmark: speed-up of table builds from 1 to 2 worker processes.

    python scripts/bench_scale.py            # both workloads
    python scripts/bench_scale.py --quick    # smaller tables

Two workloads, each built with --workers 1 and --workers 2 in fresh subprocesses, the output
bytes compared (they must be identical):

  quadrature-heavy   square resistance, extent 200, 50 digits, --verify full: every row is
                     checked by the high-precision quadrature (most of the time is there);
  large exact table  square resistance, extent 1000, 50 digits, --verify fast, no exact
                     column: half a million rows rounded from the enclosure, float64 checks,
                     text rendering.

Expected scaling beyond two workers: the work units are independent (each runs the
recurrence up to its first column again, a cost that grows with the square of the unit's
start but stays small next to rounding, checking and rendering), so the speed-up follows the
worker count until the main process, which only writes text, or the disk becomes the limit;
on a Dask cluster (--scheduler) the same units spread over machines.  The script prints; it
asserts nothing.
"""

from __future__ import annotations

import argparse
import hashlib
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def build(extent: int, digits: int, verify: str, workers: int, out: Path) -> float:
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    cmd = [sys.executable, "-m", "latgreen", "table", "square", "--extent", str(extent),
           "--digits", str(digits), "--verify", verify, "--no-exact", "--quiet",
           "--workers", str(workers), "--out", str(out)]
    t = time.perf_counter()
    subprocess.run(cmd, check=True, env=env)
    return time.perf_counter() - t


def digest(d: Path) -> str:
    h = hashlib.sha256()
    for name in ("values.csv", "values.json"):
        h.update((d / name).read_bytes())
    return h.hexdigest()[:16]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true")
    a = ap.parse_args()
    loads = ([("quadrature-heavy", 80, 40, "full"), ("large exact table", 400, 40, "fast")]
             if a.quick else
             [("quadrature-heavy", 200, 50, "full"), ("large exact table", 1000, 50, "fast")])
    print(f"python {sys.version.split()[0]} on {os.cpu_count()} cores "
          "(times include interpreter start-up)")
    for name, extent, digits, verify in loads:
        with tempfile.TemporaryDirectory() as tmp:
            t1 = build(extent, digits, verify, 1, Path(tmp) / "w1")
            t2 = build(extent, digits, verify, 2, Path(tmp) / "w2")
            same = digest(Path(tmp) / "w1") == digest(Path(tmp) / "w2")
        print(f"{name:18s} extent {extent:5d} digits {digits}: 1 worker {t1:7.2f} s, "
              f"2 workers {t2:7.2f} s, speed-up {t1 / t2:4.2f}x, "
              f"bytes {'identical' if same else 'DIFFER'}")


if __name__ == "__main__":
    main()
