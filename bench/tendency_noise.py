"""How often the tendency characteristic (WMO code table 0200) of a FLAT
3-hour pressure trace comes out as something other than 4 (steady) when
each average carries noise: seeded Monte Carlo on
tinygeo.station.tendency_code.

Usage (from the repository root)::

    python bench/tendency_noise.py                 # 20 000 traces per noise level
    python bench/tendency_noise.py --trials 100000 --steady 20

A trace is 19 averages 10 minutes apart (3 hours, both ends included) of a
constant 1010 hPa plus Gaussian noise of the given standard deviation per
average (random.Random(seed).gauss): a buoy's residual heave, or a coarsely
quantised barometer averaged over a few readings. Printed per noise level:
the share of traces with a code other than 4, and with a shape code (0, 1,
3, 5, 6, 8: "... then ..." in the code table's words) as opposed to a plain
rise or fall (2, 7). steady_pa (the station's ``steady_pa``, --steady) is
the change within which a part of the trace counts as steady. Not run by
the tests.
"""
import argparse
import random

from tinygeo.station import tendency_code

SHAPES = (0, 1, 3, 5, 6, 8)


def shares(sigma_pa, trials, steady_pa, seed, n=19):
    rnd = random.Random(seed)
    not_steady = shape = 0
    for _ in range(trials):
        code = tendency_code([101000.0 + rnd.gauss(0.0, sigma_pa) for _ in range(n)], steady_pa)
        if code != 4:
            not_steady += 1
        if code in SHAPES:
            shape += 1
    return not_steady / trials, shape / trials


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--trials", type=int, default=20000)
    ap.add_argument("--steady", type=float, default=10.0, help="steady_pa, Pa (default 10)")
    ap.add_argument("--seed", type=int, default=0)
    a = ap.parse_args()
    print("flat 3-hour traces of 19 averages, %d per level, steady_pa=%g, seed %d"
          % (a.trials, a.steady, a.seed))
    print("noise per average   code other than 4   shape code (0 1 3 5 6 8)")
    for sigma in (1.0, 2.0, 3.0, 4.0, 5.0):
        ns, sh = shares(sigma, a.trials, a.steady, a.seed)
        print("%8.1f Pa %20.1f %% %21.1f %%" % (sigma, 100.0 * ns, 100.0 * sh))


if __name__ == "__main__":
    main()
