"""mpmath evaluations of published formulas, shared by several test modules.

Nothing here calls tinygeo: every function evaluates the published equation
with the published constants at DPS significant digits (set locally by each
function; mpmath's global precision is never changed).

- [USSA76] NOAA, NASA, USAF (1976), U.S. Standard Atmosphere, 1976,
  NOAA-S/T 76-1562: Table 2 constants (g0, R*, M0), Table 4 layers (H_b, L_M,b;
  T0 = 288.15 K, P0 = 101325 Pa), eq. 18 (r0), eq. 23 (temperature), eqs. 33a,
  33b (pressure; base values chained layer by layer from P0). ``ref_t``,
  ``ref_p``, ``ref_h`` (the inverse of eq. 33a/33b by root finding).
- [WMO8] WMO-No. 8 Annex 4.B (Magnus forms over water and ice, enhancement
  factor f(p) with tinygeo's convention f = 1 below its root 42.666 hPa);
  Wallace and Hobbs (2006) eq. 3.16 (virtual temperature from e/p), the same
  from the mixing ratio (AMS Glossary): ``e_sat``, ``f_wmo``, ``tv_rh``,
  ``mixing_ratio``, ``tv_w``.
- hypsometric equation for an isothermal layer, Wallace and Hobbs (2006)
  eq. 3.29 with Tv constant: ``thickness_iso``.
"""
import mpmath as mp

DPS = 40
_dps = mp.workdps(DPS)

with mp.workdps(DPS):
    G0 = mp.mpf("9.80665")       # [USSA76] Table 2
    R_STAR = mp.mpf("8.31432")   # [USSA76] Table 2
    M0 = mp.mpf("0.0289644")     # [USSA76] Table 2
    R0 = mp.mpf(6356766)         # [USSA76] eq. 18
    HB = [0, 11000, 20000, 32000, 47000, 51000, 71000, 84852]        # [USSA76] Table 4, gpm
    LB = [mp.mpf(x) / 1000 for x in ("-6.5", "0", "1", "2.8", "0", "-2.8", "-2")]  # K/gpm
    TB = [mp.mpf("288.15")]
    PB = [mp.mpf(101325)]
    for _i in range(7):
        _dh = HB[_i + 1] - HB[_i]
        TB.append(TB[_i] + LB[_i] * _dh)
        if LB[_i] == 0:
            PB.append(PB[_i] * mp.exp(-G0 * M0 * _dh / (R_STAR * TB[_i])))
        else:
            PB.append(PB[_i] * (TB[_i] / TB[_i + 1]) ** (G0 * M0 / (R_STAR * LB[_i])))


def ref_layer(h):
    h = mp.mpf(h)
    b = 0
    for j in range(7):
        if h >= HB[j]:
            b = j
    return b


@_dps
def ref_t(h):
    """[USSA76] eq. 23 in mpmath."""
    b = ref_layer(h)
    return TB[b] + LB[b] * (mp.mpf(h) - HB[b])


@_dps
def ref_p(h):
    """[USSA76] eq. 33a/33b in mpmath (power form, as printed)."""
    b = ref_layer(h)
    dh = mp.mpf(h) - HB[b]
    if LB[b] == 0:
        return PB[b] * mp.exp(-G0 * M0 * dh / (R_STAR * TB[b]))
    return PB[b] * (TB[b] / (TB[b] + LB[b] * dh)) ** (G0 * M0 / (R_STAR * LB[b]))


@_dps
def ref_h(p):
    """Inverse of eq. 33a/33b in mpmath, by root finding on ref_p (not a closed form)."""
    p = mp.mpf(p)
    b = 0
    for j in range(8):
        if p <= PB[j]:
            b = j
    b = min(b, 6)
    lo = mp.mpf(HB[b]) if b > 0 else mp.mpf(-6000)
    hi = mp.mpf(HB[b + 1])
    return mp.findroot(lambda h: ref_p(h) - p, (lo, hi), solver="anderson")



# --- humidity and the hypsometric step ([WMO8], Wallace and Hobbs 2006) -------
with mp.workdps(DPS):
    EPS = mp.mpf("0.621981")                   # [WMO8] Annex 4.B, Mw/Md
    RD = R_STAR / M0                           # [USSA76] Table 2, J/(kg K)


@_dps
def e_sat(t_k, ice=False):
    """Saturation vapour pressure, Pa: [WMO8] Magnus form, water (17.62, 243.12)
    or ice (22.46, 272.62, below 0 degC), 6.112 hPa at 0 degC."""
    tc = mp.mpf(t_k) - mp.mpf("273.15")
    if ice and tc < 0:
        a, b = mp.mpf("22.46"), mp.mpf("272.62")
    else:
        a, b = mp.mpf("17.62"), mp.mpf("243.12")
    return mp.mpf("611.2") * mp.exp(a * tc / (b + tc))


@_dps
def f_wmo(p_pa):
    """Enhancement factor [WMO8]: 1.0016 + 3.15e-6 p - 0.074/p (p in hPa), and 1
    at or below 4266.6096 Pa (tinygeo's documented convention)."""
    p = mp.mpf(p_pa)
    if p <= mp.mpf("4266.6096"):
        return mp.mpf(1)
    ph = p / 100
    return mp.mpf("1.0016") + mp.mpf("3.15e-6") * ph - mp.mpf("0.074") / ph


@_dps
def vapour_pressure(t_k, p_pa, rh_pct, ice=False):
    """e = rh/100 f(p) e_s(T), Pa ([WMO8])."""
    return mp.mpf(rh_pct) / 100 * f_wmo(p_pa) * e_sat(t_k, ice)


@_dps
def tv_rh(t_k, p_pa, rh_pct, ice=False):
    """Virtual temperature, K: T/(1 - (e/p)(1 - eps)) (Wallace and Hobbs 2006 eq. 3.16)."""
    e = vapour_pressure(t_k, p_pa, rh_pct, ice)
    return mp.mpf(t_k) / (1 - e / mp.mpf(p_pa) * (1 - EPS))


@_dps
def mixing_ratio(e_pa, p_pa):
    """r = eps e/(p - e), kg/kg ([WMO8] Annex 4.B)."""
    e = mp.mpf(e_pa)
    return EPS * e / (mp.mpf(p_pa) - e)


@_dps
def tv_w(t_k, w):
    """Virtual temperature from the mixing ratio, K: T (1 + w/eps)/(1 + w) (AMS Glossary)."""
    w = mp.mpf(w)
    return mp.mpf(t_k) * (1 + w / EPS) / (1 + w)


@_dps
def thickness_iso(p1_pa, p2_pa, tv_k):
    """Thickness of an isothermal layer, gpm: (Rd/g0) Tv ln(p1/p2)
    (Wallace and Hobbs 2006 eq. 3.29 with Tv constant; Rd, g0 of [USSA76] Table 2)."""
    return RD / G0 * mp.mpf(tv_k) * mp.log(mp.mpf(p1_pa) / mp.mpf(p2_pa))
