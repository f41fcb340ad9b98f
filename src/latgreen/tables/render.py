"""Rows to text: the CSV lines and JSON rows of one block, with its summary.

Rendering happens where the rows are computed (in a worker process for parallel builds), so
that the main process only writes text.  The text of a table does not depend on how its rows
were split into chunks.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

UNSAFE = re.compile(r'[,"\\\n\r]')


@dataclass
class RowBlock:
    """The rows of one batch, column by column (a million row objects would cost more than
    computing them)."""

    sites: list[tuple[int, ...]]
    values: list[str]
    exacts: list[str]
    hows: list[str]
    bounds: list[str]
    methods: list[str]
    agreements: list[int]
    imags: list[str] | None = None  # complex quantities: values holds the real parts
    imag_bounds: list[str] | None = None

    def __len__(self) -> int:
        return len(self.sites)


@dataclass(frozen=True)
class Stored:
    """A chunk's texts kept in files (UTF-8), with the sha256 they must have."""

    csv: Path
    json: Path
    csv_sha256: str
    json_sha256: str


@dataclass
class Chunk:
    """Rendered rows: ``csv`` lines each ending in a newline, ``json`` rows each preceded by
    ``",\\n"`` (the writer drops the comma before a table's first row)."""

    csv: str = ""
    json: str = ""
    rows: int = 0
    first: tuple[Any, ...] | None = None  # sites, or the keys of a table without sites
    last: tuple[Any, ...] | None = None
    min_agreement: int | None = None
    full_rows: int = 0
    stored: Stored | None = None  # the texts are in files (a checkpoint), not here
    saved: bool = False  # a worker saved the texts into the checkpoint (they are not here)


def merge(parts: list[Chunk]) -> Chunk:
    """One chunk from consecutive ones (joined once: repeated += would copy quadratically)."""
    parts = [p for p in parts if p.rows]
    if not parts:
        return Chunk()
    for a, b in zip(parts, parts[1:], strict=False):
        if a.last is not None and b.first is not None and b.first <= a.last:
            raise AssertionError(f"rows out of order near {b.first}")
    agrees = [p.min_agreement for p in parts if p.min_agreement is not None]
    return Chunk(
        csv="".join(p.csv for p in parts), json="".join(p.json for p in parts),
        rows=sum(p.rows for p in parts), first=parts[0].first, last=parts[-1].last,
        min_agreement=min(agrees) if agrees else None,
        full_rows=sum(p.full_rows for p in parts),
    )


def render(blk: RowBlock) -> Chunk:
    """CSV lines and JSON rows for a block (checked: every text field is plain ASCII without
    quotes, commas, backslashes or line ends, so no quoting or escaping is needed)."""
    if not len(blk):
        return Chunk()
    sites = blk.sites
    if any(a >= b for a, b in zip(sites, sites[1:], strict=False)):
        raise AssertionError(f"rows out of order near {sites[0]}")
    blob = "".join(blk.values) + "".join(blk.exacts) + "".join(blk.hows) + "".join(
        blk.bounds) + "".join(blk.methods) + "".join(blk.imags or ()) + "".join(
        blk.imag_bounds or ())
    if not blob.isascii() or UNSAFE.search(blob):
        raise AssertionError(f"unexpected character in the rows near {sites[0]}")
    coords = [",".join(map(str, st)) for st in sites]
    if blk.imags is not None and blk.imag_bounds is not None:
        # complex values: value_re, value_im, exact, exact_how, error_bound_re,
        # error_bound_im, methods, agreement_digits
        cols = list(zip(coords, blk.values, blk.imags, blk.exacts, blk.hows, blk.bounds,
                        blk.imag_bounds, blk.methods, blk.agreements, strict=True))
        csv = "".join(",".join(map(str, r)) + "\n" for r in cols)
        js = "".join(f",\n[{r[0]}," + ",".join(f'"{x}"' for x in r[1:8]) + f",{r[8]}]"
                     for r in cols)
    else:
        fields = list(zip(coords, blk.values, blk.exacts, blk.hows, blk.bounds, blk.methods,
                          blk.agreements, strict=True))
        csv = "".join(f"{c},{v},{x},{h},{e},{mt},{a}\n" for c, v, x, h, e, mt, a in fields)
        js = "".join(f',\n[{c},"{v}","{x}","{h}","{e}","{mt}",{a}]'
                     for c, v, x, h, e, mt, a in fields)
    checked = [a for a, mt in zip(blk.agreements, blk.methods, strict=True)
               if mt != "definition"]
    return Chunk(
        csv=csv, json=js, rows=len(sites), first=sites[0], last=sites[-1],
        min_agreement=min(checked) if checked else None,
        full_rows=sum(1 for mt in blk.methods
                      if mt != "definition" and "quadrature-float64" not in mt),
    )
