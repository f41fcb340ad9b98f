"""Triangular lattice x resistance: exact forms a + b sqrt(3)/pi, a batch quadrature, the far
field."""

from __future__ import annotations

from collections.abc import Iterator, Sequence

import mpmath

from ..exact import triangular as exact_tri
from ..exact.forms import ExactForm
from ..lattices import Site
from ..lattices.triangular import TRIANGULAR
from ..methods import triangular_asymptotic, triangular_quadrature
from .base import Batch, Provider


def _pairs(sites: Sequence[Site]) -> list[tuple[int, int]]:
    # the image (-n, m + n) of a canonical site: exponent m + n, frequency (m - n)/2
    return [triangular_quadrature.pair(-n, m + n) for m, n in sites]


class TriangularResistance(Provider):
    lattice = TRIANGULAR
    quantity = "resistance"
    exact_limit = 500  # R(500, 500) alone costs about a second

    def batches(self, extent: int) -> Iterator[Batch]:
        """Columns m = 0..extent of the sector, from one run of the recurrence (the rows it
        sweeps cross every column, so the whole sector is held: see memory_estimate)."""
        if extent < 0:
            return
        sec = exact_tri.Sector.for_extent(extent)
        for m in range(extent + 1):
            nums, dens = exact_tri.reduce_column([sec.nums(m, n) for n in range(m + 1)],
                                                 sec.dens)
            yield Batch(sites=[(m, n) for n in range(m + 1)], nums=nums, dens=dens,
                        basis=exact_tri.BASIS)

    def batch_sites(self, extent: int) -> Iterator[list[Site]]:
        for m in range(extent + 1):
            yield [(m, n) for n in range(m + 1)]

    def exact_form(self, site: Site) -> ExactForm | None:
        m, n = site
        if m > self.exact_limit:
            return None
        return exact_tri.resistance_form(m, n)

    def quad_sites(self, sites: list[Site], digits: int) -> list[mpmath.mpf]:
        far = [k for k, s in enumerate(sites) if any(s)]
        vals = triangular_quadrature.reduced_batch(_pairs([sites[k] for k in far]), digits)
        out = [mpmath.mpf(0)] * len(sites)
        for k, v in zip(far, vals, strict=True):
            out[k] = v
        return out

    def quad_float_sites(self, sites: list[Site]) -> Sequence[float]:
        vals = triangular_quadrature.reduced_batch_float(_pairs(sites)).tolist()
        return [0.0 if not any(s) else float(v) for s, v in zip(sites, vals, strict=True)]

    def quad(self, site: Site, digits: int) -> mpmath.mpf:
        return triangular_quadrature.resistance_quad(site[0], site[1], digits)

    def asymptotic(self, site: Site, digits: int) -> tuple[mpmath.mpf, mpmath.mpf] | None:
        m, n = site
        if m * m + m * n + n * n < triangular_asymptotic.MIN_D**2:
            return None
        return triangular_asymptotic.far_field_tri(m, n, digits)

    def memory_estimate(self, extent: int) -> int:
        # the sector holds about (extent + 1)^2 pairs of integers of about 10.5 * extent
        # bits (coefficients ~ 13.93^(2 extent) over denominators ~ e^(2 extent))
        per_int = 10.5 * extent / 8 + 40
        return int(2 * (extent + 1) ** 2 * per_int) + 50_000_000

    def output_estimate(self, extent: int, digits: int, with_exact: bool) -> int:
        sites = self.lattice.region_size(extent)
        per_row = 2 * (digits + 60)
        if with_exact:
            # measured: the two printed coefficients take about 1.3 * extent characters
            # each (csv and json: twice); 1.4 for a margin
            per_row += int(4 * 1.4 * extent) + 60
        return sites * per_row


TRIANGULAR_RESISTANCE = TriangularResistance()
