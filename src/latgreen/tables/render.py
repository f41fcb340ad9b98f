"""Rows to text: the CSV lines and JSON rows of one block, with its summary.

Rendering happens where the rows are computed (in a worker process for parallel builds), so
that the main process only writes text.  The text of a table does not depend on how its rows
were split into chunks.
"""

from __future__ import annotations

import operator
import re
from collections import Counter
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


_INT_TEXT: dict[int, str] = {i: str(i) for i in range(4096)}


def _int_texts(col: list[int]) -> list[str]:
    """``[str(v) for v in col]`` with the texts of small non-negative integers (coordinates,
    agreement digits) looked up instead of formatted."""
    try:
        return list(map(_INT_TEXT.__getitem__, col))
    except KeyError:
        return list(map(str, col))


def _rows_text(parts: list[str | list[str]], n: int) -> str:
    """``n`` rows of text, row k the concatenation of ``parts`` (a string shared by every
    row, or a column of n strings).  Constant columns are folded into the strings around
    them and the rest interleaved into one list, so the whole block is one str.join (no
    Python-level work per row)."""
    merged: list[str | list[str]] = []
    for p in parts:
        if isinstance(p, list) and p.count(p[0]) == n:  # the same text in every row
            p = p[0]
        if isinstance(p, str) and merged and isinstance(merged[-1], str):
            merged[-1] += p
        elif p != "":
            merged.append(p)
    width = len(merged)
    flat: list[str] = [""] * (width * n)
    for j, p in enumerate(merged):
        flat[j::width] = [p] * n if isinstance(p, str) else p
    return "".join(flat)


def render(blk: RowBlock) -> Chunk:
    """CSV lines and JSON rows for a block (checked: every text field is plain ASCII without
    quotes, commas, backslashes or line ends, so no quoting or escaping is needed)."""
    n = len(blk)
    if not n:
        return Chunk()
    sites = blk.sites
    if not all(map(operator.lt, sites, sites[1:])):
        raise AssertionError(f"rows out of order near {sites[0]}")
    blob = "".join(blk.values) + "".join(blk.exacts) + "".join(blk.hows) + "".join(
        blk.bounds) + "".join(blk.methods) + "".join(blk.imags or ()) + "".join(
        blk.imag_bounds or ())
    if not blob.isascii() or any(c in blob for c in ',"\\\n\r'):
        raise AssertionError(f"unexpected character in the rows near {sites[0]}")
    if blk.imags is not None and blk.imag_bounds is not None:
        # complex values: value_re, value_im, exact, exact_how, error_bound_re,
        # error_bound_im, methods, agreement_digits
        coords = [",".join(map(str, st)) for st in sites]
        cols = list(zip(coords, blk.values, blk.imags, blk.exacts, blk.hows, blk.bounds,
                        blk.imag_bounds, blk.methods, blk.agreements, strict=True))
        csv = "".join(",".join(map(str, r)) + "\n" for r in cols)
        js = "".join(f",\n[{r[0]}," + ",".join(f'"{x}"' for x in r[1:8]) + f",{r[8]}]"
                     for r in cols)
    else:
        for col in (blk.values, blk.exacts, blk.hows, blk.bounds, blk.methods,
                    blk.agreements):
            if len(col) != n:
                raise ValueError("the columns of a block differ in length")
        coord_cols = [_int_texts(list(map(operator.itemgetter(j), sites)))
                      for j in range(len(sites[0]))]
        agrees = _int_texts(blk.agreements)
        texts = [blk.values, blk.exacts, blk.hows, blk.bounds, blk.methods]
        c_parts: list[str | list[str]] = []
        j_parts: list[str | list[str]] = [",\n["]
        for j, c in enumerate(coord_cols):
            c_parts += [",", c] if j else [c]
            j_parts += [",", c] if j else [c]
        for t in texts:
            c_parts += [",", t]
            j_parts += [',"', t, '"']
        c_parts += [",", agrees, "\n"]
        j_parts += [",", agrees, "]"]
        csv = _rows_text(c_parts, n)
        js = _rows_text(j_parts, n)
    counts = Counter(blk.methods)
    if "definition" in counts:
        checked = [a for a, mt in zip(blk.agreements, blk.methods, strict=True)
                   if mt != "definition"]
    else:
        checked = blk.agreements
    return Chunk(
        csv=csv, json=js, rows=n, first=sites[0], last=sites[-1],
        min_agreement=min(checked) if checked else None,
        full_rows=sum(k for mt, k in counts.items()
                      if mt != "definition" and "quadrature-float64" not in mt),
    )
