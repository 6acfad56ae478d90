"""Error budgets of the core functions on float32 and 30-bit MicroPython floats.

Each core function runs UNMODIFIED under tests/floatemu.py in modes f32
(IEEE binary32, the rp2/esp32/stm32 boards), r30t (30-bit REPR_C floats before
MicroPython v1.26, checked bit for bit against a micro:bit in
tests/test_floatemu.py) and r30f (REPR_C from v1.26), and is compared with the
same function in float64 (plain CPython, the reference) on the SAME inputs:
every input is first rounded to the mode's format and the float64 reference
gets those rounded inputs, so the numbers below are the loss of the
computation itself, not the quantisation of the inputs (a pressure of
100 000 Pa is held to 0.0078 Pa in float32 and 0.031 Pa in 30 bits whatever
the code does). These are precision checks against the float64 run of the
same code, not accuracy references (the float64 code is checked against
published values and mpmath in the other test modules). Emulated libm is correctly rounded float32; a device libm may
be 1-2 ulp worse in log/exp/sin (see floatemu's docstring).

Budgets (largest error allowed over the sampled inputs; 'rel' is relative,
otherwise in the unit of the result). Each was set a little above the largest
error measured over 3000 random inputs plus the edge points (measured values
in bench/precision.py's output, repeated in CASES below):

    case                                      unit    f32       r30 (t and f)
    normal_gravity  lat any, h -1..100 km     rel     5e-07     2.5e-06
    somigliana_gravity                        rel     4e-07     2e-06
    geopotential_height  h 0..50 km           m       0.004     0.02
    geopotential_height  h -1..100 km         m       0.008     0.04
    geometric_height  gph 0..50 km            m       0.004     0.02
    geopotential  h 0..50 km                  rel     2e-07     1.5e-06
    ln_ratio  p and p - 1 Pa, 1..105 kPa      rel     2e-07     8e-07
    ln_ratio  any pair 0.1 Pa..120 kPa        rel     3e-07     1.5e-06
    layer_thickness  1 Pa thick at 100 kPa    rel     3e-07     2.5e-06
    layer_thickness  1 Pa thick at 10 hPa     rel     3e-07     2.5e-06
    layer_thickness  any layer                rel     3e-07     2.5e-06
    layer_thickness_lapse                     rel     4e-07     3.5e-06
    pressure_across_layer                     rel     2e-07     1.5e-06
    standard_temperature                      K       4e-05     0.0003
    standard_pressure  -5..84.8 km            rel     1e-06     7e-06
    pressure_altitude  90..105 kPa            m       0.0003    0.003
    pressure_altitude  0.37 Pa..177 kPa       m       0.01      0.1
    saturation_vapour_pressure  150..350 K    rel     5e-06     8e-05
    virtual_temperature                       K       5e-05     0.0004
    dew_point                                 K       5e-05     0.0004
    mixing_ratio                              rel     3e-07     1.5e-06
    sea_level_pressure  h 0..2 km             Pa      0.015     0.12
    qnh  elevation 0..1 km                    Pa      0.015     0.12
    qfe  barometer -100..100 m off the field  Pa      0.006     0.05
    indicated_altitude                        m       0.003     0.02

What the budgets mean in practice: on a float32 board the geopotential height
of a balloon at 50 km is right to 1 float32 ulp of the result (3.9 mm), a 1 Pa
thick layer at 10 hPa (about 60 m thick) to 2e-5 m, a pressure altitude near
sea level to a third of a millimetre. 30-bit floats lose about 3 more bits
(one 30-bit step is 4 float32 ulps and truncation errs by up to a whole step).
The saturation vapour pressure is the least accurate relative to its size:
t_k - 273.15 is formed first and 273.15 itself is held to 1.5e-5 K (float32)
or 6e-5 K (30 bits), then multiplied by d ln(e_s)/dT (up to 0.27 per K for ice
at 150 K) -- equivalent to a temperature error below 1e-4 K.

The float64 mode of the emulator must give bit-identical results to plain
CPython on every case (test_f64_emulation_is_bit_identical), which checks that
rewriting the modules changes nothing but the rounding.
"""
import math
import os
import random
import sys

import pytest

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import floatemu  # noqa: E402
import tinygeo  # noqa: E402


def _log_uniform(rng, lo, hi):
    return math.exp(rng.uniform(math.log(lo), math.log(hi)))


def _thin(p_lo, p_hi):
    # a layer 1 Pa thick (integer pressures, exact in every format) and two Tv
    def gen(rng):
        p = float(rng.randint(p_lo, p_hi))
        return (p, p - 1.0, rng.uniform(200.0, 310.0), rng.uniform(200.0, 310.0))
    return gen


def _pair_near(rng):
    p = rng.uniform(1000.0, 105000.0)
    return (p, p - 1.0)   # rounded separately to the format, so about 1 Pa apart


# name, public function of the tinygeo package, kind ('rel' or 'abs'), budget
# f32, budget r30, random input generator, edge inputs. Measured maxima (3000
# random + edges, seed of the case) are noted as  # f32 / r30t / r30f.
CASES = [
    # measured 2.74e-07 / 1.07e-06 / 1.5e-06
    ("normal_gravity", "normal_gravity", "rel", 5e-07, 2.5e-06,
     lambda r: (r.uniform(-90.0, 90.0), r.uniform(-1000.0, 100000.0)),
     [(lat, h) for lat in (0.0, 45.0, 90.0, -90.0, 89.999) for h in (-1000.0, 0.0, 50000.0, 100000.0)]),
    # measured 2.05e-07 / 1.24e-06 / 1.31e-06
    ("somigliana_gravity", "somigliana_gravity", "rel", 4e-07, 2e-06,
     lambda r: (r.uniform(-90.0, 90.0),), [(0.0,), (45.0,), (90.0,), (-90.0,)]),
    # measured 0.00199 / 0.0138 / 0.0137
    ("geopotential_height 0..50km", "geopotential_height", "abs", 0.004, 0.02,
     lambda r: (r.uniform(0.0, 50000.0), r.uniform(-90.0, 90.0)),
     [(h, lat) for h in (0.0, 1.0, 49999.0, 50000.0) for lat in (0.0, 45.0, 90.0)]),
    # measured 0.00398 / 0.0275 / 0.0275
    ("geopotential_height -1..100km", "geopotential_height", "abs", 0.008, 0.04,
     lambda r: (r.uniform(-1000.0, 100000.0), r.uniform(-90.0, 90.0)),
     [(h, lat) for h in (-1000.0, 100000.0) for lat in (0.0, 90.0)]),
    # measured 0.00196 / 0.014 / 0.014
    ("geometric_height 0..50km", "geometric_height", "abs", 0.004, 0.02,
     lambda r: (r.uniform(0.0, 50000.0), r.uniform(-90.0, 90.0)),
     [(z, lat) for z in (0.0, 1.0, 50000.0) for lat in (0.0, 45.0, 90.0)]),
    # measured 1.19e-07 / 8.83e-07 / 6.59e-07
    ("geopotential 0..50km", "geopotential", "rel", 2e-07, 1.5e-06,
     lambda r: (r.uniform(1.0, 50000.0), r.uniform(-90.0, 90.0)), [(1.0, 0.0), (50000.0, 90.0)]),
    # measured 8.15e-08 / 4.04e-07 / 3.99e-07
    ("ln_ratio p, p-1Pa", "ln_ratio", "rel", 2e-07, 8e-07, _pair_near,
     [(100000.0, 99999.0), (1000.0, 999.0), (101325.0, 101324.0), (2.0, 1.0)]),
    # measured 1.61e-07 / 1.06e-06 / 7.42e-07
    ("ln_ratio any pair", "ln_ratio", "rel", 3e-07, 1.5e-06,
     lambda r: (_log_uniform(r, 0.1, 120000.0), _log_uniform(r, 0.1, 120000.0)),
     [(120000.0, 0.1), (0.1, 120000.0), (100000.0, 80000.0), (100000.0, 60000.0)]),
    # measured 1.74e-07 / 1.3e-06 / 1.28e-06
    ("layer_thickness 1Pa at 100kPa", "layer_thickness", "rel", 3e-07, 2.5e-06,
     _thin(98000, 100000), [(100000.0, 99999.0, 288.0, 288.0), (100000.0, 99999.0, 310.0, 200.0)]),
    # measured 2.06e-07 / 1.43e-06 / 1.59e-06
    ("layer_thickness 1Pa at 10hPa", "layer_thickness", "rel", 3e-07, 2.5e-06,
     _thin(1000, 1100), [(1000.0, 999.0, 220.0, 220.0), (1001.0, 1000.0, 200.0, 310.0)]),
    # measured 1.86e-07 / 1.48e-06 / 1.58e-06
    ("layer_thickness any", "layer_thickness", "rel", 3e-07, 2.5e-06,
     lambda r: (r.uniform(50000.0, 105000.0), _log_uniform(r, 0.1, 50000.0),
                r.uniform(200.0, 310.0), r.uniform(200.0, 310.0)),
     [(105000.0, 0.1, 300.0, 200.0)]),
    # measured 2.53e-07 / 2.24e-06 / 1.67e-06
    ("layer_thickness_lapse", "layer_thickness_lapse", "rel", 4e-07, 3.5e-06,
     lambda r: (r.uniform(50000.0, 105000.0), r.uniform(10000.0, 50000.0),
                r.uniform(250.0, 300.0), r.uniform(-0.01, 0.01)),
     [(101325.0, 22632.06, 288.15, 0.0065), (100000.0, 50000.0, 280.0, 0.0),
      (100000.0, 99999.0, 280.0, 0.0065), (100000.0, 50000.0, 280.0, 1e-9)]),
    # measured 1.1e-07 / 8e-07 / 9.13e-07
    ("pressure_across_layer", "pressure_across_layer", "rel", 2e-07, 1.5e-06,
     lambda r: (r.uniform(50000.0, 105000.0), r.uniform(-3000.0, 3000.0), r.uniform(200.0, 310.0)),
     [(100000.0, 0.0, 288.0), (100000.0, 1e-3, 288.0), (1000.0, 3000.0, 220.0)]),
    # measured 2.37e-05 / 0.000202 / 0.000207
    ("standard_temperature", "standard_temperature", "abs", 4e-05, 0.0003,
     lambda r: (r.uniform(-5000.0, 84852.0),), [(0.0,), (11000.0,), (-5000.0,), (84852.0,)]),
    # measured 5.32e-07 / 3.01e-06 / 4.43e-06
    ("standard_pressure", "standard_pressure", "rel", 1e-06, 7e-06,
     lambda r: (r.uniform(-5000.0, 84852.0),),
     [(0.0,), (11000.0,), (20000.0,), (32000.0,), (47000.0,), (51000.0,), (71000.0,), (84852.0,),
      (-5000.0,), (1.0,), (10999.0,)]),
    # measured 0.000158 / 0.00167 / 0.000991
    ("pressure_altitude 90..105kPa", "pressure_altitude", "abs", 0.0003, 0.003,
     lambda r: (r.uniform(90000.0, 105000.0),), [(101325.0,), (101324.0,), (101326.0,), (100000.0,)]),
    # measured 0.00637 / 0.0587 / 0.0391
    ("pressure_altitude all", "pressure_altitude", "abs", 0.01, 0.1,
     lambda r: (_log_uniform(r, 0.3734, 177000.0),),
     [(22632.06,), (5474.889,), (868.0187,), (110.9063,), (66.93887,), (3.956420,), (0.3734,)]),
    # measured 3.41e-06 / 4.33e-05 / 4.9e-05
    ("saturation_vapour_pressure", "saturation_vapour_pressure", "rel", 5e-06, 8e-05,
     lambda r: (r.uniform(150.0, 350.0), r.random() < 0.5),
     [(273.15, False), (273.15, True), (150.0, True), (150.0, False), (350.0, False)]),
    # measured 2.69e-05 / 0.00014 / 0.000257
    ("virtual_temperature", "virtual_temperature", "abs", 5e-05, 0.0004,
     lambda r: (r.uniform(200.0, 315.0), r.uniform(20000.0, 105000.0), r.uniform(0.0, 100.0)),
     [(303.15, 100000.0, 100.0), (250.0, 30000.0, 0.0)]),
    # measured 2.6e-05 / 0.000202 / 0.000214
    ("dew_point", "dew_point", "abs", 5e-05, 0.0004,
     lambda r: (_log_uniform(r, 1.0, 5000.0), r.uniform(50000.0, 105000.0)),
     [(611.2, 100000.0), (1.0, 50000.0)]),
    # measured 1.55e-07 / 8.72e-07 / 8.11e-07
    ("mixing_ratio", "mixing_ratio", "rel", 3e-07, 1.5e-06,
     lambda r: (_log_uniform(r, 1.0, 5000.0), r.uniform(50000.0, 105000.0)), [(611.2, 100000.0)]),
    # measured 0.0102 / 0.0754 / 0.0601
    ("sea_level_pressure", "sea_level_pressure", "abs", 0.015, 0.12,
     lambda r: (r.uniform(80000.0, 105000.0), r.uniform(250.0, 310.0), r.uniform(0.0, 2000.0)),
     [(100820.0, 291.15, 4.0), (80000.0, 250.0, 2000.0)]),
    # measured 0.0101 / 0.0744 / 0.0674
    ("qnh", "qnh", "abs", 0.015, 0.12,
     lambda r: (r.uniform(90000.0, 101000.0), r.uniform(0.0, 1000.0)), [(96200.0, 430.0)]),
    # measured 0.00399 / 0.028 / 0.0278
    ("qfe", "qfe", "abs", 0.006, 0.05,
     lambda r: (r.uniform(85000.0, 105000.0), r.uniform(-100.0, 100.0), r.uniform(250.0, 310.0)),
     [(96530.0, 12.0, 278.15)]),
    # measured 0.00127 / 0.0119 / 0.00568
    ("indicated_altitude", "indicated_altitude", "abs", 0.003, 0.02,
     lambda r: (r.uniform(50000.0, 105000.0), r.uniform(95000.0, 105000.0)),
     [(96200.0, 101257.4), (101325.0, 101325.0)]),
]


def _seed(name):
    return sum(ord(c) * (i + 1) for i, c in enumerate(name))


def inputs(case, n):
    """The edge inputs and n random inputs of a case (fixed seed per case)."""
    rng = random.Random(_seed(case[0]))
    return list(case[6]) + [case[5](rng) for _ in range(n)]


def _round_args(args, r):
    return tuple(r(a) if type(a) is float else a for a in args)


def measure(case, mode, n):
    """Largest error of one case in one mode over inputs(case, n): returns
    (error, args) with the error relative or absolute as the case says."""
    name, fn, kind = case[:3]
    r = floatemu.rounder(mode)
    ref_f = getattr(tinygeo, fn)
    emu_f = getattr(floatemu.load(mode), fn)
    worst, where = 0.0, None
    for args in inputs(case, n):
        args = _round_args(args, r)
        try:
            ref = ref_f(*args)
        except ValueError:
            continue   # outside the function's range after rounding: not a precision case
        got = emu_f(*args)
        err = abs(got - ref)
        if kind == "rel" and ref != 0.0:
            err /= abs(ref)
        if not err <= worst:   # also catches nan
            worst, where = err, args
    return worst, where


N = 100   # random inputs per case and mode in the test (bench/precision.py uses more)


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
@pytest.mark.parametrize("mode", ["f32", "r30t", "r30f"])
def test_error_within_budget(case, mode):
    """Error vs float64 within the budget of the module docstring's table."""
    budget = case[3] if mode == "f32" else case[4]
    err, args = measure(case, mode, N)
    assert err <= budget, "%s in %s: error %.3g > budget %.3g at %r" % (case[0], mode, err, budget, args)


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_f64_emulation_is_bit_identical(case):
    """Mode f64 (rewritten code, no rounding) gives exactly plain CPython's result."""
    name, fn = case[:2]
    ref_f = getattr(tinygeo, fn)
    emu_f = getattr(floatemu.load("f64"), fn)
    for args in inputs(case, 40):
        try:
            ref = ref_f(*args)
        except ValueError as e:
            with pytest.raises(type(e)):
                emu_f(*args)
            continue
        got = emu_f(*args)
        assert got == ref or (got != got and ref != ref), (name, args, got, ref)


def test_budget_table_matches_docstring():
    """The table in the module docstring states exactly the budgets of CASES."""
    rows = []
    for line in __doc__.split("\n"):
        words = line.split()
        if len(words) >= 4:
            try:
                rows.append((words[0], float(words[-2]), float(words[-1])))
            except ValueError:
                pass
    assert rows == [(c[1], c[3], c[4]) for c in CASES]
