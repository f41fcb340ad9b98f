"""sc Green's function at any energy by its time-domain (Bessel) representation.

An independent method for the simple cubic lattice, inside the band as well: it shares
nothing with the closed forms or with the 1-D integral over the square lattice's closed form
(``methods/cubic_green_integral.py``) but the definition of G.

Derivation.  For Im E > 0, (E - H)^-1 = -i int_0^oo e^(i(E - H)t) dt, and E + i0 on the band
is the limit Im E -> 0+ (dominated convergence on the tail below).  H is the sum of three
commuting 1-D hoppings, so <0|e^(-iHt)|r> is a product over the axes of
(1/2pi) int e^(-2it cos k + i l k) dk = (-i)^l J_l(2t) (Jacobi-Anger, DLMF 10.12.1), hence

    G(E; l, m, n) = -i (-i)^(l+m+n) int_0^oo e^(iEt) J_l(2t) J_m(2t) J_n(2t) dt.          (T)

[0, T]: Gauss-Legendre (mpmath) on pieces of length 2 (the integrand is entire).
[T, oo): Hankel's expansion J_v(x) = (2/(pi x))^(1/2) [e^(i chi) A_+(x) + e^(-i chi) A_-(x)]/2,
chi = x - v pi/2 - pi/4, A_+-(x) = sum_k (+-i)^k a_k(v) x^-k, a_k(v) = prod_(j<=k)
(4v^2 - (2j-1)^2)/(k! 8^k) (DLMF 10.17.1, 10.17.5; H^(1,2) = J +- iY).  The product of the three
expansions (x = 2t) is (pi t)^(-3/2)/8 sum over the 8 sign patterns s of
e^(-i sum s_j (v_j pi/2 + pi/4)) e^(2i S t) sum_k p_(s,k) t^-k, S = s_1 + s_2 + s_3; with
e^(iEt) each term is integrated exactly:

    int_T^oo e^(i w t) t^-a dt = p^(a-1) Gamma(1 - a, p T),  p = -i w,  w = E + 2S,

(substitute u = p t; DLMF 8.2.2; principal powers, valid for Re p > 0 and by continuity at
Re p = 0+, i.e. w real with the +i0 of E), and T^(1-a)/(a - 1) when w = 0.  The series is
asymptotic: it is summed while its terms fall below 10^-(dps + 8) (T is chosen so that they
do: x = 2T must be large next to the orders' v^2 and next to the digits asked for).

Error control: mpmath's estimate for the head and the first neglected tail term; no proven
bound (this is an independent check; the printed values come from the ball or the 1-D
integral).
"""

from __future__ import annotations

import itertools
from typing import Any

import mpmath

from ..energy import Energy
from ..errors import PrecisionError

MAX_ORDER = 12  # largest coordinate handled (the head's length grows like v^2)


def _a(v: int, K: int) -> list[Any]:
    out = [mpmath.mpf(1)]
    m = 4 * v * v
    for k in range(1, K + 1):
        out.append(out[-1] * (m - (2 * k - 1) ** 2) / (8 * k))
    return out


def _tail(E: Any, site: tuple[int, int, int], T: Any, eps: Any) -> Any:
    """int_T^oo e^(iEt) J_l J_m J_n(2t) dt from the Hankel expansions (module docstring)."""
    pi = +mpmath.pi
    K = int(4 * T)
    A = {v: _a(v, K) for v in set(site)}
    by_S: dict[int, list[Any]] = {}
    for sig in itertools.product((1, -1), repeat=3):
        ser = [mpmath.mpc(1)]
        for s, v in zip(sig, site, strict=True):
            cj = [mpmath.mpc(0, s) ** k * A[v][k] / mpmath.mpf(2) ** k for k in range(K + 1)]
            new = [mpmath.mpc(0)] * (K + 1)
            for i, x in enumerate(ser):
                if x:
                    for k in range(K + 1 - i):
                        new[i + k] += x * cj[k]
            ser = new
        phase = mpmath.expj(-sum(s * (v * pi / 2 + pi / 4) for s, v in zip(sig, site,
                                                                             strict=True)))
        acc = by_S.setdefault(sum(sig), [mpmath.mpc(0)] * (K + 1))
        for k in range(K + 1):
            acc[k] += phase * ser[k]
    total = mpmath.mpc(0)
    for S, ser in by_S.items():
        w = E + 2 * S
        for k, c in enumerate(ser):
            if k > 4 and abs(c) * T ** (-k - mpmath.mpf(1) / 2) < eps:
                break
            a = mpmath.mpf(3) / 2 + k
            if w == 0:
                total += c * T ** (1 - a) / (a - 1)
            else:
                p = -1j * w
                total += c * p ** (a - 1) * mpmath.gammainc(1 - a, p * T)
        else:
            raise PrecisionError(f"the Hankel tail did not converge at T = {T}")
    return total / (8 * pi ** mpmath.mpf(1.5))


def _head(E: Any, site: tuple[int, int, int], T: Any) -> tuple[Any, Any]:
    va, vb, vc = site

    def f(t: Any) -> Any:
        x = 2 * t
        return mpmath.expj(E * t) * mpmath.besselj(va, x) * mpmath.besselj(vb, x) * \
            mpmath.besselj(vc, x)

    pts = [mpmath.mpf(k) for k in range(0, int(T), 2)] + [T]
    return mpmath.quad(f, pts, method="gauss-legendre", error=True)


def _pass(E: Energy, site: tuple[int, int, int], dps: int) -> tuple[Any, Any]:
    with mpmath.workdps(dps + 15):
        Ez = mpmath.mpc(mpmath.mpf(E.re.numerator) / E.re.denominator,
                        mpmath.mpf(E.im.numerator) / E.im.denominator)
        T = mpmath.mpf(int(0.6 * dps) + 16 + max(site) ** 2 // 2)
        h, err = _head(Ez, site, T)
        tl = _tail(Ez, site, T, mpmath.mpf(10) ** -(dps + 8))
        v = -1j * (-1j) ** sum(site) * (h + tl)
        return v, err


def green_bessel(E: Energy, site: tuple[int, int, int], dps: int) -> Any:
    """sc G(E; site) by (T), to about ``dps`` significant digits relative to |G| (estimate),
    for Im E >= 0 (E + i0 on the band).  Coordinates up to MAX_ORDER.

    >>> from latgreen.energy import parse_energy
    >>> # G(6; 1,0,0) = W_sc/2 - 1/6 (lattice equation at the origin; W_sc: OEIS A086231 / 3)
    >>> mpmath.nstr(green_bessel(parse_energy("6", "sc"), (1, 0, 0), 15).real, 12)
    '0.086064343192'
    """
    site = (abs(site[0]), abs(site[1]), abs(site[2]))
    if max(site) > MAX_ORDER:
        raise ValueError(f"the Bessel method handles coordinates up to {MAX_ORDER}")
    with mpmath.workdps(20):  # scouting: the integrand is O(1), G may be much smaller
        g, _ = _pass(E, site, 12)
        extra = max(0, int(-mpmath.log10(abs(g)))) if g != 0 else 20
    d = dps + extra
    v, err = _pass(E, site, d)
    with mpmath.workdps(d + 15):
        if err > abs(v) * mpmath.mpf(10) ** -(dps + 3):
            raise PrecisionError(f"the Bessel integral for sc G({E}; {site}) did not reach "
                                 f"{dps} digits")
        return +v
