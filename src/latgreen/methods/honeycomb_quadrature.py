"""Honeycomb-lattice resistance by quadrature of its Brillouin-zone integral.

With f(k) = 1 + e^{-i k1} + e^{-i k2} (the Bloch A -> B amplitude), |f|^2 =
3 + 2[cos k1 + cos k2 + cos(k1 - k2)], and the honeycomb Green's function at the band edge,

    R(A(0,0), (m, n, s)) = (1/4pi^2) int int 2 [3 - Re(f^s e^{-i(m k1 + n k2)})] / (9 - |f|^2),

with f^0 := 3 on the A sublattice and 9 - |f|^2 = 2[3 - cos k1 - cos k2 - cos(k1 - k2)].
Each cosine term is a triangular-type integral (1/4pi^2) int int (1 - cos(p k1 + q k2)) / (...):
one term 3 x (m, n) on A, three terms (m, n), (m+1, n), (m, n+1) on B.  Here k1 is the
variable integrated analytically (the triangular check integrates over the other one), i.e.
the term (p, q) is the reduced integral of :mod:`latgreen.methods.triangular_quadrature` on the
image (q, p): exponent |p|, frequency q + p/2.  This derivation uses the honeycomb's own Bloch
representation, not the relations R_A = 3 R_tri, R_B = sum of three that the exact forms use,
so it would catch a wrong neighbour convention or a wrong factor there.
"""

from __future__ import annotations

from collections.abc import Sequence

import mpmath
import numpy as np

from ..lattices.base import Site
from .triangular_quadrature import Pair, pair, reduced_adaptive, reduced_batch, reduced_batch_float


def terms(site: Site) -> list[tuple[int, Pair]]:
    """(multiplicity, (E, j)) of the reduced integrals making up R at ``site``."""
    m, n, s = site
    if s == 0:
        return [(3, pair(n, m))]
    return [(1, pair(n, m)), (1, pair(n, m + 1)), (1, pair(n + 1, m))]


def quad_sites(sites: Sequence[Site], digits: int) -> list[mpmath.mpf]:
    """R at each site (one shared rule for all of them), aiming at ``digits`` digits.

    >>> [mpmath.nstr(v, 15) for v in quad_sites([(0, 0, 1), (1, 0, 0)], 20)]
    ['0.666666666666667', '1.0']
    """
    ts = [terms(x) for x in sites]
    pairs = sorted({p for t in ts for _, p in t})
    vals = dict(zip(pairs, reduced_batch(pairs, digits + 2), strict=True))
    with mpmath.workdps(digits + 20):
        return [mpmath.fsum(c * vals[p] for c, p in t) for t in ts]


def quad_float_sites(sites: Sequence[Site]) -> list[float]:
    """The same in float64 (about 13+ digits)."""
    ts = [terms(x) for x in sites]
    pairs = sorted({p for t in ts for _, p in t})
    vals = dict(zip(pairs, np.asarray(reduced_batch_float(pairs)).tolist(), strict=True))
    return [float(sum(c * vals[p] for c, p in t)) for t in ts]


def quad_adaptive(site: Site, digits: int) -> mpmath.mpf:
    """R at one site from mpmath's adaptive tanh-sinh (slow; a cross-check in the tests)."""
    m, n, s = site
    tri = [(m, n)] if s == 0 else [(m, n), (m + 1, n), (m, n + 1)]
    with mpmath.workdps(digits + 20):
        tot = mpmath.fsum(reduced_adaptive(q, p, digits + 5) for p, q in tri)
        return 3 * tot if s == 0 else tot
