"""Square-lattice Green's function G(E; m, n) = <0|(E - H)^-1|(m, n)>.

Conventions (latgreen DESIGN.md): hopping +1 to the 4 nearest neighbours, band [-4, 4],

    G(E; m, n) = (2 pi)^-2 int int cos(m x) cos(n y) / (E - 2 cos x - 2 cos y) dx dy,

analytic in E on the plane cut along [-4, 4]; for real E inside the band the retarded limit
E + i0 is taken (Im G(E; 0, 0) <= 0).

Three independent routes are provided:

* closed form (``green00``, ``green11``): complete elliptic integrals K, E with parameter
  m = k^2 (DLMF 19.2), evaluated as python-flint balls, with the continuation onto the cut
  derived in NOTES.md section 2;
* quadrature (``green_quad``) of the reduced one-dimensional integral (NOTES.md section 3);
* exact forms (``green_exact_octant``, ``evaluate_exact``): G(m, n) = a G(0,0) + b G(1,1) + c
  with a, b, c polynomials in E with rational coefficients (Morita, J. Math. Phys. 12, 1744
  (1971)), filled by a recurrence (NOTES.md section 4) and evaluated in ball arithmetic.

Energies are given as strings ("9/2", "1.5+0.5j"), ints, Fractions or pairs of Fractions
(real, imaginary); binary floats are refused.
"""
from __future__ import annotations

import functools
import math
import re
from fractions import Fraction
from typing import Any, Union

import gmpy2
import mpmath
from flint import acb, arb, ctx, fmpq
from gmpy2 import mpq

__all__ = [
    "parse_energy",
    "green00",
    "green11",
    "green_quad",
    "green_exact_octant",
    "evaluate_exact",
    "green",
    "dos",
    "local_dos",
    "resistance_exact",
]

EnergyLike = Union[str, int, Fraction, "tuple[Fraction, Fraction]"]
Cq = tuple  # a Gaussian rational: (re, im), both gmpy2.mpq

BAND = Fraction(4)

# --------------------------------------------------------------------------------------
# energies
# --------------------------------------------------------------------------------------

_DEC = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_NUM = rf"(?:\d+/\d+|{_DEC})"
_RE_REAL = re.compile(rf"^([+-]?{_NUM})$")
_RE_IMAG = re.compile(rf"^([+-]?)({_NUM})?[ji]$")
_RE_CPLX = re.compile(rf"^([+-]?{_NUM})([+-])({_NUM})?[ji]$")


def _check_energy(er: Fraction, ei: Fraction, text: str) -> tuple[Fraction, Fraction]:
    if ei < 0:
        raise ValueError(
            f"energy {text!r} has a negative imaginary part: latgreen takes the retarded "
            "branch E + i0 (Im E >= 0); use the complex conjugate, G(conj E) = conj G(E)")
    if ei == 0 and abs(er) == BAND:
        raise ValueError(
            f"energy {text!r} is on the band edge +-4 where G(E;0,0) diverges "
            "(logarithmically); the finite band-edge limit 2[G(0)-G(r)] is the "
            "'resistance' quantity (resistance_exact)")
    if ei == 0 and er == 0:
        raise ValueError(
            f"energy {text!r} is the band centre E = 0 where the density of states "
            "diverges logarithmically and Im G(E+i0;0,0) is infinite")
    return er, ei


def parse_energy(text: str) -> tuple[Fraction, Fraction]:
    """Exact (Re E, Im E) from a string such as "4.5", "9/2", "-1.25", "1.5+0.5j", "0.5j".

    Decimals are exact (``"4.1"`` is 41/10), never binary floats. Raises ValueError for text
    that is not a number, for E = +-4 (band edge: G diverges, see ``resistance_exact``), for
    E = 0 (Im G(0+i0;0,0) infinite) and for Im E < 0 (retarded branch E + i0 only).

    >>> parse_energy("1.5-0.5j")
    Traceback (most recent call last):
    ...
    ValueError: energy '1.5-0.5j' has a negative imaginary part: latgreen takes the
    retarded branch E + i0 (Im E >= 0); use the complex conjugate, G(conj E) = conj G(E)
    >>> parse_energy("9/2"), parse_energy("1.5+0.5j")
    ((Fraction(9, 2), Fraction(0, 1)), (Fraction(3, 2), Fraction(1, 2)))
    """
    if not isinstance(text, str):
        raise ValueError(f"energy must be given as a string here, got {type(text).__name__}")
    s = "".join(text.split())
    if len(s) >= 2 and s[0] == "(" and s[-1] == ")":
        s = s[1:-1]
    try:
        if (mt := _RE_REAL.match(s)):
            er, ei = Fraction(mt.group(1)), Fraction(0)
        elif (mt := _RE_IMAG.match(s)):
            er = Fraction(0)
            ei = Fraction(mt.group(2) or "1") * (-1 if mt.group(1) == "-" else 1)
        elif (mt := _RE_CPLX.match(s)):
            er = Fraction(mt.group(1))
            ei = Fraction(mt.group(3) or "1") * (-1 if mt.group(2) == "-" else 1)
        else:
            raise ValueError
    except (ValueError, ZeroDivisionError):
        raise ValueError(
            f"cannot parse energy {text!r}: expected e.g. '4.5', '9/2', '1.5+0.5j', '0.5j'"
        ) from None
    return _check_energy(er, ei, text)


def _energy(E: EnergyLike) -> tuple[Fraction, Fraction]:
    """Normalise any accepted energy form to checked exact (re, im)."""
    if isinstance(E, str):
        return parse_energy(E)
    if isinstance(E, bool) or isinstance(E, (float, complex)):
        raise ValueError(
            f"energy {E!r} is a binary float: pass a string ('4.1') or a Fraction instead")
    if isinstance(E, (int, Fraction)) or type(E).__name__ == "mpq":
        return _check_energy(Fraction(E), Fraction(0), str(E))  # type: ignore[arg-type]
    if isinstance(E, tuple) and len(E) == 2:
        er, ei = E
        for v in (er, ei):
            if isinstance(v, (float, complex, bool)) or not (
                    isinstance(v, (int, Fraction)) or type(v).__name__ == "mpq"):
                raise ValueError(f"energy parts must be ints or Fractions, got {E!r}")
        return _check_energy(Fraction(er), Fraction(ei), f"{er}+{ei}j")
    raise ValueError(f"cannot use {E!r} as an energy: pass a string, int, Fraction or "
                     "a (re, im) pair of Fractions")


def _arb_q(x: Fraction) -> arb:
    return arb(fmpq(x.numerator, x.denominator))


def _acb_q(er: Fraction, ei: Fraction) -> acb:
    return acb(_arb_q(er), _arb_q(ei))


class _prec:
    """Scoped python-flint working precision (restored in ``finally``)."""

    def __init__(self, prec: int):
        self.prec = prec

    def __enter__(self):
        self.old = ctx.prec
        ctx.prec = self.prec

    def __exit__(self, *exc):
        ctx.prec = self.old
        return False


# --------------------------------------------------------------------------------------
# closed forms (NOTES.md section 2)
# --------------------------------------------------------------------------------------

def _cut_values(x: Fraction) -> tuple[acb, acb]:
    """(G(x+i0;0,0), G(x+i0;1,1)) for 0 < x < 4, at the current ctx precision.

    With q = x^2/16, q' = 1 - q (NOTES.md 2.2, 2.3):
      G00 = [K(q) - i K(q')] / (2 pi)
      G11 = ((x^2 - 8)/8) G00 - [E(q) - q' K(q) + i (E(q') - q K(q'))] / pi
    """
    q = _arb_q(x * x / 16)
    qc = 1 - q
    Kq, Eq = acb(q).elliptic_k(), acb(q).elliptic_e()
    Kc, Ec = acb(qc).elliptic_k(), acb(qc).elliptic_e()
    pi = arb.pi()
    g00 = (Kq - acb(0, 1) * Kc) / (2 * pi)
    g11 = _arb_q((x * x - 8) / 8) * g00 - (Eq - qc * Kq + acb(0, 1) * (Ec - q * Kc)) / pi
    return g00, g11


def _closed(er: Fraction, ei: Fraction, prec: int) -> tuple[acb, acb]:
    """(G(E;0,0), G(E;1,1)) as balls; E checked, off the cut or on the open cut."""
    with _prec(prec + 20):
        if ei == 0 and abs(er) < BAND:
            g00, g11 = _cut_values(abs(er))
            if er < 0:  # G(-x+i0; m,n) = -(-1)^(m+n) conj G(x+i0; m,n)  (NOTES 2.2, 6.3)
                g00, g11 = -g00.conjugate(), -g11.conjugate()
        else:
            # off the cut the principal-branch formula is correct (NOTES 2.1)
            z = _acb_q(er, ei)
            m = 16 / (z * z)
            pi = arb.pi()
            g00 = 2 * m.elliptic_k() / (pi * z)
            g11 = (z * z - 8) / 8 * g00 - z * m.elliptic_e() / (4 * pi)
        return +g00, +g11


@functools.lru_cache(maxsize=256)
def _closed_cached(er: Fraction, ei: Fraction, prec: int) -> tuple[acb, acb]:
    return _closed(er, ei, prec)


def green00(E: EnergyLike, prec: int) -> acb:
    """Rigorous ball for G(E;0,0) = (2/(pi E)) K(16/E^2) (K of parameter m, DLMF 19.2).

    Off the cut [-4, 4] the principal-branch formula is the analytic continuation of the
    large-E series (NOTES.md 2.1). On the cut (real 0 < |E| < 4, limit E + i0):
    G(E+i0;0,0) = sign(E) [K(E^2/16) - i sign(E) K(1 - E^2/16)] / (2 pi)  (NOTES.md 2.2).
    ``prec`` is the working precision in bits (20 guard bits are added internally).

    >>> print(green00("9/2", 64).str(15, radius=False))
    0.316235097306710
    >>> print(mpmath.nstr(green_quad("9/2", 0, 0, 15).real, 15))  # independent route
    0.31623509730671
    """
    er, ei = _energy(E)
    return _closed(er, ei, prec)[0]


def green11(E: EnergyLike, prec: int) -> acb:
    """Rigorous ball for G(E;1,1) = ((E^2-8)/8) G(E;0,0) - (E/(4 pi)) E(16/E^2).

    Derived in NOTES.md 2.3 (complete elliptic integral E of parameter m, DLMF 19.2); on the
    cut the explicit E + i0 form of NOTES.md 2.3 is used.
    """
    er, ei = _energy(E)
    return _closed(er, ei, prec)[1]


# --------------------------------------------------------------------------------------
# quadrature of the reduced 1-D integral (NOTES.md section 3)
# --------------------------------------------------------------------------------------

def green_quad(E: EnergyLike, m: int, n: int, dps: int) -> mpmath.mpc:
    """G(E;m,n) by tanh-sinh quadrature of the reduced integral (NOTES.md 3)

        G(E;m,n) = (1/pi) int_0^pi cos(n y) t(y)^|m| / w(y) dy,
        a = E - 2 cos y,  w = sqrt(a-2) sqrt(a+2),  t = 2/(a + w)  (|t| <= 1),

    i.e. w = 2 sinh s, t = e^-s with cosh s = a/2, Re s >= 0. For real E in the band the
    limit a + i0 is taken: w = i sqrt(4 - a^2), t = (a - i sqrt(4 - a^2))/2 where |a| < 2.
    a -+ 2 = 4 sin((y + al)/2) sin((y - al)/2), cos al = (E -+ 2)/2, is computed as a
    product (no cancellation at the inner band edges). [0, pi] is split at Re al (the
    inverse-square-root singularities inside the band, near-singularities close to it) and
    into pieces short against the oscillation; each piece [p, q] is mapped by
    y = p + (q - p) sin^2 phi, which removes the endpoint singularities.
    The error estimate of mpmath is heuristic: agreement with the exact forms is the check.
    """
    er, ei = _energy(E)
    m, n = _site(m, n)
    if n > m:
        m, n = n, m
    if isinstance(dps, bool) or not isinstance(dps, int) or dps < 1:
        raise ValueError("dps must be a positive integer")
    # Passes: a scouting pass at about half the digits, then full passes. Each pass is
    # rescaled by the previous estimate (mpmath's tolerance is absolute) and its working
    # precision raised by the cancellation digits log10(max|integrand| / |G|) seen
    # (oscillation at far sites). Accepted when mpmath's error estimate is below
    # 10^-(dps+3) relative and the previous pass agrees to the digits it aimed at.
    scale, maxdeg, prev, prev_digits = mpmath.mpf(1), None, None, 0
    wdps, target = max(15, dps // 2 + 10), max(5, dps // 2)
    for _ in range(10):
        v, err, M = _quad_pass(er, ei, m, n, wdps, scale, maxdeg)
        with mpmath.workdps(wdps):
            av = abs(v)
            if av == 0:
                scale, wdps = scale * mpmath.mpf(10) ** -wdps, wdps + 10
                continue
            cancel = int(mpmath.log10(M / av)) + 1 if M > av else 0
            trusted = cancel + 8 <= wdps - target and err <= av * mpmath.mpf(10) ** -(target + 3)
            good = (trusted and target >= dps and prev is not None
                    and mpmath.mpf(10) ** -3 <= av <= 10**3
                    and abs(v * scale - prev) <= abs(v * scale) * mpmath.mpf(10) ** -prev_digits)
            if good:
                with mpmath.workdps(dps):
                    return +(v * scale)
            if trusted:
                if prev is not None and target >= dps:
                    # disagreement with the previous pass: change the rule, not just redo it
                    wdps, maxdeg = wdps + 10, (maxdeg or 8) + 2
                prev, prev_digits = v * scale, target
                target = dps
            elif cancel + 8 <= wdps - target:
                maxdeg = (maxdeg or 8) + 2
            wdps = max(wdps, target + cancel + 15)
            scale = abs(v * scale)
    raise ValueError(f"quadrature of G(E;{m},{n}) did not reach {dps} digits")


def _quad_pass(er: Fraction, ei: Fraction, m: int, n: int, wdps: int,
               scale: mpmath.mpf, maxdeg) -> tuple:
    """One tanh-sinh pass at wdps digits of (1/pi) int_0^pi f / scale (see green_quad).

    Returns (value, mpmath's error estimate, max |integrand| / pi seen at the nodes)."""
    with mpmath.workdps(wdps):
        Ez = mpmath.mpc(mpmath.mpf(er.numerator) / er.denominator,
                        mpmath.mpf(ei.numerator) / ei.denominator)
        on_cut = ei == 0
        alp = mpmath.acos((Ez - 2) / 2)  # cos alp = (E - 2)/2
        alm = mpmath.acos((Ez + 2) / 2)  # cos alm = (E + 2)/2
        inv = 1 / scale
        big = [mpmath.mpf(0)]

        def f(p, h):
            # y = p + h; the differences y - al are formed as (p - al) + h
            y = p + h
            am2 = 4 * mpmath.sin((y + alp) / 2) * mpmath.sin(((p - alp) + h) / 2)  # a - 2
            ap2 = 4 * mpmath.sin((y + alm) / 2) * mpmath.sin(((p - alm) + h) / 2)  # a + 2
            if on_cut:
                am2, ap2 = am2.real, ap2.real
                a = am2 + 2
                if am2 < 0 < ap2:  # |a| < 2: a + i0
                    r = mpmath.sqrt(-am2 * ap2)
                    w, t = mpmath.mpc(0, r), mpmath.mpc(a, -r) / 2
                else:
                    w = mpmath.sqrt(am2 * ap2)
                    if a < 0:
                        w = -w
                    t = 2 / (a + w)
            else:
                a = am2 + 2
                w = mpmath.sqrt(am2) * mpmath.sqrt(ap2)
                t = 2 / (a + w)
            return mpmath.cos(n * y) * t ** m / w * inv

        pi = +mpmath.pi
        pts = [mpmath.mpf(0), pi]
        for al in (alp, alm):
            c = mpmath.re(al)
            if 0 < c < pi and (mpmath.im(al) == 0 or not on_cut):
                pts.append(c)
        pieces = max(m, n) // 4 + 1
        pts += [pi * k / pieces for k in range(1, pieces)]
        pts = sorted(set(pts))
        total, err = mpmath.mpc(0), mpmath.mpf(0)
        for p, q in zip(pts[:-1], pts[1:], strict=True):
            L = q - p

            def g(phi, p=p, q=q, L=L):
                s, c = mpmath.sin(phi), mpmath.cos(phi)
                h = (p, L * s * s) if phi < pi / 4 else (q, -L * c * c)
                v = f(*h) * 2 * L * s * c
                big[0] = max(big[0], abs(v))
                return v

            kw = {"maxdegree": maxdeg} if maxdeg else {}
            v, e = mpmath.quad(g, [0, pi / 2], error=True, **kw)
            total += v
            err += e
        return total / pi, err / pi, big[0] / pi


def _site(m: int, n: int) -> tuple[int, int]:
    if isinstance(m, bool) or isinstance(n, bool) or not (
            isinstance(m, int) and isinstance(n, int)):
        raise ValueError(f"site ({m!r}, {n!r}) must be a pair of integers")
    return abs(m), abs(n)


# --------------------------------------------------------------------------------------
# exact forms: Morita-type recurrence (NOTES.md section 4)
# --------------------------------------------------------------------------------------

def _octant_real(e: mpq, N: int) -> list:
    """Columns [m][n] of coefficients (a, b, c) in Q of G(m,n) = a G00 + b G11 + c, real E = e."""
    Z, ONE = mpq(0), mpq(1)
    cols = [[(ONE, Z, Z)]]
    if N == 0:
        return cols
    cols.append([(e / 4, Z, mpq(-1, 4)), (Z, ONE, Z)])
    e2h = (e * e - 8) / 2
    diag = [cols[0][0], cols[1][1]]
    for k in range(1, N):
        # (2k+1) g_{k+1} = k (E^2-8)/2 g_k - (2k-1) g_{k-1}
        f1, f2, d = k * e2h, mpq(2 * k - 1), 2 * k + 1
        gk, gl = diag[k], diag[k - 1]
        diag.append(tuple((f1 * x - f2 * y) / d for x, y in zip(gk, gl, strict=True)))
    for mm in range(1, N):
        cur, prev = cols[mm], cols[mm - 1]
        new = []
        for nn in range(mm):
            below = cur[nn - 1] if nn > 0 else cur[1]
            a, b, c = cur[nn]
            p, q, r = prev[nn]
            u, v, w = cur[nn + 1]
            x, y, z = below
            new.append((e * a - p - u - x, e * b - q - v - y, e * c - r - w - z))
        a, b, c = cur[mm]
        x, y, z = cur[mm - 1]
        new.append(((e * a) / 2 - x, (e * b) / 2 - y, (e * c) / 2 - z))
        new.append(diag[mm + 1])
        cols.append(new)
    return cols


def _cmul(er: mpq, ei: mpq, x: Cq) -> Cq:
    return (er * x[0] - ei * x[1], er * x[1] + ei * x[0])


def _octant_complex(er: mpq, ei: mpq, N: int) -> list:
    """As _octant_real for Gaussian-rational E = er + i ei; entries are 3 pairs (re, im)."""
    Z, ONE = mpq(0), mpq(1)
    z2 = (Z, Z)
    cols: list = [[((ONE, Z), z2, z2)]]
    if N == 0:
        return cols
    cols.append([((er / 4, ei / 4), z2, (mpq(-1, 4), Z)), (z2, (ONE, Z), z2)])
    # (E^2 - 8)/2
    hr, hi = (er * er - ei * ei - 8) / 2, er * ei
    diag: list = [cols[0][0], cols[1][1]]
    for k in range(1, N):
        d = 2 * k + 1
        fr, fi, f2 = k * hr, k * hi, 2 * k - 1
        row = []
        for x, y in zip(diag[k], diag[k - 1], strict=True):
            pr, pi_ = _cmul(fr, fi, x)
            row.append(((pr - f2 * y[0]) / d, (pi_ - f2 * y[1]) / d))
        diag.append(tuple(row))
    for mm in range(1, N):
        cur, prev = cols[mm], cols[mm - 1]
        new = []
        for nn in range(mm):
            below = cur[nn - 1] if nn > 0 else cur[1]
            ent = []
            for j in range(3):
                s = cur[nn][j]
                pr, pi_ = er * s[0] - ei * s[1], er * s[1] + ei * s[0]
                p, u, x = prev[nn][j], cur[nn + 1][j], below[j]
                ent.append((pr - p[0] - u[0] - x[0], pi_ - p[1] - u[1] - x[1]))
            new.append(tuple(ent))
        ent = []
        for j in range(3):
            s, x = cur[mm][j], cur[mm - 1][j]
            pr, pi_ = er * s[0] - ei * s[1], er * s[1] + ei * s[0]
            ent.append((pr / 2 - x[0], pi_ / 2 - x[1]))
        new.append(tuple(ent))
        new.append(diag[mm + 1])
        cols.append(new)
    return cols


def _octant(er: Fraction, ei: Fraction, N: int) -> dict:
    if isinstance(N, bool) or not isinstance(N, int) or N < 0:
        raise ValueError(f"octant extent N must be a non-negative integer, got {N!r}")
    Z = mpq(0)
    out = {}
    if ei == 0:
        cols = _octant_real(mpq(er.numerator, er.denominator), N)
        for m, col in enumerate(cols):
            for n, (a, b, c) in enumerate(col):
                out[(m, n)] = ((a, Z), (b, Z), (c, Z))
    else:
        cols = _octant_complex(mpq(er.numerator, er.denominator),
                               mpq(ei.numerator, ei.denominator), N)
        for m, col in enumerate(cols):
            for n, abc in enumerate(col):
                out[(m, n)] = abc
    return out


def green_exact_octant(E: EnergyLike, N: int) -> dict[tuple[int, int], tuple[Cq, Cq, Cq]]:
    """Exact coefficients of G(E;m,n) = a G(E;0,0) + b G(E;1,1) + c for 0 <= n <= m <= N.

    a, b, c are polynomials in E with rational coefficients (Morita, J. Math. Phys. 12, 1744
    (1971); our basis {G(0,0), G(1,1), 1}); for rational or Gaussian-rational E they are
    returned exactly as pairs (re, im) of gmpy2.mpq. Recurrence (NOTES.md 4):
      diagonal  (2k+1) G(k+1,k+1) = k (E^2-8)/2 G(k,k) - (2k-1) G(k-1,k-1),
      lattice   G(m+1,n) = E G(m,n) - G(m-1,n) - G(m,n+1) - G(m,n-1)   (n < m),
                G(m+1,m) = E G(m,m)/2 - G(m,m-1),
      seeds     G(1,0) = (E G(0,0) - 1)/4.
    Never evaluate these in floating point: use ``evaluate_exact``.
    """
    er, ei = _energy(E)
    return _octant(er, ei, N)


def _bits(x: mpq) -> int:
    """An upper bound of log2 |x| (0 for x = 0)."""
    if x == 0:
        return 0
    return int(gmpy2.mpz(x.numerator).bit_length()) - int(gmpy2.mpz(x.denominator).bit_length()) + 1


def _acb_cq(x: Cq) -> acb:
    return acb(arb(fmpq(int(x[0].numerator), int(x[0].denominator))),
               arb(fmpq(int(x[1].numerator), int(x[1].denominator))))


def _ball(coeffs, er: Fraction, ei: Fraction, prec: int) -> acb:
    a, b, c = coeffs
    g00, g11 = _closed_cached(er, ei, prec)
    with _prec(prec):
        return _acb_cq(a) * g00 + _acb_cq(b) * g11 + _acb_cq(c)


def _exact_mpf(man: Any, exp: Any) -> mpmath.mpf:
    """The dyadic man * 2^exp as an mpmath.mpf without rounding."""
    man, exp = int(man), int(exp)
    with mpmath.workprec(max(53, man.bit_length() + 1)):
        return mpmath.mpf((man, exp)) if man != 0 else mpmath.mpf(0)


def _to_mp(x: arb) -> mpmath.mpf:
    return _exact_mpf(*x.mid().man_exp())


def _rad_mp(x: arb) -> mpmath.mpf:
    return _exact_mpf(*x.rad().man_exp())


def _mpc_exact(re_: mpmath.mpf, im_: mpmath.mpf) -> mpmath.mpc:
    with mpmath.workprec(max(53, _mbits(re_), _mbits(im_))):
        return mpmath.mpc(re_, im_)


def _mbits(x: mpmath.mpf) -> int:
    return int(x._mpf_[3]) + 1 if x else 0


def _certify(build, digits: int, what: str):
    """Raise the precision until build(extra) has relative radius < 10^-(digits+2).

    build(extra) returns (ball, prec). Gives up with ValueError once the precision exceeds
    8 times the first one + 4096 bits (a value that is 0, or too close to 0 to certify)."""
    if isinstance(digits, bool) or not isinstance(digits, int) or digits < 1:
        raise ValueError("digits must be a positive integer")
    need = math.ceil((digits + 2) * math.log2(10))
    extra, cap = 64, None
    while True:
        v, prec = build(extra)
        cap = cap or 8 * prec + 4096
        with _prec(prec):
            if isinstance(v, acb):
                rad = v.real.rad() + v.imag.rad()
                size = abs(v).abs_lower()
            else:
                rad = v.rad()
                size = v.abs_lower()
            ok = size > 0 and rad < size * arb(10) ** (-(digits + 2))
        if ok:
            return v
        if prec > cap:
            raise ValueError(f"could not certify {digits} digits of {what} "
                             f"(precision {prec} bits reached; the value may be 0)")
        extra = 2 * extra + need


def evaluate_exact(coeffs, E: EnergyLike, digits: int) -> tuple[mpmath.mpc, mpmath.mpf]:
    """Evaluate a G(E;0,0) + b G(E;1,1) + c as a rigorous ball: (midpoint, radius).

    ``coeffs`` is one value of ``green_exact_octant`` computed for the same E (not checked).
    The working precision starts at the
    coefficient size (log2 max|a|,|b|,|c|) + digits + 64 guard bits and is raised until the
    relative radius is below 10^-(digits+2). The midpoint is the exact centre of the final
    python-flint ball (an mpmath.mpc, exact), the radius an upper bound of |G - mid|.
    """
    er, ei = _energy(E)
    if all(x == 0 for pair in coeffs for x in pair):
        raise ValueError("all coefficients are 0: the value is exactly 0, relative digits "
                         "cannot be certified")
    need = math.ceil((digits + 2) * math.log2(10)) if isinstance(digits, int) else 0
    size = max(_bits(x) for pair in coeffs for x in pair)

    def build(extra):
        prec = -(-(size + need + extra) // 128) * 128  # multiples of 128 bits: cache hits
        return _ball(coeffs, er, ei, prec), prec

    v = _certify(build, digits, "G(E;m,n)")
    with mpmath.workprec(60):
        rad = mpmath.mpf(mpmath.fadd(_rad_mp(v.real), _rad_mp(v.imag), rounding='u'))
    return _mpc_exact(_to_mp(v.real), _to_mp(v.imag)), rad


def green(E: EnergyLike, m: int, n: int, digits: int) -> tuple[mpmath.mpc, mpmath.mpf]:
    """G(E;m,n) as a certified ball (midpoint, radius) via the exact form (one site)."""
    er, ei = _energy(E)
    m, n = _site(m, n)
    if n > m:
        m, n = n, m
    coeffs = _octant(er, ei, m)[(m, n)]
    return evaluate_exact(coeffs, (er, ei), digits)


# --------------------------------------------------------------------------------------
# densities of states
# --------------------------------------------------------------------------------------

def _real_in_band(E: EnergyLike, what: str) -> tuple[Fraction, bool]:
    er, ei = _energy(E)
    if ei != 0:
        raise ValueError(f"the {what} is defined for real energies only, got Im E = {ei}")
    return er, abs(er) < BAND


def local_dos(E: EnergyLike, m: int, n: int, dps: int) -> mpmath.mpf:
    """Local density of states rho(E;m,n) = -Im G(E + i0; m, n)/pi (0 outside the band).

    Evaluated from the exact form with real coefficients a, b (E real):
    -Im G = -(a Im G00 + b Im G11), as a ball certified to relative radius 10^-(dps+2),
    returned rounded to dps digits. Raises ValueError if it cannot be certified (e.g. it
    vanishes at that E).
    """
    er, inside = _real_in_band(E, "local density of states")
    m, n = _site(m, n)
    if n > m:
        m, n = n, m
    if not inside:
        return mpmath.mpf(0)
    (a, _), (b, _), _c = _octant(er, Fraction(0), m)[(m, n)]
    size = max(_bits(a), _bits(b))
    need = math.ceil((dps + 2) * math.log2(10))

    def build(extra):
        prec = -(-(size + need + extra) // 128) * 128
        g00, g11 = _closed_cached(er, Fraction(0), prec)
        with _prec(prec):
            v = -(arb(fmpq(int(a.numerator), int(a.denominator))) * g00.imag
                  + arb(fmpq(int(b.numerator), int(b.denominator))) * g11.imag) / arb.pi()
        return v, prec

    v = _certify(build, dps, f"rho(E;{m},{n})")
    with mpmath.workdps(dps):
        return +_to_mp(v)


def dos(E: EnergyLike, dps: int) -> mpmath.mpf:
    """Density of states rho(E) = -Im G(E + i0;0,0)/pi = K(1 - E^2/16)/(2 pi^2), |E| < 4.

    (From NOTES.md 2.2; 0 outside the band.) Normalised: int_{-4}^{4} rho = 1.
    """
    return local_dos(E, 0, 0, dps)


# --------------------------------------------------------------------------------------
# resistance: exact band-edge limit of the exact forms
# --------------------------------------------------------------------------------------

def resistance_exact(m: int, n: int) -> tuple[Fraction, Fraction]:
    """R(m,n) = lim_{E->4+} 2[G(E;0,0) - G(E;m,n)] = p + q/pi, returned as (p, q) exactly.

    With G(m,n) = a G00 + b G11 + c (a, b, c polynomials in E), G00 - G11 -> 1/pi and
    G00 ~ log: the limit is finite iff a(4) + b(4) = 1, and then R = 2 b(4)/pi - 2 c(4)
    (NOTES.md 5). The condition a(4) + b(4) = 1 is checked, not assumed.
    """
    m, n = _site(m, n)
    if n > m:
        m, n = n, m
    (a, _), (b, _), (c, _) = _octant(Fraction(4), Fraction(0), m)[(m, n)]
    if a + b != 1:
        raise ArithmeticError(f"a(4) + b(4) = {a + b} != 1 at site ({m},{n})")
    return Fraction(int((-2 * c).numerator), int((-2 * c).denominator)), Fraction(
        int((2 * b).numerator), int((2 * b).denominator))


def _mpc(x: acb) -> mpmath.mpc:
    """Exact centre of an acb ball as an mpmath.mpc."""
    return _mpc_exact(_to_mp(x.real), _to_mp(x.imag))
