"""Geometry, Watson constants and return probabilities of the cubic lattices sc, bcc, fcc.

Conventions (latgreen DESIGN.md): hopping +1 on nearest-neighbour bonds, coordination z,
G(E; r) = <0|(E - H)^-1|r>.  Sites are integer triples (l, m, n):

* sc:  any integers, neighbours the 6 vectors (+-1,0,0) and permutations, z = 6, band [-6, 6];
* bcc: in units of half the cube edge, l, m, n all even or all odd, neighbours (+-1,+-1,+-1),
  z = 8, band [-8, 8];
* fcc: in units of half the cube edge, l + m + n even, neighbours the permutations of
  (+-1,+-1,0), z = 12, band [-4, 12].

In k-space (k in [-pi, pi]^3, r.k = l k1 + m k2 + n k3) the dispersion eps(k) is
2(c1 + c2 + c3) (sc), 8 c1 c2 c3 (bcc), 4(c1 c2 + c2 c3 + c3 c1) (fcc), c_i = cos k_i, and
G(E; r) = (2 pi)^-3 int cos(r.k) / (E - eps(k)) d^3k.  At the upper band edge E = z the
Watson integrals (W = pi^-3 int_{[0,pi]^3} of 1/(3 - c1 - c2 - c3), 1/(1 - c1 c2 c3),
1/(3 - c1 c2 - c2 c3 - c3 c1) respectively) give

    sc:  G(6; 0)  = W_sc / 2,     bcc: G(8; 0) = W_bcc / 8,     fcc: G(12; 0) = W_fcc / 4,

because 6 - eps = 2 (3 - sum c), 8 - eps = 8 (1 - c1 c2 c3), 12 - eps = 4 (3 - sum c c).
"""
from __future__ import annotations

from itertools import permutations, product
from numbers import Integral

import flint

LATTICES = ("sc", "bcc", "fcc")

Z = {"sc": 6, "bcc": 8, "fcc": 12}
BAND = {"sc": (-6, 6), "bcc": (-8, 8), "fcc": (-4, 12)}
# G(z; 0) = W / WATSON_FACTOR[lattice]  (see module docstring)
WATSON_FACTOR = {"sc": 2, "bcc": 8, "fcc": 4}

Site = tuple[int, int, int]


def check_lattice(lattice: str) -> str:
    """Return `lattice` if it is one of sc, bcc, fcc, else raise ValueError."""
    if lattice not in LATTICES:
        raise ValueError(f"unknown cubic lattice {lattice!r}: expected one of sc, bcc, fcc")
    return lattice


def neighbours(lattice: str) -> list[Site]:
    """The z nearest-neighbour vectors of the origin (units of half the cube edge for bcc/fcc)."""
    check_lattice(lattice)
    if lattice == "sc":
        return [(s, 0, 0) for s in (1, -1)] + [(0, s, 0) for s in (1, -1)] + [
            (0, 0, s) for s in (1, -1)]
    if lattice == "bcc":
        return [(a, b, c) for a, b, c in product((1, -1), repeat=3)]
    out: set[Site] = set()
    for a, b in product((1, -1), repeat=2):
        for p, q, r in permutations((a, b, 0)):
            out.add((p, q, r))
    return sorted(out)


def coordination(lattice: str) -> int:
    """Coordination number z (6, 8, 12)."""
    return Z[check_lattice(lattice)]


def band(lattice: str) -> tuple[int, int]:
    """Band [E_min, E_max] of the hopping operator (hopping +1)."""
    return BAND[check_lattice(lattice)]


def check_site(lattice: str, site: object) -> Site:
    """Validate a site and return it as a tuple of three Python ints.

    Raises ValueError with a one-line reason for non-integer coordinates, wrong length,
    or a triple that is not a point of the lattice.
    """
    check_lattice(lattice)
    try:
        t: tuple = tuple(site)  # type: ignore[arg-type]
    except TypeError:
        raise ValueError(f"site {site!r} is not a triple of integers") from None
    if len(t) != 3:
        raise ValueError(f"site {site!r} must have three coordinates (l, m, n)")
    for c in t:
        if isinstance(c, bool) or not isinstance(c, Integral):
            raise ValueError(f"site {site!r} must have integer coordinates (got {c!r})")
    l, m, n = (int(c) for c in t)
    t = (l, m, n)
    if lattice == "bcc" and not (l % 2 == m % 2 == n % 2):
        raise ValueError(f"{t} is not a bcc site: bcc coordinates are all even or all odd, "
                         "in units of half the cube edge")
    if lattice == "fcc" and (l + m + n) % 2:
        raise ValueError(f"{t} is not an fcc site: fcc coordinates have an even sum l+m+n, "
                         "in units of half the cube edge")
    return (l, m, n)


def canonical(l: int, m: int, n: int) -> Site:
    """Representative of (l, m, n) under the 48-element cubic group: l >= m >= n >= 0.

    All three lattices (sc, bcc, fcc in half-cube-edge units) are invariant under sign
    changes and permutations of the coordinates, so G(E; r) depends only on this tuple.
    """
    a = sorted((abs(int(l)), abs(int(m)), abs(int(n))), reverse=True)
    return (a[0], a[1], a[2])


def canonical_sites(lattice: str, extent: int) -> list[Site]:
    """All canonical sites (l >= m >= n >= 0) of the lattice with l <= extent, sorted."""
    check_lattice(lattice)
    out = []
    for l in range(extent + 1):
        for m in range(l + 1):
            for n in range(m + 1):
                if lattice == "bcc" and not (l % 2 == m % 2 == n % 2):
                    continue
                if lattice == "fcc" and (l + m + n) % 2:
                    continue
                out.append((l, m, n))
    return out


# ---------------------------------------------------------------------------------------
# Watson constants as arb balls
# ---------------------------------------------------------------------------------------

def _with_prec(prec: int, f):
    old = flint.ctx.prec
    try:
        flint.ctx.prec = prec
        return f()
    finally:
        flint.ctx.prec = old


def _bits(digits: int) -> int:
    if not isinstance(digits, int) or digits < 1:
        raise ValueError(f"digits must be a positive integer (got {digits!r})")
    return int(digits * 3.3219280948873626) + 20


def watson(lattice: str, digits: int = 50) -> flint.arb:
    """Watson's integral W (Watson normalisation) as a rigorous arb ball.

    * sc:  W = sqrt(6)/(96 pi^3) Gamma(1/24) Gamma(5/24) Gamma(7/24) Gamma(11/24)
      (Glasser & Zucker, PNAS 74, 1800 (1977));
    * bcc: W = Gamma(1/4)^4 / (4 pi^3) (Watson 1939; OEIS A091670);
    * fcc: W = 3 Gamma(1/3)^6 / (2^(14/3) pi^4) (Watson 1939; Glasser & Zucker 1977).

    The ball is computed with ~digits + 6 decimal digits of working precision.
    """
    check_lattice(lattice)
    prec = _bits(digits)

    def f():
        pi = flint.arb.pi()
        q = flint.fmpq
        G = flint.arb.gamma_fmpq
        if lattice == "sc":
            return (flint.arb(6).sqrt() / (96 * pi ** 3)
                    * G(q(1, 24)) * G(q(5, 24)) * G(q(7, 24)) * G(q(11, 24)))
        if lattice == "bcc":
            return G(q(1, 4)) ** 4 / (4 * pi ** 3)
        two = flint.arb(2)
        return 3 * G(q(1, 3)) ** 6 / (two ** (flint.arb(14) / 3) * pi ** 4)

    return _with_prec(prec, f)


def green_edge_origin(lattice: str, digits: int = 50) -> flint.arb:
    """G(z; 0) in our normalisation (hopping +1, E = z): W/2 (sc), W/8 (bcc), W/4 (fcc)."""
    w = watson(lattice, digits)
    return _with_prec(_bits(digits), lambda: w / WATSON_FACTOR[lattice])


def expected_returns(lattice: str, digits: int = 50) -> flint.arb:
    """Expected number of visits to the origin, z G(z; 0) (= 1/(1 - P)).

    sc: 3 W_sc (OEIS A086231); bcc: W_bcc; fcc: 3 W_fcc.
    """
    g = green_edge_origin(lattice, digits)
    return _with_prec(_bits(digits), lambda: Z[lattice] * g)


def return_probability(lattice: str, digits: int = 50) -> flint.arb:
    """Polya's return probability P = 1 - 1/(z G(z; 0)) as an arb ball (sc: OEIS A086230)."""
    u = expected_returns(lattice, digits)
    return _with_prec(_bits(digits), lambda: 1 - 1 / u)


def arb_digits(x: flint.arb, digits: int) -> str:
    """Decimal string of an arb ball with at most `digits` significant digits, all certified.

    Raises ValueError if the ball is too wide for the requested digits.
    """
    if x.rel_accuracy_bits() < digits * 3.3219280948873626 + 4:
        raise ValueError(f"ball {x.str(digits)} does not certify {digits} digits")
    return x.str(digits, radius=False)
