"""Reproduces the numerical confirmations of NOTES.md section D (not part of the test suite).

Run: cd /work/scratch/trihex && /tmp/v/bin/python scripts/extrapolate_axis.py
Neville extrapolation in x = 1/m^2 of exact axis values R(m,0), m = 800..1600:
  1. A = lim [R(m,0) - ln(m)/(sqrt3 pi)]  vs  (gamma + ln 2 + ln3/2)/(sqrt3 pi)
  2. c4 = lim m^4 [R - ln m/(sqrt3 pi) - A]  vs  -sqrt3/(90 pi)
  3. c6 = lim m^6 [R - ln m/(sqrt3 pi) - A - c4/m^4]  vs  -5/(84 sqrt3 pi)
  4. c8 on the axis (no closed form derived; printed).
"""
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import mpmath
from flint import arb, ctx

import triangular as T


def neville0(xs, ys):
    P = ys[:]
    for k in range(1, len(xs)):
        for i in range(len(xs) - k):
            P[i] = (xs[i + k] * P[i] - xs[i] * P[i + 1]) / (xs[i + k] - xs[i])
    return P[0]


def main() -> None:
    t = time.time()
    ax = T._axis(1600)
    print(f"axis to m = 1600: {time.time() - t:.2f} s; |a_1600| has "
          f"{ax[1600][0].numerator.bit_length()} bits")
    ctx.prec = 9000
    with mpmath.workprec(9000):
        pi, r3 = mpmath.pi, mpmath.sqrt(3)
        A = (mpmath.euler + mpmath.log(2) + mpmath.log(3) / 2) / (r3 * pi)
        c4 = -r3 / (90 * pi)
        c6 = -5 / (84 * r3 * pi)

        def f(m):
            a, b = ax[m]
            x = arb(a.numerator) / a.denominator + arb(b.numerator) / b.denominator * arb(3).sqrt() / arb.pi()
            return mpmath.mpf(x.mid().str(2600, radius=False)) - mpmath.log(m) / (r3 * pi)

        ms = list(range(800, 1601, 20))
        vals = {m: f(m) for m in ms}
        xs = [mpmath.mpf(1) / m ** 2 for m in ms]
        estA = neville0(xs, [vals[m] for m in ms])
        print("A  closed form - extrapolation:", mpmath.nstr(abs(estA - A), 5))
        est4 = neville0(xs, [(vals[m] - A) * m ** 4 for m in ms])
        print("c4 closed form - extrapolation:", mpmath.nstr(abs(est4 - c4), 5))
        est6 = neville0(xs, [(vals[m] - A - c4 / m ** 4) * m ** 6 for m in ms])
        print("c6 closed form - extrapolation:", mpmath.nstr(abs(est6 - c6), 5))
        est8 = neville0(xs, [(vals[m] - A - c4 / m ** 4 - c6 / m ** 6) * m ** 8 for m in ms])
        print("c8 (axis) =", mpmath.nstr(est8, 30), "; c8 sqrt3 pi + 7/20 =", mpmath.nstr(est8 * r3 * pi + mpmath.mpf(7) / 20, 5))
        print("A =", mpmath.nstr(A, 110))


if __name__ == "__main__":
    main()
