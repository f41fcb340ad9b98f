"""Honeycomb lattice x resistance: exact forms from the triangular ones, the honeycomb's own
Brillouin-zone quadrature, the far field."""

from __future__ import annotations

from collections.abc import Iterator, Sequence

import mpmath

from ..exact import honeycomb as exact_hc
from ..exact.forms import ExactForm
from ..lattices import Site
from ..lattices.honeycomb import HONEYCOMB, column_sites, distance2
from ..methods import honeycomb_quadrature, triangular_asymptotic
from .base import Batch, Provider


class HoneycombResistance(Provider):
    lattice = HONEYCOMB
    quantity = "resistance"
    exact_limit = 500

    def batches(self, extent: int) -> Iterator[Batch]:
        for col in exact_hc.columns(extent):
            yield Batch(sites=col.sites, nums=col.nums, dens=col.dens, basis=exact_hc.BASIS)

    def batch_sites(self, extent: int) -> Iterator[list[Site]]:
        for m in range(extent + 1):
            yield column_sites(m)

    def exact_form(self, site: Site) -> ExactForm | None:
        if site[0] > self.exact_limit:
            return None
        return exact_hc.resistance_form(*site)

    def quad_sites(self, sites: list[Site], digits: int) -> list[mpmath.mpf]:
        far = [k for k, s in enumerate(sites) if any(s)]
        vals = honeycomb_quadrature.quad_sites([sites[k] for k in far], digits)
        out = [mpmath.mpf(0)] * len(sites)
        for k, v in zip(far, vals, strict=True):
            out[k] = v
        return out

    def quad_float_sites(self, sites: list[Site]) -> Sequence[float]:
        vals = honeycomb_quadrature.quad_float_sites(sites)
        return [0.0 if not any(s) else v for s, v in zip(sites, vals, strict=True)]

    def quad(self, site: Site, digits: int) -> mpmath.mpf:
        return self.quad_sites([site], digits)[0]

    def asymptotic(self, site: Site, digits: int) -> tuple[mpmath.mpf, mpmath.mpf] | None:
        if distance2(site) < triangular_asymptotic.MIN_D**2:
            return None
        m, n, s = site
        return triangular_asymptotic.far_field_hc(m, n, s, digits)

    def memory_estimate(self, extent: int) -> int:
        # the triangular sector of extent + 1 (see TriangularResistance.memory_estimate)
        e = extent + 1
        return int(2 * (e + 1) ** 2 * (10.5 * e / 8 + 40)) + 50_000_000

    def output_estimate(self, extent: int, digits: int, with_exact: bool) -> int:
        sites = self.lattice.region_size(extent)
        per_row = 2 * (digits + 60)
        if with_exact:
            per_row += int(4 * 1.4 * extent) + 60  # as measured for the triangular lattice
        return sites * per_row


HONEYCOMB_RESISTANCE = HoneycombResistance()
