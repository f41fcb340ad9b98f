"""Exact band-edge Green's functions and resistances of the cubic lattices sc, bcc, fcc.

Conventions: hopping +1, G(E; r) = <0|(E - H)^-1|r>, bcc/fcc sites in units of half the cube
edge (see ``lattices/cubic.py``).  R(r) = 2 [G(z; 0) - G(z; r)] at the band edge E = z.

Structure (Glasser & Boersma, J. Phys. A 33, 5017 (2000)): every G(z; r) is
r1 g + r2 / (pi^2 g) + r3 with rationals r_i and g the lattice's Watson integral
(W = pi^-3 int_[0,pi]^3 of 1/(3 - sum c_i), 1/(1 - c1 c2 c3), 1/(3 - sum c_i c_j)):

    sc:  g = sqrt(6)/(96 pi^3) Gamma(1/24)Gamma(5/24)Gamma(7/24)Gamma(11/24)
         (Glasser & Zucker, PNAS 74, 1800 (1977)),           G(6; 0)  = g/2
    bcc: g = Gamma(1/4)^4/(4 pi^3) (Watson 1939; OEIS A091670), G(8; 0)  = g/8
    fcc: g = 3 Gamma(1/3)^6/(2^(14/3) pi^4) (Watson 1939),      G(12; 0) = g/4

(6 - eps = 2(3 - sum c), 8 - eps = 8(1 - c1c2c3), 12 - eps = 4(3 - sum cc)).

**Basis and names.**  The exact forms are printed in plain sympy syntax that needs no symbol
table: the basis is (1, K, 1/(pi^2 K)) with K the Gamma part of g, g = a K, a rational:

    sc:  K = sqrt(6)*gamma(1/24)*gamma(5/24)*gamma(7/24)*gamma(11/24)/pi**3,   g = K/96
    bcc: K = gamma(1/4)**4/pi**3,                                              g = K/4
    fcc: K = gamma(1/3)**6/(2**(2/3)*pi**4),                                   g = 3K/16

so 1/(pi^2 g) = (1/a) / (pi^2 K).  (A short name such as ``W_sc`` would parse in sympy only
as an unknown symbol; the Gamma expression parses to the number itself.)

**Relations (each an identity; the proofs in brief).**
(L) the lattice equation z G(s) - sum_e G(s + e) = delta_{s,0};
(E1) with L(s) = (2 pi)^-3 int e^{ik.s} ln(z - eps(k)) d^3k, integrating the k_i-derivative
of e^{ik.s} ln(z - eps) over a period gives  s_i L(s) = sum_e e_i G(s + e)  for every
lattice, axis i and site s (the integrand (d eps/d k_i)/(z - eps) ~ 1/|k| is integrable).
For sc (E1) reads G(s - e_i) - G(s + e_i) = s_i H(s) with H = -L independent of i (also
from the Bessel form and DLMF 10.29.1); inserted into (L) with reflection symmetry:
(C3) (s1 + s2 + s3) H(s) = sum_{s_i > 0} 2 G(s - e_i) + sum_{s_i = 0} 2 G(s + e_i) - 6 G(s).

**sc recursion.**  For a canonical target t (l >= m >= n) pick the first i with t_i >= 2,
s = t - e_i, and G(t) = G(s - e_i) - s_i H(s), H(s) from (C3).  Within a degree l + m + n the
order is: all coordinates >= 1, then (l, m, 0), then (l, 0, 0).  The seeds are G(0) = g/2
(Watson), G(1,0,0) = g/2 - 1/6 (lattice equation at 0), and two values the relations cannot
fix (the full finite system has a 3-dimensional solution space spanned by G(0), G(1,1,0),
G(1,1,1)):

    G(6; 1,1,0) = (5/24) g - (1/4)/(pi^2 g),   G(6; 1,1,1) = -(1/16) g + (3/8)/(pi^2 g)

*identified*: integer-relation search (mpmath.pslq on (G, g, 1/(pi^2 g), 1), G by
quadrature at 90 digits; the same relation at 40, 60 and 85 digits), confirmed by an
independent quadrature at 120 digits (differences 5e-127); also reproduced to 56 digits by
requiring that the recursion's solution decays like the far field.

**bcc, fcc.**  (L) and (E1) on all canonical sites of a layer l = N, N+1 (G unknown on layers
N+1, N+2, L unknown on N, N+1) solved exactly (python-flint fmpq_mat.rref), keeping layer N+1
after checking that every one of its values is determined and the system consistent
(look-ahead 3 if 2 ever leaves a value free); layers l <= 4 by one solve.  The whole finite
system has nullity 3, spanned by G(0) and two identified seeds (PSLQ at 60 digits, confirmed
by quadrature at 110 digits, differences <= 4e-112):

    bcc: G(2,0,0) = (1/2)/(pi^2 g),            G(2,2,0) = g/8 - 2/(pi^2 g)
    fcc: G(2,0,0) = -g/12 + (1/4)/(pi^2 g),    G(2,1,1) = -g/12 - (1/2)/(pi^2 g) + 1/6

**derived vs identified.**  The computation carries two extra coordinates sigma_1, sigma_2
(the seeds are entered as "identified value + sigma_j"); a form whose sigma coefficients
vanish does not depend on the identified seeds and is ``derived``, any other is
``identified`` with the smaller of its seeds' verified digits.  Resistances: R(0) = 0 and
R(neighbour) = 2/z are derived; in practice every other site is identified.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from fractions import Fraction
from math import lcm
from typing import Any

import flint

from ..lattices import Lattice, Site
from ..lattices.cubic import BCC, FCC, SC
from .forms import ONE, Constant, ExactForm, compound

# (g, 1/(pi^2 g), 1, sigma_1, sigma_2) at the band edge; other callers choose their basis
# (exact/cubic_energy.py), with Gaussian-rational entries (QI) at a complex energy
Vec = tuple[Any, ...]
NV = 5


def gamma_product(lattice: str) -> Callable[[], flint.arb]:
    """K, the Gamma part of the Watson integral (g = WATSON_SCALE * K), as a function giving
    a python-flint ball at the caller's precision."""
    q, G = flint.fmpq, flint.arb.gamma_fmpq

    def sc() -> flint.arb:
        return (flint.arb(6).sqrt() * G(q(1, 24)) * G(q(5, 24)) * G(q(7, 24))
                * G(q(11, 24)) / flint.arb.pi() ** 3)

    def bcc() -> flint.arb:
        return G(q(1, 4)) ** 4 / flint.arb.pi() ** 3

    def fcc() -> flint.arb:
        return G(q(1, 3)) ** 6 / (flint.arb(2) ** (flint.arb(2) / 3) * flint.arb.pi() ** 4)

    return {"sc": sc, "bcc": bcc, "fcc": fcc}[lattice]


# K printed as top/bottom in sympy syntax
GAMMA_TEXT = {
    "sc": ("sqrt(6)*gamma(1/24)*gamma(5/24)*gamma(7/24)*gamma(11/24)", "pi**3"),
    "bcc": ("gamma(1/4)**4", "pi**3"),
    "fcc": ("gamma(1/3)**6", "2**(2/3)*pi**4"),
}
# g = WATSON_SCALE * K
WATSON_SCALE = {"sc": Fraction(1, 96), "bcc": Fraction(1, 4), "fcc": Fraction(3, 16)}
# G(z; 0) = g / WATSON_FACTOR
WATSON_FACTOR = {"sc": 2, "bcc": 8, "fcc": 4}
LATTICE = {"sc": SC, "bcc": BCC, "fcc": FCC}


def _basis(lattice: str) -> tuple[Constant, Constant]:
    """K and 1/(pi^2 K) as printable constants (K = top/bottom, see the module docstring)."""
    top, bottom = GAMMA_TEXT[lattice]
    k = gamma_product(lattice)
    # 1/(pi^2 K) = bottom/(pi^2 top): pi**3 -> pi, 2**(2/3)*pi**4 -> 2**(2/3)*pi**2
    inv_top = {"sc": "pi", "bcc": "pi", "fcc": "2**(2/3)*pi**2"}[lattice]
    K = Constant(_ratio(top, bottom), k, top=top, bottom=bottom)
    inv = Constant(_ratio(inv_top, top), lambda: 1 / (flint.arb.pi() ** 2 * k()),
                   top=inv_top, bottom=top)
    return K, inv


def _ratio(top: str, bottom: str) -> str:
    return f"{top}/({bottom})" if compound(bottom) else f"{top}/{bottom}"


BASES: dict[str, tuple[Constant, ...]] = {
    lat: (ONE, *_basis(lat)) for lat in ("sc", "bcc", "fcc")}


def watson(lattice: str) -> Callable[[], flint.arb]:
    """g (Watson normalisation) as a ball at the caller's precision.

    >>> old = flint.ctx.prec
    >>> try:
    ...     flint.ctx.prec = 200
    ...     print(watson("bcc")().str(30, radius=False))
    ... finally:
    ...     flint.ctx.prec = old
    1.39320392968567685918424626033
    """
    k = gamma_product(lattice)
    a = WATSON_SCALE[lattice]
    return lambda: k() * flint.fmpq(a.numerator, a.denominator)


def _z(lattice: str) -> int:
    return LATTICE[lattice].z


def _vec(*xs: Fraction | int) -> Vec:
    v = [Fraction(x) for x in xs] + [Fraction(0)] * (NV - len(xs))
    return tuple(v)


ZERO = _vec()
UNIT = _vec(0, 0, 1)


def _add(a: Vec, b: Vec) -> Vec:
    return tuple(x + y for x, y in zip(a, b, strict=True))


def _sub(a: Vec, b: Vec) -> Vec:
    return tuple(x - y for x, y in zip(a, b, strict=True))


def _mul(c: Any, a: Vec) -> Vec:
    return tuple(c * x for x in a)


# identified seeds: site -> (coefficients on (g, 1/(pi^2 g), 1), verified digits)
SEEDS: dict[str, dict[Site, tuple[tuple[Fraction, Fraction, Fraction], int]]] = {
    "sc": {(1, 1, 0): ((Fraction(5, 24), Fraction(-1, 4), Fraction(0)), 120),
           (1, 1, 1): ((Fraction(-1, 16), Fraction(3, 8), Fraction(0)), 120)},
    "bcc": {(2, 0, 0): ((Fraction(0), Fraction(1, 2), Fraction(0)), 110),
            (2, 2, 0): ((Fraction(1, 8), Fraction(-2), Fraction(0)), 110)},
    "fcc": {(2, 0, 0): ((Fraction(-1, 12), Fraction(1, 4), Fraction(0)), 110),
            (2, 1, 1): ((Fraction(-1, 12), Fraction(-1, 2), Fraction(1, 6)), 110)},
}


def _seed_vecs(lattice: str) -> dict[Site, Vec]:
    out: dict[Site, Vec] = {(0, 0, 0): _vec(Fraction(1, WATSON_FACTOR[lattice]))}
    for j, (s, (c, _)) in enumerate(SEEDS[lattice].items()):
        sig = [Fraction(0), Fraction(0)]
        sig[j] = Fraction(1)
        out[s] = (*c, *sig)
    return out


def _canon(s: Sequence[int]) -> Site:
    a, b, c = sorted((abs(s[0]), abs(s[1]), abs(s[2])), reverse=True)
    return (a, b, c)


class _SC:
    """The sc recursion (module docstring), grown on demand, at the energy ``energy`` (z = 6
    at the band edge, where (E1) and (C3) were written; both hold at every E, with E in place
    of 6 in (C3)) from ``seeds`` at 0, (1, 0, 0), (1, 1, 0), (1, 1, 1) given as vectors on
    the caller's basis."""

    def __init__(self, energy: Fraction | int | QI = 6, seeds: dict[Site, Vec] | None = None
                 ) -> None:
        self.E = energy if isinstance(energy, QI) else Fraction(energy)
        if seeds is None:
            seeds = _seed_vecs("sc")
            seeds[(1, 0, 0)] = _vec(Fraction(1, 2), 0, Fraction(-1, 6))
        self.G: dict[Site, Vec] = dict(seeds)
        self.extent = 1

    def g(self, t: Sequence[int]) -> Vec:
        return self.G[_canon(t)]

    def H(self, s: Site) -> Vec:
        acc = _mul(-self.E, self.g(s))
        for i in range(3):
            t = list(s)
            t[i] += -1 if s[i] > 0 else 1
            acc = _add(acc, _mul(2, self.g(t)))
        return _mul(Fraction(1, sum(s)), acc)

    def grow(self, extent: int) -> None:
        if extent <= self.extent:
            return
        by_deg: dict[int, list[Site]] = {}
        for l in range(self.extent + 1, extent + 1):
            for m in range(l + 1):
                for n in range(m + 1):
                    by_deg.setdefault(l + m + n, []).append((l, m, n))
        # a target of degree d needs lower degrees and, of degree d, only sites with more
        # nonzero coordinates: sites of earlier layers are all known already
        for d in sorted(by_deg):
            for t in sorted(by_deg[d], key=lambda t: (t[2] == 0, t[1] == 0, t)):
                i = 0 if t[0] >= 2 else (1 if t[1] >= 2 else 2)
                s = list(t)
                s[i] -= 1
                q = list(s)
                q[i] -= 1
                self.G[t] = _sub(self.g(q), _mul(s[i], self.H((s[0], s[1], s[2]))))
        self.extent = extent


@dataclass(frozen=True)
class QI:
    """A Gaussian rational re + i im: the field of the relations at a complex energy (just the
    operations the solvers use)."""

    re: Fraction
    im: Fraction = Fraction(0)

    def __add__(self, o: object) -> QI:
        o = _qi(o)
        return QI(self.re + o.re, self.im + o.im)

    __radd__ = __add__

    def __neg__(self) -> QI:
        return QI(-self.re, -self.im)

    def __sub__(self, o: object) -> QI:
        return self + -_qi(o)

    def __rsub__(self, o: object) -> QI:
        return _qi(o) - self

    def __mul__(self, o: object) -> QI:
        o = _qi(o)
        return QI(self.re * o.re - self.im * o.im, self.re * o.im + self.im * o.re)

    __rmul__ = __mul__

    def __bool__(self) -> bool:
        return bool(self.re or self.im)

    def __eq__(self, o: object) -> bool:
        if isinstance(o, (int, Fraction, QI)):
            q = _qi(o)
            return self.re == q.re and self.im == q.im
        return NotImplemented

    def __hash__(self) -> int:
        return hash((self.re, self.im))


def _qi(x: object) -> QI:
    if isinstance(x, QI):
        return x
    assert isinstance(x, (int, Fraction))
    return QI(Fraction(x))


def _fmpq(x: Fraction) -> flint.fmpq:
    return flint.fmpq(x.numerator, x.denominator)


def solve_rows(rows: list[tuple[dict[int, Any], Vec]], nv: int, W: int, what: str
               ) -> dict[int, Vec]:
    """Exact reduced row echelon form of the rows sum_k r[k] x_k = rhs (rhs a W-vector on
    the caller's basis; entries rational or Gaussian rational, QI); the vectors of the
    unknowns the system determines (pivot rows free of free columns).  Gaussian-rational
    systems are realified: x = u + i v, each row split into its real and imaginary parts,
    the W right-hand columns solved at once.  ArithmeticError if inconsistent."""
    cplx = any(isinstance(v, QI) for r, c in rows for v in (*r.values(), *c))
    n = 2 * nv if cplx else nv
    M = flint.fmpq_mat(len(rows) * (2 if cplx else 1), n + W)
    for a, (r, c) in enumerate(rows):
        if not cplx:
            for k, v in r.items():
                if v:
                    M[a, k] = _fmpq(v)
            for j in range(W):
                if c[j]:
                    M[a, nv + j] = _fmpq(c[j])
            continue
        for part in (0, 1):  # real, imaginary part of the row
            row = 2 * a + part
            for k, v in r.items():
                q = _qi(v)
                # Re(q x) = q.re u - q.im v,  Im(q x) = q.im u + q.re v
                cu, cv = (q.re, -q.im) if part == 0 else (q.im, q.re)
                if cu:
                    M[row, 2 * k] = _fmpq(cu)
                if cv:
                    M[row, 2 * k + 1] = _fmpq(cv)
            for j in range(W):
                x = _qi(c[j])
                y = x.re if part == 0 else x.im
                if y:
                    M[row, n + j] = _fmpq(y)
    R, rank = M.rref()
    pivots: dict[int, int] = {}
    for row in range(rank):
        col = next(k for k in range(n + W) if R[row, k] != 0)
        if col >= n:
            raise ArithmeticError(f"{what}: inconsistent system")
        pivots[col] = row
    free = [k for k in range(n) if k not in pivots]

    def value(col: int) -> Vec | None:
        prow = pivots.get(col)
        if prow is None or any(R[prow, f] != 0 for f in free):
            return None
        return tuple(Fraction(int(R[prow, n + j].p), int(R[prow, n + j].q)) for j in range(W))

    out: dict[int, Vec] = {}
    for k in range(nv):
        if not cplx:
            v = value(k)
            if v is not None:
                out[k] = v
            continue
        u, w = value(2 * k), value(2 * k + 1)
        if u is not None and w is not None:
            out[k] = tuple(QI(x, y) for x, y in zip(u, w, strict=True))
    return out


def _on_layer(layer: int) -> Callable[[Site], bool]:
    return lambda s: s[0] == layer


class _Layered:
    """bcc / fcc: exact solves of (L) and (E1), layer by layer (module docstring), at the
    energy ``energy`` (z at the band edge; (L) and (E1) hold at every E) from ``seeds`` at
    0 and the two sites of SEEDS, given as vectors on a basis whose constant 1 is ``unit``."""

    def __init__(self, lattice: str, energy: Fraction | int | QI | None = None,
                 seeds: dict[Site, Vec] | None = None, unit: Vec = UNIT) -> None:
        self.lat: Lattice = LATTICE[lattice]
        self.name = lattice
        self.E = energy if isinstance(energy, QI) else Fraction(
            self.lat.z if energy is None else energy)
        self.seeds = _seed_vecs(lattice) if seeds is None else seeds
        self.unit = unit
        self.zero: Vec = tuple(Fraction(0) for _ in unit)
        self.G: dict[Site, Vec] = {}
        self.extent = -1

    def _sites(self, lo: int, hi: int) -> list[Site]:
        return [s for s in self.lat.region(hi) if s[0] >= lo]

    def _solve(self, eq_sites: list[Site], unknown: list[Site], fixed: dict[Site, Vec],
               keep: Callable[[Site], bool]) -> None:
        z, W = self.E, len(self.unit)
        nb = self.lat.neighbours
        idx = {("G", s): i for i, s in enumerate(unknown)}
        for s in eq_sites:
            if any(s):
                idx[("L", s)] = len(idx)
        nv = len(idx)
        rows: list[tuple[dict[int, Any], Vec]] = []
        for s in eq_sites:
            r: dict[int, Any] = {}
            rhs = self.unit if not any(s) else self.zero
            terms = [(z, s)] + [(-1, _canon((s[0] + e[0], s[1] + e[1], s[2] + e[2])))
                                for e in nb]
            for coef, t in terms:
                if t in fixed:
                    rhs = _sub(rhs, _mul(coef, fixed[t]))
                else:
                    k = idx[("G", t)]
                    r[k] = r.get(k, Fraction(0)) + coef
            rows.append((r, rhs))
            for i in range(3):
                if s[i] == 0:
                    continue
                r = {idx[("L", s)]: Fraction(s[i])}
                rhs = self.zero
                for e in nb:
                    if e[i]:
                        t = _canon((s[0] + e[0], s[1] + e[1], s[2] + e[2]))
                        if t in fixed:
                            rhs = _add(rhs, _mul(e[i], fixed[t]))
                        else:
                            k = idx[("G", t)]
                            r[k] = r.get(k, Fraction(0)) - e[i]
                rows.append((r, rhs))
        got = solve_rows(rows, nv, W, self.name)
        for s in unknown:
            if not keep(s):
                continue
            v = got.get(idx[("G", s)])
            if v is None:
                raise ArithmeticError(f"{self.name} site {s} is not determined")
            self.G[s] = v

    def grow(self, extent: int) -> None:
        if extent <= self.extent:
            return
        if self.extent < 0:
            seeds = self.seeds
            eq = self._sites(0, 4)
            unknown = [s for s in self._sites(0, 5) if s not in seeds]
            self.G.update(seeds)
            self._solve(eq, unknown, dict(seeds), lambda s: s[0] <= 4)
            self.extent = 4
        while self.extent < extent:
            N = self.extent
            for window in (2, 3):
                try:
                    eq = self._sites(N, N + window - 1)
                    unknown = self._sites(N + 1, N + window)
                    self._solve(eq, unknown, self.G, _on_layer(N + 1))
                    break
                except ArithmeticError:
                    if window == 3:
                        raise
            self.extent = N + 1


_TABLES: dict[str, _SC | _Layered] = {}


def green_vectors(lattice: str, extent: int) -> dict[Site, Vec]:
    """G(z; s) for the canonical sites with l <= extent, as (g, 1/(pi^2 g), 1, sigma_1,
    sigma_2) coefficients (cached and grown on demand; the dict is shared: do not modify).

    >>> green_vectors("sc", 2)[(2, 0, 0)][:3]  # also found alone by PSLQ (our own check)
    (Fraction(5, 3), Fraction(1, 1), Fraction(-1, 1))
    """
    t = _TABLES.get(lattice)
    if t is None:
        t = _TABLES[lattice] = _SC() if lattice == "sc" else _Layered(lattice)
    t.grow(max(extent, 1))
    return t.G


def _seed_digits(lattice: str, v: Vec) -> int | None:
    digits = [d for j, (_, d) in enumerate(SEEDS[lattice].values()) if v[3 + j] != 0]
    return min(digits) if digits else None


@dataclass(frozen=True)
class Column:
    """R at the canonical sites (l, m, n) of one column: sum_i nums[k][i]/dens[i] basis[i]."""

    sites: list[Site]
    nums: list[tuple[int, int, int]]
    dens: tuple[int, int, int]
    hows: list[str]
    verified: list[int | None]


def resistance_vector(lattice: str, site: Site) -> tuple[tuple[Fraction, ...], str, int | None]:
    """R(site) on the basis (1, K, 1/(pi^2 K)) for a canonical site, with how/digits."""
    G = green_vectors(lattice, site[0])
    v = _mul(2, _sub(G[(0, 0, 0)], G[site]))
    a = WATSON_SCALE[lattice]
    coeffs = (v[2], v[0] * a, v[1] / a)
    d = _seed_digits(lattice, v)
    return coeffs, ("derived" if d is None else "identified"), d


def resistance_form(lattice: str, site: Site) -> ExactForm:
    """Exact R(site) for a canonical site.

    >>> str(resistance_form("bcc", (1, 1, 1)))  # 2/z: common practice
    '1/4'
    >>> f = resistance_form("sc", (1, 1, 0))
    >>> f.how, f.verified_digits
    ('identified', 120)
    """
    coeffs, how, d = resistance_vector(lattice, site)
    return ExactForm(coeffs, BASES[lattice], how, d)


def columns(lattice: str, extent: int) -> Iterator[Column]:
    """The columns (l, m) of the region up to ``extent`` in table order, non-empty ones
    only, each with common denominators per basis element."""
    lat = LATTICE[lattice]
    green_vectors(lattice, extent)
    for l in range(extent + 1):
        for m in range(l + 1):
            sites = lat.column(l, m)
            if not sites:
                continue
            rows = [resistance_vector(lattice, s) for s in sites]
            dens = tuple(lcm(*(r[0][i].denominator for r in rows)) for i in range(3))
            nums = [tuple(int(c[i] * dens[i]) for i in range(3)) for c, _, _ in rows]
            yield Column(sites, nums, (dens[0], dens[1], dens[2]),  # type: ignore[arg-type]
                         [r[1] for r in rows], [r[2] for r in rows])
