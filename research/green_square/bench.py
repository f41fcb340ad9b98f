"""Timings for NOTES.md (not a test): exact octant N=200 + 40-digit ball evaluation of
every site, vs the quadrature per site on a sample (extrapolated)."""
import time

import mpmath

from green_square import evaluate_exact, green_exact_octant, green_quad


def main() -> None:
    for E in ["9/2", "1.5+0.5j", "2.5"]:
        t = time.time()
        oc = green_exact_octant(E, 200)
        t_oct = time.time() - t
        t = time.time()
        vals = {s: evaluate_exact(c, E, 40) for s, c in oc.items()}
        t_ev = time.time() - t
        sample = [(10, 3), (50, 20), (100, 0), (150, 75), (200, 10)]
        t = time.time()
        worst = 0
        for s in sample:
            q = green_quad(E, s[0], s[1], 40)
            mid = vals[s][0]
            with mpmath.workdps(50):
                worst = max(worst, abs(q - mid) / abs(mid))
        t_q = (time.time() - t) / len(sample)
        print(f"E={E}: octant N=200 ({len(oc)} sites) coefficients {t_oct:.2f} s, "
              f"40-digit balls for all sites {t_ev:.2f} s; quadrature {t_q:.2f} s/site on "
              f"{sample} (worst rel. diff {mpmath.nstr(worst, 3)}), extrapolated "
              f"{t_q * len(oc) / 3600:.1f} h for the octant")


if __name__ == "__main__":
    main()
