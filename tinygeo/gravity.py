"""Normal gravity of a level ellipsoid (WGS 84 or GRS 80), in m/s^2.

Two functions:

* ``somigliana_gravity(lat_deg)``: on the ellipsoid, Somigliana's closed form.
* ``normal_gravity(lat_deg, height_m)``: above or below the ellipsoid, from the
  closed form of the normal gravity field in ellipsoidal coordinates (u, beta).

Both use the geodetic latitude in degrees. ``height_m`` is the height along
the ellipsoidal normal. The normal field is the model of the Earth's gravity
here: the normal potential is constant on the ellipsoid, so the ellipsoid plays
the part of mean sea level and ``height_m`` should be a height above mean sea
level. A GPS (GNSS) receiver gives an ellipsoidal height; subtract the geoid
undulation N first (``h_msl = h_ell - N``, see
``tinygeo.msl_height``). Neglecting N (-107..+86 m on Earth)
changes gravity by at most 3.3e-4 m/s^2 (free-air gradient 3.086e-6 s^-2).

Sources
-------
[TR8350] NIMA (2000). Department of Defense World Geodetic System 1984.
    NIMA TR8350.2, 3rd ed., amendment 1. Eq. 4-1 (Somigliana), eqs. 4-5..4-10
    (gamma_u, gamma_beta, w, q, q', u, beta; equation numbers from memory).
[HM67] Heiskanen, W. A. and Moritz, H. (1967). Physical Geodesy. Freeman.
    Sec. 2-7 and 2-8: normal potential and normal gravity in ellipsoidal
    coordinates (from memory: eqs. 2-124..2-126, 2-151).
[Moritz80] Moritz, H. (1980). Geodetic Reference System 1980. Bull. Geod.
    54(3): Somigliana's formula and the derived constants.

Numerics (float32 boards): q(u) = 1/2[(1 + 3u^2/E^2) atan(E/u) - 3u/E] and
q'(u) = 3(1 + u^2/E^2)(1 - (u/E) atan(E/u)) - 1 cancel catastrophically for
E/u ~ 0.08, so both are evaluated from their power series in x^2 = (E/u)^2
(derived by expanding atan; 8 terms leave < 2e-18 relative error since
x^2 <= e'^2 = 0.0067). The factors E/q0 and q/q0 are then rewritten so that E
drops out: q/q0 = (b/u)^3 S_q(x^2)/S_q(x0^2) and E q'/q0 =
(b^3/u^2) S_p(x^2)/S_q(x0^2). All lengths are scaled by a, so every
intermediate is of order 1, and (b/a)^2 is taken as 1 - e^2 so the foot point
lies exactly on the ellipsoid used. u^2 is computed as b^2 + delta a^2 with
delta from a quadratic whose constant term is expanded about the foot point
(no cancellation), see normal_gravity. The remaining cancellation, in gamma_beta
(sqrt(u^2+E^2) vs (q/q0) a^2/sqrt(u^2+E^2), zero on the ellipsoid), is
harmless: gamma_beta enters gamma only as gamma_beta^2/(2 gamma), below 1e-8
m/s^2 at 100 km.
"""
import math

from .constants import WGS84, check_ellipsoid
from .errors import check_lat, check_range

HEIGHT_MIN_M = -1000.0
"""Lowest accepted height, m (below the Dead Sea shore and most mines)."""

HEIGHT_MAX_M = 100000.0
"""Highest accepted height, m (100 km; the series of tinygeo.potential are
checked up to here)."""

_DEG = math.pi / 180.0

# Series coefficients (alternating signs are applied in the Horner forms):
#   q(x)  = x^3 * S_q(x^2),  S_q(y) = sum_m (-1)^m 2(m+1)/((2m+3)(2m+5)) y^m
#   q'(x) = x^2 * S_p(y),    S_p(y) = sum_m (-1)^m 6/((2m+3)(2m+5)) y^m
# obtained by inserting atan(x) = x - x^3/3 + x^5/5 - ... into the closed forms
# of q and q' [TR8350 eqs. 4-9, 4-10; HM67 eqs. 2-58, 2-67, from memory].


def _s_q(y):
    # S_q(y), 8 terms, Horner form
    return (2.0 / 15.0 - y * (4.0 / 35.0 - y * (6.0 / 63.0 - y * (8.0 / 99.0 - y * (
        10.0 / 143.0 - y * (12.0 / 195.0 - y * (14.0 / 255.0 - y * (16.0 / 323.0))))))))


def _s_p(y):
    # S_p(y), 8 terms, Horner form
    return (6.0 / 15.0 - y * (6.0 / 35.0 - y * (6.0 / 63.0 - y * (6.0 / 99.0 - y * (
        6.0 / 143.0 - y * (6.0 / 195.0 - y * (6.0 / 255.0 - y * (6.0 / 323.0))))))))


def check_height(height_m, name="height_m"):
    """Return ``height_m`` as a float if it lies in -1000..100000 m, else raise
    ``tinygeo.errors.RangeError``."""
    return check_range(name, height_m, HEIGHT_MIN_M, HEIGHT_MAX_M, "m",
                       "metres above mean sea level (km or feet passed?)")


def somigliana_gravity(lat_deg, ellipsoid=WGS84):
    """Normal gravity on the surface of the ellipsoid, m/s^2.

    gamma = gamma_e (1 + k sin^2(phi)) / sqrt(1 - e^2 sin^2(phi)),
    k = b gamma_p / (a gamma_e) - 1 (Somigliana's closed formula)
    [TR8350 eq. 4-1; Moritz80].

    Parameters
      lat_deg    geodetic latitude, degrees, -90..90
      ellipsoid  tinygeo.constants.WGS84 (default) or GRS80; uses its
                 published gamma_e, k_somigliana and e2

    Example: somigliana_gravity(45.0) -> 9.806197769 (WGS 84)
    """
    phi = check_lat(lat_deg) * _DEG
    ellipsoid = check_ellipsoid(ellipsoid)
    sp = math.sin(phi)
    s = sp * sp
    return ellipsoid.gamma_e * (1.0 + ellipsoid.k_somigliana * s) / math.sqrt(1.0 - ellipsoid.e2 * s)


def normal_gravity(lat_deg, height_m=0.0, ellipsoid=WGS84):
    """Magnitude of normal gravity at a height above (or below) the ellipsoid,
    m/s^2, from the closed form of the normal field (no series in height).

    Steps [TR8350 sec. 4; HM67 sec. 2-7/2-8]: geodetic (phi, h) -> cartesian
    (p, z) in the meridian plane; ellipsoidal coordinates
      u^2 = 1/2 (r^2 - E^2) (1 + sqrt(1 + 4 E^2 z^2 / (r^2 - E^2)^2)),
      tan(beta) = z sqrt(u^2 + E^2) / (u p);
      w = sqrt((u^2 + E^2 sin^2 beta) / (u^2 + E^2));
      gamma_u = -1/w [GM/(u^2+E^2) + omega^2 a^2 E q'/((u^2+E^2) q0)
                      (sin^2(beta)/2 - 1/6) - omega^2 u cos^2(beta)],
      gamma_beta = 1/w [-omega^2 a^2 q/(sqrt(u^2+E^2) q0)
                        + omega^2 sqrt(u^2+E^2)] sin(beta) cos(beta),
      gamma = sqrt(gamma_u^2 + gamma_beta^2)
    (equation numbers 4-5..4-10 of TR8350 from memory). q, q' and q0 are
    evaluated from power series; see the module docstring.

    Parameters
      lat_deg    geodetic latitude, degrees, -90..90
      height_m   height along the ellipsoidal normal, m, -1000..100000; read
                 as height above mean sea level (for a GPS height subtract
                 the geoid undulation first: h_msl = h_ell - N)
      ellipsoid  WGS84 (default) or GRS80 (uses a_m, e2, gm, omega)

    Accuracy (measured by tests/test_gravity.py and a float32 emulation):
    agrees with an mpmath evaluation of the gradient of the normal potential
    to 2e-14 m/s^2 in double precision from -1000 m to 100 km; in float32 to
    2.6e-6 m/s^2 (under 3 units in the last place; 1e-6 of it is the rounding
    of GM/a^2 itself).

    Example: normal_gravity(45.0, 10000.0) -> 9.775414188 (WGS 84)
    """
    phi = check_lat(lat_deg) * _DEG
    h = check_height(height_m)
    ellipsoid = check_ellipsoid(ellipsoid)
    e2 = ellipsoid.e2
    a = ellipsoid.a_m
    sphi = math.sin(phi)
    cphi = math.cos(phi)
    # lengths below are in units of a (scaled), so all are of order 1
    t = h / a
    bb2 = 1.0 - e2                                 # (b/a)^2
    nu = 1.0 / math.sqrt(1.0 - e2 * sphi * sphi)   # prime-vertical radius N / a
    p = (nu + t) * cphi                            # distance from the axis / a
    z = (nu * bb2 + t) * sphi                      # distance from the equator plane / a
    # u^2 = b^2 + delta a^2, u^2 + E^2 = a^2 (1 + delta): delta solves
    #   delta^2 + c1 delta + c0 = 0   (from p^2/(u^2+E^2) + z^2/u^2 = 1),
    #   c1 = 1 + (b/a)^2 - (p^2 + z^2),  c0 = (b/a)^2 (1 - p^2) - z^2,
    # where c0 vanishes on the ellipsoid; expanding p, z about the foot point
    # gives it without cancellation: c0 = -t [2 nu (b/a)^2 + t (1 - e^2 cos^2 phi)].
    # This is the closed form of u^2 quoted in the docstring [TR8350 sec. 4,
    # from memory], solved for u^2 - b^2 directly, so that u^2 + E^2 (in the
    # main term GM/(u^2+E^2)) carries no rounding of r^2 - E^2 on a float32 board.
    c0 = -t * (2.0 * nu * bb2 + t * (1.0 - e2 * cphi * cphi))
    c1 = 1.0 + bb2 - (p * p + z * z)
    delta = -2.0 * c0 / (c1 + math.sqrt(c1 * c1 - 4.0 * c0))
    u2 = bb2 + delta                               # u^2 / a^2
    v2 = 1.0 + delta                               # (u^2 + E^2) / a^2
    u = math.sqrt(u2)
    v = math.sqrt(v2)
    ca = u * p                                     # proportional to cos(beta)
    sa = v * z                                     # proportional to sin(beta)
    r = math.sqrt(ca * ca + sa * sa)
    cb = ca / r
    sb = sa / r
    w = math.sqrt((u2 + e2 * sb * sb) / v2)
    b3 = bb2 * math.sqrt(bb2)                      # (b/a)^3
    x2 = e2 / u2                                   # (E/u)^2
    sq0 = _s_q(e2 / bb2)                           # q0 = e'^3 S_q(e'^2), e'^2 = e^2/(1 - e^2)
    oa = ellipsoid.omega * ellipsoid.omega * a     # omega^2 a, m/s^2
    gma = ellipsoid.gm / (a * a)                   # GM / a^2, m/s^2
    # E q'/q0 * a^2 / (u^2+E^2), scaled:  (b/a)^3 / (u2 v2) * S_p / S_q0
    g_u = -(gma / v2 + oa * (b3 / (u2 * v2) * _s_p(x2) / sq0 * (0.5 * sb * sb - 1.0 / 6.0)
                             - u * cb * cb)) / w
    # q/q0 = (b/u)^3 S_q(x2)/S_q0
    g_b = oa * (v - b3 / (u2 * u * v) * _s_q(x2) / sq0) * sb * cb / w
    return math.sqrt(g_u * g_u + g_b * g_b)
