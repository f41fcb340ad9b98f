"""Exact forms of the cubic-lattice Green functions at the band edge E = z.

sc below; bcc and fcc (same basis, g = W_bcc, W_fcc, seeds SEEDS_BF, solved exactly from the
lattice equation and relation (E1) of NOTES.md) further down.

Every G(6; l,m,n) (hopping +1) is  r1 g + r2 / (pi^2 g) + r3  with rationals r1, r2, r3 and
g = W_sc = (sqrt6/(96 pi^3)) Gamma(1/24)Gamma(5/24)Gamma(7/24)Gamma(11/24) the Watson
constant (structure: Glasser & Boersma, J. Phys. A 33, 5017 (2000), stated there in the
Watson normalisation G_W = 2 G(6; .)).

How the table is produced (derivation in NOTES.md, section C):

* G(0,0,0) = g/2                                   -- derived (Watson integral)
* G(1,0,0) = g/2 - 1/6                             -- derived (lattice equation at 0)
* G(1,1,0) = (5/24) g - (1/4)/(pi^2 g)             -- identified (PSLQ), see SEEDS
* G(1,1,1) = -(1/16) g + (3/8)/(pi^2 g)            -- identified (PSLQ), see SEEDS
* every other site: the lattice equation 6 G(s) - sum_nb G = delta_{s,0} together with the
  Bessel-recurrence relations  G(s - e_i) - G(s + e_i) = s_i H(s)  (H independent of i),
  proven in NOTES.md from G(E; r) = int_0^oo e^{-Et} I_l(2t) I_m(2t) I_n(2t) dt and
  I_{v-1}(x) - I_{v+1}(x) = (2v/x) I_v(x) (DLMF 10.29.1).  These close with exactly the
  four values above as seeds; a form obtained this way is recorded as "recurrence"
  (proven recurrence, conditional on the two identified seeds).
"""
from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction

import flint

from cubic import _bits, canonical, check_lattice, check_site, watson

Coeffs = tuple[Fraction, Fraction, Fraction]   # (r1, r2, r3): r1 g + r2/(pi^2 g) + r3

W_SC = 6  # band edge energy of sc

# The two seeds found by integer-relation search (mpmath.pslq on the basis
# (G, g, 1/(pi^2 g), 1) with G from quad.green_edge_quad at 90 digits; the same relation
# at 40, 60 and 85 digits); `verified` = digits to which the quadrature agrees (NOTES.md).
SEEDS: dict[tuple[int, int, int], tuple[Coeffs, int]] = {
    (1, 1, 0): ((Fraction(5, 24), Fraction(-1, 4), Fraction(0)), 120),
    (1, 1, 1): ((Fraction(-1, 16), Fraction(3, 8), Fraction(0)), 120),
}


@dataclass(frozen=True)
class ExactForm:
    """G(6; site) = r1 g + r2/(pi^2 g) + r3 and how it was obtained."""
    site: tuple[int, int, int]
    coeffs: Coeffs
    how: str            # "derived" | "identified" | "recurrence"
    verified_digits: int | None = None   # for "identified": digits of numerical agreement


def _add(a, b):
    return (a[0] + b[0], a[1] + b[1], a[2] + b[2])


def _sub(a, b):
    return (a[0] - b[0], a[1] - b[1], a[2] - b[2])


def _mul(c, a):
    return (c * a[0], c * a[1], c * a[2])


_ZERO: Coeffs = (Fraction(0), Fraction(0), Fraction(0))
_ONE: Coeffs = (Fraction(0), Fraction(0), Fraction(1))


class _Table:
    def __init__(self) -> None:
        h = Fraction(1, 2)
        self.G: dict[tuple[int, int, int], Coeffs] = {
            (0, 0, 0): (h, Fraction(0), Fraction(0)),
            (1, 0, 0): (h, Fraction(0), Fraction(-1, 6)),
        }
        for s, (c, _) in SEEDS.items():
            self.G[s] = c
        self.extent = 1

    def g(self, t) -> Coeffs:
        return self.G[canonical(*t)]

    def H(self, s) -> Coeffs:
        """H(s) from the lattice equation at s != 0 (NOTES.md, eq. C3)."""
        acc = _mul(-W_SC, self.g(s))
        for i in range(3):
            t = list(s)
            if s[i] > 0:
                t[i] -= 1
            else:
                t[i] += 1
            acc = _add(acc, _mul(2, self.g(t)))
        return _mul(Fraction(1, sum(s)), acc)

    def grow(self, extent: int) -> None:
        if extent <= self.extent:
            return
        sites = [(l, m, n) for l in range(extent + 1) for m in range(l + 1)
                 for n in range(m + 1)]
        by_deg: dict[int, list] = {}
        for t in sites:
            if t not in self.G:
                by_deg.setdefault(sum(t), []).append(t)
        for d in sorted(by_deg):
            # all coordinates >= 1 first, then (L, M, 0), then (L, 0, 0)
            for t in sorted(by_deg[d], key=lambda t: (t[2] == 0, t[1] == 0, t)):
                i = 0 if t[0] >= 2 else (1 if t[1] >= 2 else 2)
                s = list(t)
                s[i] -= 1
                q = list(s)
                q[i] -= 1
                self.G[t] = _sub(self.g(q), _mul(s[i], self.H(tuple(s))))
        self.extent = extent


_TABLE = _Table()


def exact_form(lattice: str, site) -> ExactForm:
    """Exact form of G(z; site) at the band edge: coeffs (r1, r2, r3) with
    G(z; site) = r1 g + r2/(pi^2 g) + r3, g = Watson constant of the lattice (cubic.watson).

    how: "derived" (G(0) from Watson's integral; sc G(1,0,0) from the lattice equation),
    "identified" (PSLQ seed, verified_digits = digits of agreement with the quadrature),
    "recurrence" (proven relations of NOTES.md from those seeds).
    """
    check_lattice(lattice)
    site = canonical(*check_site(lattice, site))
    if lattice == "sc":
        _TABLE.grow(site[0])
        c = _TABLE.G[site]
        seeds = SEEDS
        derived: tuple = ((0, 0, 0), (1, 0, 0))
    else:
        c = exact_table_bf(lattice, max(2, site[0]))[site]
        seeds = SEEDS_BF[lattice]
        derived = ((0, 0, 0),)
    if site in derived:
        return ExactForm(site, c, "derived")
    if site in seeds:
        return ExactForm(site, c, "identified", seeds[site][1])
    return ExactForm(site, c, "recurrence")


def exact_table(lattice: str, extent: int) -> dict[tuple[int, int, int], Coeffs]:
    """Exact forms (r1, r2, r3) of G(z; r) for all canonical sites with l <= extent.

    sc: explicit recursion (fast, extent 30 in well under a second);
    bcc, fcc: one exact linear solve (extent 12 in about a second).
    """
    check_lattice(lattice)
    if not isinstance(extent, int) or extent < 0:
        raise ValueError(f"extent must be a non-negative integer (got {extent!r})")
    if lattice != "sc":
        return exact_table_bf(lattice, max(extent, 2)) if extent >= 2 else {
            s: c for s, c in exact_table_bf(lattice, 2).items() if s[0] <= extent}
    _TABLE.grow(max(extent, 1))
    return {t: c for t, c in _TABLE.G.items() if t[0] <= extent}


def resistance_exact(lattice: str, site) -> Coeffs:
    """R(r) = 2 [G(z; 0) - G(z; r)] as coefficients (r1, r2, r3) on (g, 1/(pi^2 g), 1)."""
    f0 = exact_form(lattice, (0, 0, 0)).coeffs
    f = exact_form(lattice, site).coeffs
    return _mul(2, _sub(f0, f))


def lattice_residual(lattice: str, site) -> Coeffs:
    """z G(s) - sum over neighbours G(s + e) - delta_{s,0}, computed exactly (must be 0)."""
    from cubic import Z, neighbours
    s = canonical(*check_site(lattice, site))
    acc = _mul(Z[lattice], exact_form(lattice, s).coeffs)
    for e in neighbours(lattice):
        acc = _sub(acc, exact_form(lattice, (s[0] + e[0], s[1] + e[1], s[2] + e[2])).coeffs)
    if s == (0, 0, 0):
        acc = _sub(acc, _ONE)
    return acc


def evaluate(coeffs, lattice: str, digits: int) -> tuple[str, str]:
    """Rigorous value of r1 g + r2/(pi^2 g) + r3 (g = Watson constant of `lattice`).

    Returns (mid, rad): `mid` a decimal string with `digits` significant digits and `rad` a
    decimal upper bound on |exact value - mid| (ball arithmetic, python-flint arb).  The
    working precision starts at digits + log10(max |r_i|) + guard digits (the terms cancel
    when the coefficients are large) and is doubled until the ball is narrow enough.
    """
    check_lattice(lattice)
    if not isinstance(digits, int) or digits < 1:
        raise ValueError(f"digits must be a positive integer (got {digits!r})")
    if any(isinstance(c, float) for c in coeffs):
        raise ValueError("coefficients must be exact (int, Fraction or 'p/q' strings), not floats")
    r = [Fraction(c) for c in coeffs]
    if len(r) != 3:
        raise ValueError("coeffs must be (r1, r2, r3)")
    size = max((abs(c.numerator) + abs(c.denominator)).bit_length() for c in r)
    prec = _bits(digits) + size + 30
    old = flint.ctx.prec
    try:
        for _ in range(8):
            flint.ctx.prec = prec
            g = watson(lattice, int(prec / 3.33) + 5)
            x = 1 / (flint.arb.pi() ** 2 * g)
            q = [flint.arb(flint.fmpq(c.numerator, c.denominator)) for c in r]
            v = q[0] * g + q[1] * x + q[2]
            if v.rel_accuracy_bits() >= _bits(digits) or (v.is_zero()):
                mid = v.str(digits, radius=False)
                bound = flint.arb((v - flint.arb(mid)).abs_upper()) * flint.arb("1.01")
                # printed to 3 digits (round-to-nearest of 1.01 x bound is >= bound)
                return mid, flint.arb(bound.abs_upper()).str(3, radius=False)
            prec *= 2
    finally:
        flint.ctx.prec = old
    raise ValueError(f"could not certify {digits} digits for coefficients of size {size} bits")


# ---------------------------------------------------------------------------------------
# bcc and fcc: lattice equation + derivative relations solved as one exact linear system
# ---------------------------------------------------------------------------------------

# G(z; 0) = g / WATSON_FACTOR (cubic.py); the other two seeds were identified by PSLQ
# (basis (G, g, 1/(pi^2 g), 1), G from quad.green_edge_quad at 60 and 110 digits).
SEEDS_BF: dict[str, dict[tuple[int, int, int], tuple[Coeffs, int]]] = {
    "bcc": {(2, 0, 0): ((Fraction(0), Fraction(1, 2), Fraction(0)), 110),
            (2, 2, 0): ((Fraction(1, 8), Fraction(-2), Fraction(0)), 110)},
    "fcc": {(2, 0, 0): ((Fraction(-1, 12), Fraction(1, 4), Fraction(0)), 110),
            (2, 1, 1): ((Fraction(-1, 12), Fraction(-1, 2), Fraction(1, 6)), 110)},
}

SEEDS_BF["sc"] = SEEDS   # lets the generic solver cross-check the sc recursion

_BF_CACHE: dict[str, tuple[int, dict]] = {}


def _solve_bf(lattice: str, extent: int) -> dict[tuple[int, int, int], Coeffs]:
    """Solve  z G(s) - sum_e G(s+e) = delta_{s,0}  and  s_i L(s) = sum_e e_i G(s+e)
    (NOTES.md, eq. E1) for all canonical s with l <= extent, plus the three seed values,
    exactly over Q^3.  Raises ValueError if the system is inconsistent or underdetermined.
    """
    from cubic import WATSON_FACTOR, Z, canonical_sites, neighbours
    nb = neighbours(lattice)
    z = Z[lattice]
    Gs = canonical_sites(lattice, extent + 1)
    Ls = [s for s in canonical_sites(lattice, extent) if s != (0, 0, 0)]
    idx = {("G", s): i for i, s in enumerate(Gs)}
    for j, s in enumerate(Ls):
        idx[("L", s)] = len(Gs) + j
    nv = len(idx)
    rows: list[tuple[dict, Coeffs]] = []

    def shift(s, e):
        return canonical(s[0] + e[0], s[1] + e[1], s[2] + e[2])

    for s in canonical_sites(lattice, extent):
        r: dict[int, int] = {idx[("G", s)]: z}
        for e in nb:
            k = idx[("G", shift(s, e))]
            r[k] = r.get(k, 0) - 1
        rows.append((r, _ONE if s == (0, 0, 0) else _ZERO))
        for i in range(3):
            if s[i] == 0:
                continue
            r = {idx[("L", s)]: s[i]}
            for e in nb:
                if e[i]:
                    k = idx[("G", shift(s, e))]
                    r[k] = r.get(k, 0) - e[i]
            rows.append((r, _ZERO))
    seeds = {(0, 0, 0): (Fraction(1, WATSON_FACTOR[lattice]), Fraction(0), Fraction(0))}
    seeds.update({s: c for s, (c, _) in SEEDS_BF[lattice].items()})
    for s, c in seeds.items():
        rows.append(({idx[("G", s)]: 1}, c))
    M = flint.fmpq_mat(len(rows), nv + 3)
    for a, (r, c) in enumerate(rows):
        for k, v in r.items():
            if v:
                M[a, k] = v
        for j in range(3):
            if c[j]:
                M[a, nv + j] = flint.fmpq(c[j].numerator, c[j].denominator)
    R, rank = M.rref()
    # consistency: no row may read 0 = nonzero
    pivots: dict[int, int] = {}
    for row in range(rank):
        col = next(k for k in range(nv + 3) if R[row, k] != 0)
        if col >= nv:
            raise ValueError(f"{lattice} system is inconsistent")
        pivots[col] = row
    free = [k for k in range(nv) if k not in pivots]
    out: dict[tuple[int, int, int], Coeffs] = {}
    for s in canonical_sites(lattice, extent):
        prow = pivots.get(idx[("G", s)])
        if prow is None or any(R[prow, f] != 0 for f in free):
            raise ValueError(f"{lattice} site {s} is not determined by the relations")
        out[s] = _frac3(R, prow, nv)
    return out


def _frac3(R, row: int, nv: int) -> Coeffs:
    def q(j: int) -> Fraction:
        x = R[row, nv + j]
        return Fraction(int(x.p), int(x.q))
    return (q(0), q(1), q(2))


def _layer_step(lattice: str, N: int, G: dict, window: int = 2) -> None:
    """Given exact G for all canonical sites with l <= N, add the layer l = N + 1.

    Unknowns: G on layers N+1 .. N+window and L on layers N .. N+window-1; equations: the
    lattice equation and (E1) at every canonical site of layers N .. N+window-1.  Only the
    values on layer N+1 are kept, and only after checking that each is determined (its
    pivot row has no free column) and that the system is consistent.  (Layer N equations
    alone leave one direction of layer N+1 free for bcc; a look-ahead of 2 fixes it.)
    """
    from cubic import Z, canonical_sites, neighbours
    nb = neighbours(lattice)
    z = Z[lattice]
    eq_sites = [s for s in canonical_sites(lattice, N + window - 1) if s[0] >= N]
    new = [s for s in canonical_sites(lattice, N + window) if s[0] > N]
    idx = {("G", s): i for i, s in enumerate(new)}
    for s in eq_sites:
        idx[("L", s)] = len(idx)
    nv = len(idx)
    rows: list[tuple[dict, list]] = []

    def shift(s, e):
        return canonical(s[0] + e[0], s[1] + e[1], s[2] + e[2])

    for s in eq_sites:
        r: dict[int, int] = {}
        rhs = [Fraction(0)] * 3
        if s in G:
            rhs = list(_mul(-z, G[s]))
        else:
            r[idx[("G", s)]] = z
        for e in nb:
            t = shift(s, e)
            if t in G:
                rhs = list(_add(rhs, G[t]))
            else:
                k = idx[("G", t)]
                r[k] = r.get(k, 0) - 1
        rows.append((r, rhs))
        for i in range(3):
            if s[i] == 0:
                continue
            r = {idx[("L", s)]: s[i]}
            rhs = [Fraction(0)] * 3
            for e in nb:
                if e[i]:
                    t = shift(s, e)
                    if t in G:
                        rhs = list(_add(rhs, _mul(e[i], G[t])))
                    else:
                        k = idx[("G", t)]
                        r[k] = r.get(k, 0) - e[i]
            rows.append((r, rhs))
    M = flint.fmpq_mat(len(rows), nv + 3)
    for a, (r, c) in enumerate(rows):
        for k, v in r.items():
            if v:
                M[a, k] = v
        for j in range(3):
            if c[j]:
                M[a, nv + j] = flint.fmpq(c[j].numerator, c[j].denominator)
    R, rank = M.rref()
    pivots: dict[int, int] = {}
    for row in range(rank):
        col = next(k for k in range(nv + 3) if R[row, k] != 0)
        if col >= nv:
            raise ValueError(f"{lattice} layer {N + 1}: inconsistent system")
        pivots[col] = row
    free = [k for k in range(nv) if k not in pivots]
    for s in new:
        if s[0] != N + 1:
            continue
        prow = pivots.get(idx[("G", s)])
        if prow is None or any(R[prow, f] != 0 for f in free):
            raise ValueError(f"{lattice} site {s} not determined with look-ahead {window}")
        G[s] = _frac3(R, prow, nv)


def exact_table_bf(lattice: str, extent: int) -> dict[tuple[int, int, int], Coeffs]:
    """Exact forms (r1, r2, r3) of G(z; r) for bcc/fcc canonical sites with l <= extent.

    A full exact solve (_solve_bf) to l <= 4, then one small exact solve per layer.
    """
    check_lattice(lattice)
    if lattice not in ("bcc", "fcc"):
        raise ValueError("exact_table_bf is for bcc and fcc")
    if not isinstance(extent, int) or extent < 2:
        raise ValueError(f"extent must be an integer >= 2 (got {extent!r})")
    hit = _BF_CACHE.get(lattice)
    if hit is None:
        hit = (4, _solve_bf(lattice, 4))
    N, G = hit
    while N < extent:
        try:
            _layer_step(lattice, N, G, 2)
        except ValueError:
            _layer_step(lattice, N, G, 3)   # larger look-ahead; raises if still undetermined
        N += 1
    _BF_CACHE[lattice] = (N, G)
    return {s: c for s, c in G.items() if s[0] <= extent}
