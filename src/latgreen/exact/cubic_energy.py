"""Exact forms of the cubic lattices' G(E; r) at an exact energy E (rational, on the band
E + i0, or Gaussian rational with Im E > 0), through G(E; 0) and its first two derivatives.

Every G(E; r) is  a + b G0 + c G0' + d G0''  with a, b, c, d in Q(E) (rationals for real E,
Gaussian rationals for complex E; depending on E and r)
and G0 = G(E; 0), G0' = dG(E; 0)/dE, G0'' = d^2 G(E; 0)/dE^2 (``derived``: no identified
value enters).  The relations (the band-edge versions are in ``exact/cubic.py``; all of them
hold at every E off the band, and on it for E + i0 wherever G0' and G0'' are finite):

(L_j)  E G^(j)(s) - sum_e G^(j)(s + e) + j G^(j-1)(s) = delta_{j,0} delta_{s,0},  j = 0, 1, 2:
       the lattice equation (E - H) G = delta and its derivatives in E;
(E_j)  s_i X^(j)(s) = sum_e e_i G^(j)(s + e)  for every axis i and site s with s_i != 0,
       X^(0) = L, X^(1) = G, X^(2) = G':  (E_0) is (E1) of ``exact/cubic.py`` with
       L(s) = (2 pi)^-3 int e^(ik.s) ln(E - eps(k)) d^3k (integrate the k_i-derivative of
       e^(ik.s) ln(E - eps) over a period); dL/dE = G gives (E_1), (E_2) by differentiating.

**Closure (found by computation, checked at run time).**  With G only ((L_0), (E_0)) the
finite system on a region leaves three values free (G0 and two more: at the band edge these
are the two *identified* seeds of ``exact/cubic.py``).  With the derivatives, the system of
(L_j), (E_j), j = 0, 1, 2, on the canonical sites of a small region (unknowns G^(j) one layer
further out, L on the region) determines every G^(j)(s) once G^(j)(0), j = 0, 1, 2, are given:
python-flint's exact rref over Q reports full column rank (at a complex E the system over
Q(i) is realified, ``exact/cubic.solve_rows``).  We solve it once per energy for
the two sites that the band-edge recursions take as seeds (sc: (1,1,0), (1,1,1); bcc:
(2,0,0), (2,2,0); fcc: (2,0,0), (2,1,1)); every solve checks that each needed value is
determined and that the system is consistent, and refuses otherwise.  The rest of the table
comes from the band-edge recursions of ``exact/cubic.py`` run at E instead of z (the sc
march (E1) + (C3), the bcc/fcc layered solves of (L) + (E1)) on the basis (1, G0, G0', G0'').

G0, G0', G0'' are certified balls (``methods/cubic_green_closed.origin_jet``: the closed
forms in power-series arithmetic).  Excluded energies, where a derivative is infinite or the
closed form has a removable singularity: the band edges, the van Hove points (sc +-2, fcc 0),
E = 0 (and there bcc, like fcc at E = -4, diverges itself).  Complex energies have none.

The coefficients grow with the distance while G decays, so the evaluation cancels digits:
the working precision follows the coefficient sizes (``start_bits``), and the ball arithmetic
certifies whatever is printed.
"""

from __future__ import annotations

from collections import OrderedDict
from fractions import Fraction
from typing import Any

import flint

from ..energy import Energy
from ..lattices import Site
from ..methods.cubic_green_closed import JET_EXCLUDED
from .cubic import _SC, LATTICE, QI, _canon, _Layered, solve_rows
from .square_green import GreenForm

Vec = tuple[Any, ...]  # coefficients of (1, G0, G0', G0''): Fractions, or QI at complex E
Field = Fraction | QI  # an exact energy: rational, or Gaussian rational (Im E > 0)
UNIT: Vec = (Fraction(1), Fraction(0), Fraction(0), Fraction(0))
NAMES = ("G0", "dG0", "d2G0")
EXCLUDED = JET_EXCLUDED  # where the jet of G(E; 0) does not exist
SEED_SITES = {"sc": ((1, 1, 0), (1, 1, 1)), "bcc": ((2, 0, 0), (2, 2, 0)),
              "fcc": ((2, 0, 0), (2, 1, 1))}


def available(lattice: str, E: Field) -> bool:
    """True if the exact forms are offered at E (module docstring): every complex energy and
    the real ones other than EXCLUDED."""
    return isinstance(E, QI) or E not in EXCLUDED[lattice]


def field(E: Energy) -> Field:
    """The energy as an element of the field the relations live in."""
    return E.re if E.im == 0 else QI(E.re, E.im)


def _basis_vec(j: int) -> Vec:
    v = [Fraction(0)] * 4
    v[j + 1] = Fraction(1)
    return tuple(v)


def _solve_block(lattice: str, E: Field, N: int) -> dict[Site, Vec] | None:
    """The system (L_j), (E_j), j = 0, 1, 2 on the canonical sites of extent N (module
    docstring); the vectors of SEED_SITES, or None if one of them is not determined.
    ArithmeticError if the system is inconsistent (a wrong relation)."""
    lat = LATTICE[lattice]
    nb = lat.neighbours
    fixed = {("G", j, (0, 0, 0)): _basis_vec(j) for j in range(3)}
    idx: dict[tuple[str, int, Site], int] = {}
    rows: list[tuple[dict[int, Any], Vec]] = []
    zero: Vec = (Fraction(0),) * 4

    def add(terms: list[tuple[Any, tuple[str, int, Site]]], rhs: Vec) -> None:
        r: dict[int, Any] = {}
        for c, key in terms:
            if key in fixed:
                rhs = tuple(x - c * y for x, y in zip(rhs, fixed[key], strict=True))
            else:
                k = idx.setdefault(key, len(idx))
                r[k] = r.get(k, Fraction(0)) + c
        rows.append((r, rhs))

    for s in lat.region(N):
        shifted = [(e, _canon((s[0] + e[0], s[1] + e[1], s[2] + e[2]))) for e in nb]
        for j in range(3):
            terms = [(E, ("G", j, s))] + [(Fraction(-1), ("G", j, t)) for _, t in shifted]
            if j:
                terms.append((Fraction(j), ("G", j - 1, s)))
            add(terms, UNIT if j == 0 and not any(s) else zero)
            for i in range(3):
                if s[i] == 0:
                    continue
                x = ("L", 0, s) if j == 0 else ("G", j - 1, s)
                add([(Fraction(s[i]), x)] + [(Fraction(-e[i]), ("G", j, t))
                                             for e, t in shifted if e[i]], zero)
    got = solve_rows(rows, len(idx), 4, f"{lattice} at E = {E}")
    out: dict[Site, Vec] = {}
    for s in SEED_SITES[lattice]:
        v = got.get(idx[("G", 0, s)])
        if v is None:
            return None
        out[s] = v
    return out


def seed_vectors(lattice: str, E: Field) -> dict[Site, Vec]:
    """G at the origin, (sc) the neighbour, and the two seed sites on the basis
    (1, G0, G0', G0''); ArithmeticError where the system does not determine them."""
    if not available(lattice, E):
        raise ArithmeticError(f"{lattice}: no exact forms through G0' and G0'' at E = {E}")
    for N in range(3, 7):
        got = _solve_block(lattice, E, N)
        if got is not None:
            break
    else:
        raise ArithmeticError(f"{lattice} at E = {E}: the seeds are not determined")
    seeds: dict[Site, Vec] = {(0, 0, 0): _basis_vec(0), **got}
    if lattice == "sc":
        seeds[(1, 0, 0)] = (Fraction(-1, 6), E * Fraction(1, 6), Fraction(0), Fraction(0))
    return seeds


_CACHE: OrderedDict[tuple[str, Field], _SC | _Layered] = OrderedDict()


def green_vectors(lattice: str, E: Field, extent: int) -> dict[Site, Vec]:
    """G(E; s) on the basis (1, G0, G0', G0'') for every canonical site with first coordinate
    up to ``extent`` (grown on demand; the last four energies are kept; do not modify).

    >>> v = green_vectors("bcc", Fraction(9), 1)[(1, 1, 1)]
    >>> v  # (E G0 - 1)/8: the lattice equation at the origin, common practice
    (Fraction(-1, 8), Fraction(9, 8), Fraction(0, 1), Fraction(0, 1))
    """
    key = (lattice, E)
    t = _CACHE.get(key)
    if t is None:
        seeds = seed_vectors(lattice, E)
        t = _SC(E, seeds) if lattice == "sc" else _Layered(lattice, E, seeds, UNIT)
        _CACHE[key] = t
        while len(_CACHE) > 4:
            _CACHE.popitem(last=False)
    _CACHE.move_to_end(key)
    t.grow(max(extent, 1))
    return t.G


def green_form(lattice: str, E: Field, site: Site, how: str = "derived") -> GreenForm:
    """The exact form of G(E; site), canonical site, printed as a*G0 + b*dG0 + c*d2G0 + d;
    ``how`` is the caller's label (the coefficients are derived; the closed form of G0 that
    gives the names their values may not be).

    >>> str(green_form("sc", Fraction(7), (1, 0, 0)))
    '7/6*G0 - 1/6'
    """
    v = [_pair(x) for x in green_vectors(lattice, E, site[0])[site]]
    return GreenForm((v[1], v[2], v[3], v[0]), how, NAMES)


def _pair(x: Any) -> tuple[Fraction, Fraction]:
    return (x.re, x.im) if isinstance(x, QI) else (Fraction(x), Fraction(0))


def start_bits(v: Vec, digits: int) -> int:
    """Working precision for a + b G0 + c G0' + d G0'' at ``digits`` digits: the digits, the
    largest coefficient (what the cancellation can cost) and a guard."""
    size = max(p.numerator.bit_length() - p.denominator.bit_length()
               for x in v for p in _pair(x) if p)
    bits = int(digits * 3.33) + max(size, 0) + 64
    return -(-bits // 64) * 64  # a multiple of 64: rows of a table share the jet's precision


def ball(v: Vec, jet: list[flint.acb]) -> flint.acb:
    """a + b G0 + c G0' + d G0'' from the balls ``jet`` = [G0, G0', G0''] at the caller's
    precision."""
    def c(x: Any) -> flint.acb:
        re, im = _pair(x)
        return flint.acb(flint.fmpq(re.numerator, re.denominator),
                         flint.fmpq(im.numerator, im.denominator))

    acc = c(v[0])
    for x, g in zip(v[1:], jet, strict=True):
        if x:
            acc += c(x) * g
    return acc
