"""Square lattice x resistance: the exact recurrence, two quadratures, the far field."""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from operator import itemgetter

import mpmath
import numpy as np

from ..exact import square as exact_square
from ..exact.evaluate import evaluate_form, round_enclosures
from ..exact.forms import ExactForm
from ..lattices import Site
from ..lattices.square import SQUARE
from ..methods import square_asymptotic, square_quadrature
from .base import Batch, EvaluatedBatch, Provider


class SquareResistance(Provider):
    lattice = SQUARE
    quantity = "resistance"
    exact_limit = 2000

    def batches(self, extent: int) -> Iterator[Batch]:
        for col in exact_square.columns(extent):
            yield Batch(
                sites=[(col.m, n) for n in range(col.m + 1)],
                nums=list(zip(col.A, col.B, strict=True)),
                dens=col.dens,
                basis=exact_square.BASIS,
            )

    def evaluated_batches(self, extent: int, digits: int, with_exact: bool, start: int = 0,
                          stop: int | None = None) -> Iterator[tuple[int, EvaluatedBatch]]:
        """Values from the fixed-point enclosure of the recurrence (one integer per site, a
        proven error bound per column); exact forms, if asked, from the rational recurrence
        run alongside, printed by ``Column.texts`` (the strings of ``str(form)``).  A row
        the enclosure cannot decide is evaluated from its exact form.
        Columns before ``start`` are run through (the recurrence needs them) but not rounded.
        """
        bits = exact_square.enclosure_bits(extent, digits)
        last = extent if stop is None else min(extent, stop - 1)
        exact_cols = exact_square.columns(last) if with_exact else None
        for m, V, err in exact_square.enclosure_columns(last, bits):
            col = next(exact_cols) if exact_cols is not None else None
            if m < start:
                continue
            rc = round_enclosures(V, err, bits, digits)
            for n in rc.undecided:
                form = col.form(n) if col is not None else exact_square.resistance_form(m, n)
                rc.put(n, evaluate_form(form, digits))
            texts = (col.texts(), ["derived"] * (m + 1)) if col is not None else None
            yield m, EvaluatedBatch([(m, n) for n in range(m + 1)], rc, None, texts=texts)

    def exact_form(self, site: Site) -> ExactForm | None:
        m, n = site
        if m > self.exact_limit:
            return None
        return exact_square.resistance_form(m, n)

    def batch_sites(self, extent: int) -> Iterator[list[Site]]:
        for m in range(extent + 1):
            yield [(m, n) for n in range(m + 1)]

    def batch_count(self, extent: int) -> int:
        return extent + 1

    def batch_sizes(self, extent: int) -> list[int]:
        return list(range(1, extent + 2))

    # measured at N = 1000, 50 digits: running the enclosure recurrence over a row costs
    # about 0.5 us, a row rounded, checked in float64 and rendered about 4.5 us
    prefix_cost = 0.12

    def batch_costs(self, extent: int, digits: int, verify: str) -> list[float] | None:
        """Rows, plus the full-precision check of a column where it runs: about
        (2000 + 0.05 m^2) rows' work at 50 digits (m = 1000: 0.23 s), scaled by digits."""
        from ..tables.build import sampled

        count = extent + 1
        scale = digits / 50
        return [m + 1 + ((2000 + 0.05 * m * m) * scale
                         if verify == "full" or sampled(m, count) else 0.0)
                for m in range(count)]

    def quad_sites(self, sites: list[Site], digits: int) -> list[mpmath.mpf]:
        m = sites[0][0]
        if m == 0:
            return [mpmath.mpf(0) for _ in sites]
        return square_quadrature.column(m, [s[1] for s in sites], digits)

    def quad_float_sites(self, sites: list[Site]) -> Sequence[float]:
        m = sites[0][0]
        if m == 0:
            return [0.0 for _ in sites]
        ns = np.fromiter(map(itemgetter(1), sites), dtype=np.int64, count=len(sites))
        col = square_quadrature.column_float(m, int(ns.max()))
        return col[ns].tolist()

    def quad(self, site: Site, digits: int) -> mpmath.mpf:
        return square_quadrature.resistance_quad(site[0], site[1], digits)

    def asymptotic(self, site: Site, digits: int) -> tuple[mpmath.mpf, mpmath.mpf] | None:
        m, n = site
        if m * m + n * n < square_asymptotic.MIN_R**2:
            return None
        return square_asymptotic.resistance_asymptotic(m, n, digits)

    def memory_estimate(self, extent: int) -> int:
        # three columns of (extent+1) pairs of integers of up to ~2.6*extent bits each, plus
        # Python object overhead; the quadrature nodes are small next to this.
        per_int = 2.6 * extent / 8 + 40
        return int(3 * (extent + 1) * 2 * per_int) + 50_000_000

    def output_estimate(self, extent: int, digits: int, with_exact: bool) -> int:
        sites = self.lattice.region_size(extent)
        per_row = 2 * (digits + 60)  # csv + json, value and bookkeeping columns
        if with_exact:
            # the exact coefficients grow like (3 + 2 sqrt 2)^(m - n): 0.77 (m - n) digits,
            # on average a third of the extent, twice (numerator and pi-coefficient), twice
            # (csv and json)
            per_row += int(4 * 0.77 * extent / 3) + 40
        return sites * per_row


SQUARE_RESISTANCE = SquareResistance()
