"""High-precision references for tinygeo.gravity and tinygeo.potential (mpmath).

Everything here starts from the DEFINING constants of each ellipsoid (a, 1/f or
J2, GM, omega) and the closed formulas of the normal field; nothing is taken
from tinygeo except the printed constants being checked.

* ``derived(name)``: b, e2, ep2, E, q0, q0', m, U0, gamma_e, gamma_p, k
  [Moritz 1980, GRS80 paper; NIMA TR8350.2 ch. 3 / eq. 4-1..4-3; HM67 sec. 2-7..2-10].
* ``potential(ell, p, z)``: normal potential W = U (gravitational + centrifugal)
  U = GM/E atan(E/u) + 1/2 omega^2 a^2 (q/q0)(sin^2 beta - 1/3)
      + 1/2 omega^2 (u^2 + E^2) cos^2 beta      [HM67 eq. 2-126, from memory]
  at a point (p, z) of the meridian plane, with (u, beta) found from (p, z)
  and checked by mapping back (p = sqrt(u^2+E^2) cos beta, z = u sin beta).
* ``gravity(ell, lat, h)``: |grad W| by numerical differentiation at 50 digits.
* ``gph(ell, lat, h)``: (U0 - W)/g0, geopotential height, gpm.
* ``derive_coefficients(name)``: the coefficients stored in
  tinygeo/potential.py: Taylor coefficients of (U0 - W)/g0 in h along the
  ellipsoidal normal (mpmath.taylor at 50 digits) at Chebyshev nodes in
  s = sin^2(lat), fitted by least squares with polynomials in s.

Run ``python tests/vectors/gen_gravity.py coeffs`` to print the literal tables
and ``python tests/vectors/gen_gravity.py vectors`` to print vector lines.
"""
import sys

import mpmath as mp

DPS = 50                        # working precision, digits (set locally, not globally)
with mp.workdps(DPS):
    G0 = mp.mpf("9.80665")      # standard gravity, exact [CGPM 1901]

# Defining constants, as printed:
#   WGS84: NIMA TR8350.2 Table 3.1;  GRS80: Moritz (1980) (J2 defining)
DEFINING = {
    "WGS84": dict(a="6378137", inv_f="298.257223563", gm="3.986004418e14", omega="7.292115e-5"),
    "GRS80": dict(a="6378137", j2="108263e-8", gm="3.986005e14", omega="7.292115e-5"),
}

# Series for the Taylor coefficients: orders in h and polynomial degrees in s.
ORDERS = 6                       # h^1 .. h^6 (the h^7 term is below 2e-6 m at 100 km)
DEGREES = (5, 2, 3, 3, 2, 1)     # degree in s of the coefficient of h^n (D_2 is exactly quadratic)
NODES = 16                       # Chebyshev nodes in s for the fit

_cache = {}


def _at_dps(fn):
    # run fn at DPS digits without touching the caller's global mpmath precision
    def wrapped(*args):
        with mp.workdps(DPS):
            return fn(*args)
    wrapped.__name__ = fn.__name__
    wrapped.__doc__ = fn.__doc__
    return wrapped


def _q(x):
    # q as a function of x = E/u: 1/2[(1 + 3/x^2) atan(x) - 3/x]   [HM67 eq. 2-58]
    return ((1 + 3 / x ** 2) * mp.atan(x) - 3 / x) / 2


def _qp(x):
    # q' = 3 (1 + 1/x^2)(1 - atan(x)/x) - 1                        [HM67 eq. 2-67]
    return 3 * (1 + 1 / x ** 2) * (1 - mp.atan(x) / x) - 1


@_at_dps
def derived(name):
    """Dict of derived constants of ellipsoid ``name`` computed from its defining constants."""
    if name in _cache:
        return _cache[name]
    d = DEFINING[name]
    a = mp.mpf(d["a"])
    gm = mp.mpf(d["gm"])
    om = mp.mpf(d["omega"])
    if "inv_f" in d:
        f = 1 / mp.mpf(d["inv_f"])
        e2 = f * (2 - f)
    else:
        # GRS80: e^2 from J2 = e^2/3 (1 - 2/15 m e'/q0), m = omega^2 a^2 b/GM,
        # solved for e^2 with a root finder [Moritz 1980, first equation for e^2]
        j2 = mp.mpf(d["j2"])

        def resid(e2):
            ep = mp.sqrt(e2 / (1 - e2))
            m = om ** 2 * a ** 3 * mp.sqrt(1 - e2) / gm
            return e2 / 3 * (1 - 2 * m * ep / (15 * _q(ep))) - j2
        e2 = mp.findroot(resid, mp.mpf("0.0067"))
        f = 1 - mp.sqrt(1 - e2)
    b = a * (1 - f)
    E = mp.sqrt(a ** 2 - b ** 2)
    ep = E / b
    ep2 = ep ** 2
    q0 = _q(ep)
    q0p = _qp(ep)
    m = om ** 2 * a ** 2 * b / gm
    u0 = gm / E * mp.atan(ep) + om ** 2 * a ** 2 / 3
    ge = gm / (a * b) * (1 - m - m / 6 * ep * q0p / q0)
    gp = gm / a ** 2 * (1 + m / 3 * ep * q0p / q0)
    k = b * gp / (a * ge) - 1
    j2 = e2 / 3 * (1 - 2 * m * ep / (15 * q0))
    r = dict(a=a, f=f, inv_f=1 / f, gm=gm, omega=om, b=b, e2=e2, ep2=ep2, E=E, q0=q0, q0p=q0p,
             m=m, u0=u0, gamma_e=ge, gamma_p=gp, k=k, j2=j2)
    _cache[name] = r
    return r


def meridian_point(c, lat_deg, h):
    """Geodetic (lat, h) -> (p, z): distance from the axis and from the equator plane, m."""
    phi = mp.radians(mp.mpf(lat_deg))
    s, co = mp.sin(phi), mp.cos(phi)
    n = c["a"] / mp.sqrt(1 - c["e2"] * s ** 2)
    return (n + h) * co, (n * (1 - c["e2"]) + h) * s


def ellipsoidal(c, p, z):
    """(p, z) -> (u, beta) of the confocal ellipsoid through the point; checked by mapping back."""
    E2 = c["E"] ** 2
    d = p ** 2 + z ** 2 - E2
    u2 = d / 2 * (1 + mp.sqrt(1 + 4 * E2 * z ** 2 / d ** 2))
    u = mp.sqrt(u2)
    beta = mp.atan2(z * mp.sqrt(u2 + E2), u * p)
    tol = mp.mpf(10) ** (10 - mp.mp.dps) * c["a"]
    assert abs(mp.sqrt(u2 + E2) * mp.cos(beta) - p) < tol and abs(u * mp.sin(beta) - z) < tol
    return u, beta


def potential(c, p, z):
    """Normal potential W (gravitational + centrifugal), m^2/s^2 [HM67 eq. 2-126, from memory]."""
    u, beta = ellipsoidal(c, p, z)
    E = c["E"]
    om2 = c["omega"] ** 2
    q = _q(E / u)
    return (c["gm"] / E * mp.atan(E / u)
            + om2 * c["a"] ** 2 / 2 * q / c["q0"] * (mp.sin(beta) ** 2 - mp.mpf(1) / 3)
            + om2 / 2 * (u ** 2 + E ** 2) * mp.cos(beta) ** 2)


@_at_dps
def gravity(name, lat_deg, h):
    """|grad W| at geodetic (lat, h), m/s^2 (numerical gradient at 50 digits)."""
    c = derived(name)
    p, z = meridian_point(c, lat_deg, mp.mpf(h))
    gp = mp.diff(lambda x: potential(c, x, z), p)
    gz = mp.diff(lambda x: potential(c, p, x), z)
    return mp.sqrt(gp ** 2 + gz ** 2)


@_at_dps
def gph(name, lat_deg, h):
    """(U0 - W)/g0 at geodetic (lat, h), gpm."""
    c = derived(name)
    p, z = meridian_point(c, lat_deg, mp.mpf(h))
    return (c["u0"] - potential(c, p, z)) / G0


@_at_dps
def taylor_in_h(name, s):
    """Taylor coefficients [c1..cN] of (U0 - W)/g0 = sum c_n h^n at s = sin^2(lat)."""
    c = derived(name)
    lat = mp.degrees(mp.asin(mp.sqrt(s)))

    def f(h):
        p, z = meridian_point(c, lat, h)
        return (c["u0"] - potential(c, p, z)) / G0
    return mp.taylor(f, 0, ORDERS)[1:]


@_at_dps
def derive_coefficients(name):
    """Return the tables stored in tinygeo/potential.py for ellipsoid ``name``.

    gph = h + h * sum_{n>=1} t^(n-1) D_n(s),   t = h/a,  s = sin^2(lat),
    D_1 = c_1 - 1 and D_n = c_n a^(n-1) (dimensionless), each D_n a polynomial
    in s with coefficients listed from s^0 upwards (least-squares fit at
    Chebyshev nodes of [0, 1])."""
    c = derived(name)
    a = c["a"]
    nodes = [(1 - mp.cos(mp.pi * (2 * j + 1) / (2 * NODES))) / 2 for j in range(NODES)]
    values = [taylor_in_h(name, s) for s in nodes]
    tables = []
    for n in range(ORDERS):
        ys = [v[n] * a ** n - (1 if n == 0 else 0) for v in values]
        deg = DEGREES[n]
        A = mp.matrix([[s ** k for k in range(deg + 1)] for s in nodes])
        coef = mp.qr_solve(A, mp.matrix(ys))[0]
        tables.append([coef[k] for k in range(deg + 1)])
    return tables


@_at_dps
def format_tables(name, tables):
    # the text form of tinygeo/potential.py: one string per ellipsoid, rows
    # separated by ";", numbers by spaces
    lines = ["_%s = (" % name]
    for n, row in enumerate(tables):
        sep = ";" if n < len(tables) - 1 else ""
        lines.append('    "%s%s"  # D_%d' % (" ".join(mp.nstr(x, 17, min_fixed=1, max_fixed=0) for x in row), sep, n + 1))
    lines.append(")")
    return "\n".join(lines)


# (lat_deg, height_m) points of the mpmath vectors in tests/vectors/gravity.txt (WGS 84)
VECTOR_POINTS = ((0, -500), (45, 10000), (30, 35000), (60, 50000), (-75, 80000), (90, 100000), (12.5, 1234.5))


def _ulps(x, n=4):
    # n units in the last place of the double nearest x (a float64 result's rounding)
    x = abs(float(x))
    if x == 0.0:
        return 0.0
    e = mp.frexp(x)[1]                       # x = m 2^e with 0.5 <= m < 1
    return n * 2.0 ** (e - 53)


def _series_allowance(h):
    # the series' truncation error (the dropped h^7 term): measured 1.5e-6 m at
    # 100 km, 3.0e-7 m at 80 km, 1.1e-8 m at 50 km (tests/test_geopotential.py),
    # i.e. about 1.5e-6 m (h/100 km)^7; twice that is allowed
    return 3e-6 * (abs(float(h)) / 100000.0) ** 7


def _tol(x):
    # two significant digits, rounded up
    t = float("%.1e" % x)
    return "%.1e" % (t if t >= x else x * 1.05)


@_at_dps
def vector_lines():
    """Lines of tests/vectors/gravity.txt computed here (WGS 84, the package default).

    Expected values are the mpmath results rounded to double (17 digits).
    Tolerances follow what the double-precision runtimes measure (CPython,
    MicroPython 64 and 32 bit, the C port): normal gravity 1.5e-14 m/s^2
    (measured at most 7.1e-15, 4 ulps); geopotential height and its inverse 4
    ulps of the value plus twice the series' truncation error at that height
    (``_series_allowance``); geopotential the same times g0. The series'
    contract is 1 mm (float32 needs a few mm at 50 km); float32 builds run
    these lines only to check that they compute."""
    out = []
    for lat, h in VECTOR_POINTS:
        out.append("normal_gravity %s %s = %r abs 1.5e-14  # mpmath closed form" % (
            lat, h, float(gravity("WGS84", lat, h))))
    for lat, h in VECTOR_POINTS:
        z = gph("WGS84", lat, h)
        out.append("geopotential_height %s %s = %r abs %s  # mpmath closed form" % (
            h, lat, float(z), _tol(_ulps(z) + _series_allowance(h))))
        out.append("geopotential %s %s = %r abs %s  # mpmath closed form" % (
            h, lat, float(z * G0), _tol(_ulps(z * G0) + float(G0) * _series_allowance(h))))
        zr = str(int(mp.nint(z)))     # a round gph near z, so the expected height is not round
        hr = _inverse("WGS84", lat, mp.mpf(zr))
        out.append("geometric_height %s %s = %r abs %s  # mpmath closed form" % (
            zr, lat, float(hr), _tol(_ulps(hr) + _series_allowance(hr))))
    return out


def _inverse(name, lat, z):
    # height whose (U0 - W)/g0 is z, by the secant method on the closed form
    return mp.findroot(lambda h: gph(name, lat, h) - z, (z, z * mp.mpf("1.001") + 1), solver="secant")


def main(argv):
    what = argv[1] if len(argv) > 1 else "coeffs"
    if what == "coeffs":
        for name in ("WGS84", "GRS80"):
            print(format_tables(name, derive_coefficients(name)))
    elif what == "vectors":
        print("\n".join(vector_lines()))


if __name__ == "__main__":
    main(sys.argv)
