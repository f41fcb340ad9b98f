"""G(E; 0) at any energy through complete elliptic integrals (sc, bcc), and the DOS.

K(m) is the complete elliptic integral of the first kind with parameter m = k^2
(DLMF 19.2.8; mpmath.ellipk).  Hopping +1; for real E inside the band the value is the limit
E + i0 (Im G <= 0); for complex E the function is analytic off the band and
G(conj E) = conj G(E).  Both lattices are bipartite, so G(-E; 0) = -G(E; 0), and hence
G(-x + i0) = -conj G(x + i0) for real x.

* sc (Joyce, Phil. Trans. R. Soc. A 273, 583 (1973); the form below from memory, confirmed
  by our quadrature, see NOTES.md D):  with zeta = 6/E,
      xi  = sqrt[(1 - sqrt(1 - zeta^2/9)) / (1 + sqrt(1 - zeta^2))],
      k^2 = 16 xi^3 / ((1 - xi)^3 (1 + 3 xi)),
      G(E; 0) = (1/E) (1 - 9 xi^4) / ((1 - xi)^3 (1 + 3 xi)) * (2 K(k^2) / pi)^2.
* bcc (derived in NOTES.md D): the number of closed 2N-step walks is C(2N,N)^3, so
  G(E; 0) = (1/E) 3F2(1/2,1/2,1/2; 1,1; 64/E^2); Clausen's identity and a quadratic
  transformation give
      G(E; 0) = (1/E) (2 K(u) / pi)^2,   u = (1 - sqrt(1 - 64/E^2)) / 2.
  For 0 < x < 8, E = x + i0 gives sqrt(1 - 64/E^2) = +i sqrt(64/x^2 - 1).
"""
from __future__ import annotations

import mpmath

from cubic import BAND, check_lattice


def _parse_energy(E):
    if isinstance(E, float):
        raise ValueError("energies must be given exactly (str, int, Fraction), not as float")
    return mpmath.mpmathify(E)


def _sc_formula(E):
    zeta = 6 / E
    xi = mpmath.sqrt((1 - mpmath.sqrt(1 - zeta ** 2 / 9)) / (1 + mpmath.sqrt(1 - zeta ** 2)))
    d = (1 - xi) ** 3 * (1 + 3 * xi)
    k2 = 16 * xi ** 3 / d
    return (1 - 9 * xi ** 4) / d * (2 * mpmath.ellipk(k2) / mpmath.pi) ** 2 / E


def _bcc_formula(E):
    u = (1 - mpmath.sqrt(1 - 64 / E ** 2)) / 2
    return (2 * mpmath.ellipk(u) / mpmath.pi) ** 2 / E


def _bcc_inside(x):
    """bcc G(x + i0; 0) for 0 < x < 8 (explicit branch, NOTES.md D)."""
    t = mpmath.sqrt(64 / x ** 2 - 1)
    u = mpmath.mpc(1, -t) / 2
    return (2 * mpmath.ellipk(u) / mpmath.pi) ** 2 / x


def green_origin(lattice: str, E, dps: int = 30) -> mpmath.mpc:
    """G(E; 0) by the closed forms above (sc and bcc), E + i0 on the band.

    E: str, int, Fraction or mpmath number (complex allowed).  Returns an mpmath number
    computed at dps + 15 digits; the closed forms are checked against the independent
    quadrature (quad.green_quad) off the band and against the DOS sum rules on it.
    """
    check_lattice(lattice)
    if lattice == "fcc":
        raise ValueError("no closed form for fcc G(E; 0) here: use quad.green_quad "
                         "(complex E or real E off the band)")
    with mpmath.workdps(dps + 15):
        e = _parse_energy(E)
        if mpmath.im(e) != 0:
            if mpmath.im(e) < 0:
                return mpmath.conj(green_origin(lattice, mpmath.conj(e), dps))
            return _sc_formula(e) if lattice == "sc" else _bcc_formula(e)
        x = mpmath.re(e)
        if x < 0:
            v = green_origin(lattice, -x, dps)
            return -mpmath.conj(v)
        if x == 0:
            if lattice == "bcc":
                raise ValueError("bcc G(E; 0) diverges at E = 0 (van Hove singularity)")
            # sc: G(0 + i0) = -i pi rho(0) (Re G = 0 by G(-x+i0) = -conj G(x+i0)); the
            # imaginary part is taken as the limit along i*delta (error O(delta))
            d = mpmath.mpf(10) ** (-(dps + 10))
            return mpmath.mpc(0, mpmath.im(_sc_formula(mpmath.mpc(0, d))))
        hi = BAND[lattice][1]
        if lattice == "sc":
            return _sc_formula(mpmath.mpc(x, 0)) if x < hi else _sc_formula(x)
        return _bcc_inside(x) if x < hi else _bcc_formula(x)


def dos(lattice: str, E, dps: int = 30) -> mpmath.mpf:
    """Density of states rho(E) = -Im G(E + i0; 0) / pi (normalised to 1), real E."""
    check_lattice(lattice)
    with mpmath.workdps(dps + 15):
        e = _parse_energy(E)
        if mpmath.im(e) != 0:
            raise ValueError("the density of states is defined for real energies")
        lo, hi = BAND[lattice]
        if not lo <= e <= hi:
            return mpmath.mpf(0)
        return -mpmath.im(green_origin(lattice, e, dps)) / mpmath.pi
