"""Seeded Monte Carlo "sensor streams" for the streaming column (a CPython test
and benchmark helper; no pytest in here).

A stream is built in four independent layers, each of which knows nothing about
how a column works:

1. **Truth atmosphere** (no tinygeo import): ``StandardAtmosphere`` (the U.S.
   Standard Atmosphere 1976, dry, implemented here from its defining
   equations) and ``HumidAtmosphere`` (a temperature and relative-humidity
   profile whose pressure is the hydrostatic integral with the virtual
   temperature); ``warm_humid()`` is a ready warm, humid one.
2. **Trajectory** (``balloon_flight``, ``float_flight``): the true geopotential
   height at every reading time, and the truth of the flight's moments (launch,
   top, touchdown, float). Heights are geopotential metres (gpm) throughout, and
   so are speeds: "an ascent at 5 m/s" means 5 gpm/s (about 5.03 m/s geometric
   at 30 km).
3. **Sensor model** (``make_stream``): seeded ``random.Random(seed)``, one fixed
   draw order (the per-flight biases, then for every reading five standard
   normals: pressure, temperature, humidity, time jitter, GPS), so that two
   streams with the same seed carry the same noise whatever else differs (a
   fault, a sigma, GPS on or off).
4. **Faults** (``pressure_scaled``, ``temperature_spike``, ``humidity_lost``,
   ``time_shifted``, ``gap``, ``hpa_as_pa``, ``nan_value``, ``replace``): each
   returns a copy of the stream with chosen readings (by their index in the
   clean stream) altered, and records which readings carry a fault.

Scoring (``run_column``, ``event_scores``, ``level_scores``, ``clean_rejects``,
``fault_scores``, ``level_tolerance_m``) runs any object with the column's
public API (``feed(p_pa, t_k, rh_pct=None, time_s=None, gps_m=None)`` returning
event bits, raising an error with ``.reason`` for a rejected reading; attributes
``gph_m``, ``phase``, ``burst_gph_m``, ``burst_time_s``, ``level_p_pa``,
``level_gph_m``, ``sigma_m``) built by a factory the caller passes, and returns
plain numbers. Event bits and phases are read from ``tinygeo.column`` by name
with ``getattr(..., None)`` (``EV_FLOAT``/``PH_FLOAT`` are counted when they
exist); the scores make no assumption about how a column decides its events.
"""
import math
import random
import struct

# --- U.S. Standard Atmosphere 1976 (NOAA/NASA/USAF, Washington 1976), constants
# of its Table 2 (from memory):
G0 = 9.80665
"""g0, m/s^2 (and g0' = 9.80665 m^2/(s^2 m') for geopotential metres)."""
R_STAR = 8.31432
"""R*, the gas constant of the standard, N m/(mol K)."""
M0 = 0.0289644
"""M0, the sea-level mean molar mass of air, kg/mol."""
R0_M = 6356766.0
"""r0, the effective Earth radius of the standard, m (eq. 18)."""
P0_PA = 101325.0
"""Sea-level pressure of the standard, Pa."""
T0_K = 288.15
"""Sea-level temperature of the standard, K."""
RD = R_STAR / M0
"""Gas constant of dry air R*/M0, J/(kg K) (287.0531)."""
RD_G0 = RD / G0
"""Rd/g0 = 29.2712 gpm/K: the hypsometric factor (Wallace and Hobbs 2006 eq. 3.29)."""
EPS = 0.621981
"""Ratio of the molar masses of water vapour and dry air, Mw/M0 =
18.01528/28.9644 (WMO-No. 8 Annex 4.B; from memory)."""

# Table 4 of the standard (from memory): geopotential heights of the layer bases
# H_b, gpm ("km'"), and the molecular-scale temperature gradients L_M,b, K/gpm.
# The base temperatures and pressures are computed from these (eqs. 23, 33a/b).
LAYER_BASES_GPM = (0.0, 11000.0, 20000.0, 32000.0, 47000.0, 51000.0, 71000.0, 84852.0)
LAPSE_K_PER_GPM = (-0.0065, 0.0, 0.001, 0.0028, 0.0, -0.0028, -0.002)

MANDATORY_HPA = (1000.0, 925.0, 850.0, 700.0, 500.0, 400.0, 300.0, 250.0, 200.0, 150.0,
                 100.0, 70.0, 50.0, 30.0, 20.0, 10.0)
"""WMO mandatory (standard isobaric) levels, hPa (WMO-No. 306 Manual on Codes;
from memory)."""
MANDATORY_PA = tuple(100.0 * x for x in MANDATORY_HPA)

_NAN = float("nan")
_TWO_PI = 2.0 * math.pi


def geometric_height_m(gph_m):
    """Geometric height Z, m, of a geopotential height H, gpm, with the
    standard's constant-gravity-gradient Earth: Z = r0 H/(r0 - H), the inverse
    of H = r0 Z/(r0 + Z) (U.S. Standard Atmosphere 1976 eq. 18, r0 = 6356766 m;
    from memory). Used for truth GPS heights only."""
    return R0_M * gph_m / (R0_M - gph_m)


# ------------------------------------------------------------------ truth: dry
class StandardAtmosphere:
    """The U.S. Standard Atmosphere 1976, dry, below 84 852 gpm, from its
    defining equations (Table 2 constants and Table 4 layers, from memory):

    - eq. 23: T_M(H) = T_M,b + L_M,b (H - H_b), K; below 80 km the molecular
      weight ratio is 1, so the kinetic temperature T equals T_M.
    - eq. 33a (L_M,b != 0): P = P_b [T_M,b / (T_M,b + L_M,b (H - H_b))]^(g0' M0 / (R* L_M,b))
    - eq. 33b (L_M,b == 0): P = P_b exp(-g0' M0 (H - H_b) / (R* T_M,b))
    - eq. 42: rho = P M0 / (R* T_M), kg/m^3.

    The base temperatures T_M,b and pressures P_b are chained with these same
    equations from T0 = 288.15 K and P0 = 101325 Pa (not typed in). H is
    geopotential height, gpm; the first layer is extended below 0 (the standard
    starts at -5 km geometric)."""

    name = "U.S. Standard Atmosphere 1976 (dry)"
    humid = False

    def __init__(self):
        tb = [T0_K]
        pb = [P0_PA]
        for i, lapse in enumerate(LAPSE_K_PER_GPM):
            dh = LAYER_BASES_GPM[i + 1] - LAYER_BASES_GPM[i]
            t, p = self._layer(i, tb[i], pb[i], dh)
            tb.append(t)
            pb.append(p)
        self.base_t_k = tuple(tb)
        self.base_p_pa = tuple(pb)

    @staticmethod
    def _layer(i, t_b, p_b, dh):
        lapse = LAPSE_K_PER_GPM[i]
        t = t_b + lapse * dh                                          # eq. 23
        if lapse != 0.0:
            p = p_b * (t_b / t) ** (G0 * M0 / (R_STAR * lapse))       # eq. 33a
        else:
            p = p_b * math.exp(-G0 * M0 * dh / (R_STAR * t_b))        # eq. 33b
        return t, p

    def _index(self, h):
        if not h <= LAYER_BASES_GPM[-1]:
            raise ValueError("gph %r gpm above the 84852 gpm top of the standard" % (h,))
        i = 0
        while i < 6 and h >= LAYER_BASES_GPM[i + 1]:
            i += 1
        return i

    def t_k(self, h):
        """Temperature, K, at geopotential height h, gpm (eq. 23)."""
        i = self._index(h)
        return self.base_t_k[i] + LAPSE_K_PER_GPM[i] * (h - LAYER_BASES_GPM[i])

    def p_pa(self, h):
        """Pressure, Pa, at geopotential height h, gpm (eqs. 33a/33b)."""
        i = self._index(h)
        return self._layer(i, self.base_t_k[i], self.base_p_pa[i], h - LAYER_BASES_GPM[i])[1]

    def rh_pct(self, h):
        """Relative humidity, %: None (dry air)."""
        return None

    def tv_k(self, h):
        """Virtual temperature, K: the temperature (dry air)."""
        return self.t_k(h)

    def rho_kg_m3(self, h):
        """Density, kg/m^3 (eq. 42: rho = P M0/(R* T))."""
        return self.p_pa(h) * M0 / (R_STAR * self.t_k(h))

    def gph_of_p(self, p_pa):
        """Geopotential height, gpm, of the pressure p_pa, Pa: eqs. 33a/33b
        solved for H in the layer holding p_pa."""
        i = 0
        while i < 6 and p_pa <= self.base_p_pa[i + 1]:
            i += 1
        t_b, p_b, h_b, lapse = self.base_t_k[i], self.base_p_pa[i], LAYER_BASES_GPM[i], LAPSE_K_PER_GPM[i]
        if lapse != 0.0:
            t = t_b * (p_pa / p_b) ** (-R_STAR * lapse / (G0 * M0))
            return h_b + (t - t_b) / lapse
        return h_b - R_STAR * t_b / (G0 * M0) * math.log(p_pa / p_b)


# ---------------------------------------------------------------- truth: humid
def magnus_pa(t_k):
    """Saturation vapour pressure over water, Pa: e_w = 611.2 exp(17.62 t/(243.12 + t)),
    t in degC (Magnus form, WMO-No. 8 (2008) Annex 4.B; from memory)."""
    tc = t_k - 273.15
    return 611.2 * math.exp(17.62 * tc / (243.12 + tc))


def enhancement(p_pa):
    """Enhancement factor of moist air, f(p) = 1.0016 + 3.15e-6 p - 0.074/p with p
    in hPa (WMO-No. 8 (2008) Annex 4.B; from memory), here with p in Pa; never
    below 1 (an enhancement factor is >= 1 by its definition; the fit falls
    below 1 under 42.7 hPa; common practice)."""
    f = 1.0016 + 3.15e-8 * p_pa - 7.4 / p_pa
    return f if f > 1.0 else 1.0


def vapour_pressure_pa(t_k, rh_pct, p_pa):
    """Vapour pressure, Pa, of air at t_k, K, and p_pa, Pa, with relative
    humidity rh_pct, % over water: e = (RH/100) f(p) e_w(T) (WMO-No. 8 Annex
    4.B definition of RH with respect to water; from memory)."""
    return rh_pct / 100.0 * enhancement(p_pa) * magnus_pa(t_k)


def virtual_temperature_k(t_k, rh_pct, p_pa):
    """Virtual temperature, K, exact form Tv = T/(1 - (e/p)(1 - eps))
    (Wallace and Hobbs 2006 eq. 3.16 before its approximation; from memory),
    e from vapour_pressure_pa."""
    if not rh_pct:
        return t_k
    return t_k / (1.0 - vapour_pressure_pa(t_k, rh_pct, p_pa) / p_pa * (1.0 - EPS))


def piecewise_linear(nodes):
    """A function of one variable, linear between the (x, y) nodes (x
    increasing), constant beyond the ends."""
    xs = [float(x) for x, _ in nodes]
    ys = [float(y) for _, y in nodes]

    def f(x):
        if x <= xs[0]:
            return ys[0]
        i = 1
        while i < len(xs) and x > xs[i]:
            i += 1
        if i == len(xs):
            return ys[-1]
        w = (x - xs[i - 1]) / (xs[i] - xs[i - 1])
        return ys[i - 1] + w * (ys[i] - ys[i - 1])
    f.nodes = tuple(zip(xs, ys))
    return f


class HumidAtmosphere:
    """A humid truth: temperature t_of_h(H), K, and relative humidity
    rh_of_h(H), % over water, given as functions of geopotential height H, gpm;
    the pressure is the hydrostatic equation in geopotential height with the
    virtual temperature,

        d ln p / dH = -g0 / (Rd Tv(T(H), RH(H), p))

    (Wallace and Hobbs 2006 eqs. 3.17 and 3.20 with rho = p/(Rd Tv); from
    memory; Tv from virtual_temperature_k), integrated from p0_pa at h0_m to
    h_top_m with the classic fourth-order Runge-Kutta method in double, step
    step_gpm (<= 1 gpm; the step error is below 1e-12 in ln p, tests/
    test_streams.py checks it against mpmath). ln p is kept at every step; a
    height between two steps is reached by one more Runge-Kutta step from the
    node below it; down to 1000 gpm below h0_m by steps down from h0_m."""

    humid = True

    def __init__(self, t_of_h, rh_of_h, p0_pa=P0_PA, h0_m=0.0, h_top_m=40000.0, step_gpm=1.0,
                 name="humid"):
        if not 0 < step_gpm <= 1.0:
            raise ValueError("step_gpm=%r: 0 < step <= 1 gpm" % (step_gpm,))
        self.t_of_h = t_of_h
        self.rh_of_h = rh_of_h
        self.h0_m = float(h0_m)
        self.h_top_m = float(h_top_m)
        self.step = float(step_gpm)
        self.name = name
        n = int(math.ceil((self.h_top_m - self.h0_m) / self.step))
        y = math.log(p0_pa)
        lnp = [y]
        for k in range(n):
            y = self._rk4(self.h0_m + k * self.step, y, self.step)
            lnp.append(y)
        self._lnp = lnp

    def _slope(self, h, y):
        # d ln p/dH = -g0/(Rd Tv), 1/gpm
        return -G0 / (RD * virtual_temperature_k(self.t_of_h(h), self.rh_of_h(h), math.exp(y)))

    def _rk4(self, h, y, d):
        k1 = self._slope(h, y)
        k2 = self._slope(h + 0.5 * d, y + 0.5 * d * k1)
        k3 = self._slope(h + 0.5 * d, y + 0.5 * d * k2)
        k4 = self._slope(h + d, y + d * k3)
        return y + d / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4)

    def ln_p(self, h):
        """ln of the pressure in Pa at geopotential height h, gpm."""
        if not self.h0_m - 1000.0 <= h <= self.h_top_m:
            raise ValueError("gph %r outside %r..%r gpm of this atmosphere"
                             % (h, self.h0_m - 1000.0, self.h_top_m))
        if h < self.h0_m:
            # below the start (a descent's last Runge-Kutta stages): steps down from it
            n = int(math.ceil((self.h0_m - h) / self.step))
            d = (h - self.h0_m) / n
            y = self._lnp[0]
            for i in range(n):
                y = self._rk4(self.h0_m + i * d, y, d)
            return y
        k = int((h - self.h0_m) / self.step)
        if k >= len(self._lnp) - 1:
            k = len(self._lnp) - 2
        hk = self.h0_m + k * self.step
        if h == hk:
            return self._lnp[k]
        return self._rk4(hk, self._lnp[k], h - hk)

    def p_pa(self, h):
        """Pressure, Pa, at geopotential height h, gpm."""
        return math.exp(self.ln_p(h))

    def t_k(self, h):
        """Temperature, K."""
        return self.t_of_h(h)

    def rh_pct(self, h):
        """Relative humidity, % over water."""
        return self.rh_of_h(h)

    def tv_k(self, h):
        """Virtual temperature, K."""
        return virtual_temperature_k(self.t_of_h(h), self.rh_of_h(h), self.p_pa(h))

    def rho_kg_m3(self, h):
        """Density of the moist air, kg/m^3: rho = p/(Rd Tv) (Wallace and Hobbs
        2006 eq. 3.16; from memory)."""
        return self.p_pa(h) / (RD * self.tv_k(h))

    def gph_of_p(self, p_pa):
        """Geopotential height, gpm, of the pressure p_pa (bisection on the
        steps, then Newton steps with the slope above)."""
        y = math.log(p_pa)
        lnp = self._lnp
        if not lnp[-1] <= y <= lnp[0]:
            raise ValueError("p %r Pa outside this atmosphere" % (p_pa,))
        lo, hi = 0, len(lnp) - 1
        while hi - lo > 1:
            mid = (lo + hi) // 2
            if lnp[mid] >= y:
                lo = mid
            else:
                hi = mid
        h = self.h0_m + lo * self.step
        for _ in range(4):
            yh = self.ln_p(h)
            h -= (yh - y) / self._slope(h, yh)
        return h


def warm_humid(t0_k=303.15, h_top_m=40000.0, step_gpm=1.0):
    """A warm, humid sounding (invented for the tests and bench): temperature
    t0_k at the ground falling 6.5 K/km to 16 km, isothermal to 20 km, then
    rising 1 K/km to 32 km and 2.8 K/km above (the lapse rates of the standard's
    Table 4); relative humidity 85 % up to 1 km, 60 % at 5 km, 40 % at 10 km,
    10 % at 14 km, none from 16 km. With 30 degC at the ground the virtual
    temperature is about 4 K above the temperature there."""
    t16 = t0_k - 0.0065 * 16000.0
    t_of_h = piecewise_linear([(0.0, t0_k), (16000.0, t16), (20000.0, t16),
                               (32000.0, t16 + 12.0), (40000.0, t16 + 12.0 + 22.4)])
    rh_of_h = piecewise_linear([(0.0, 85.0), (1000.0, 85.0), (5000.0, 60.0), (10000.0, 40.0),
                                (14000.0, 10.0), (16000.0, 0.0)])
    return HumidAtmosphere(t_of_h, rh_of_h, h_top_m=h_top_m, step_gpm=step_gpm,
                           name="warm humid (%.2f K at the ground)" % t0_k)


# ----------------------------------------------------------------- trajectories
class Flight:
    """The truth of one flight, sampled at the reading times (relative, s):
    ``t_s[k]`` and ``gph_m[k]`` for k = 0 .. n-1, every ``dt_s``.

    launch_time_s: the start of the climb. top_time_s, top_gph_m: the start of
    the descent (burst, or cut-down of a float). max_time_s, max_gph_m: the
    highest sample. touchdown_time_s: the landing moment (between samples),
    land_gph_m the ground it stays on. float_start_s, float_end_s: the float
    (None for a plain ascent). kind: 'ascent' or 'float'. params: the
    arguments it was built with."""

    def __init__(self, kind, dt_s, t_s, gph_m, **truth):
        self.kind = kind
        self.dt_s = dt_s
        self.t_s = t_s
        self.gph_m = gph_m
        self.launch_time_s = truth["launch_time_s"]
        self.top_time_s = truth["top_time_s"]
        self.top_gph_m = truth["top_gph_m"]
        self.touchdown_time_s = truth["touchdown_time_s"]
        self.land_gph_m = truth["land_gph_m"]
        self.start_gph_m = truth["start_gph_m"]
        self.float_start_s = truth.get("float_start_s")
        self.float_end_s = truth.get("float_end_s")
        self.params = truth.get("params", {})
        k = max(range(len(gph_m)), key=gph_m.__getitem__)
        self.max_time_s = t_s[k]
        self.max_gph_m = gph_m[k]

    def __len__(self):
        return len(self.t_s)

    def index_at_time(self, t_s):
        """Index of the first reading at or after relative time t_s."""
        k = int(math.ceil((t_s - self.t_s[0]) / self.dt_s - 1e-9))
        return min(max(k, 0), len(self.t_s) - 1)

    def index_at_gph(self, gph_m):
        """Index of the first reading of the ascent at or above gph_m."""
        for k, g in enumerate(self.gph_m):
            if g >= gph_m and self.t_s[k] >= self.launch_time_s:
                return k
        raise ValueError("the flight never reaches %r gpm" % (gph_m,))


def descent_speed_m_s(atm, gph_m, land_gph_m=0.0, land_speed_m_s=5.0):
    """Terminal descent speed under the parachute, gpm/s: v0 sqrt(rho0/rho(H)),
    rho0 the density at the landing height, v0 = land_speed_m_s (drag balance
    m g = k rho v^2, so v ~ rho^-1/2; common practice)."""
    return land_speed_m_s * math.sqrt(atm.rho_kg_m3(land_gph_m) / atm.rho_kg_m3(gph_m))


def _descent(atm, t0, h0, land_h, v_land, times, substep_s=0.1):
    """The parachute descent from rest at (t0, h0): dv/dt = g0 (1 - (v/vt(H))^2),
    dH/dt = -v (drag balance with the terminal speed vt of descent_speed_m_s;
    common practice), fourth-order Runge-Kutta with steps of at most substep_s.
    Yields (t, H) at each time of ``times`` (an increasing iterator of times > t0)
    until touchdown, then returns; returns the touchdown time via StopIteration
    value."""
    rho_land = atm.rho_kg_m3(land_h)

    def acc(h, v):
        vt = v_land * math.sqrt(rho_land / atm.rho_kg_m3(h))
        return G0 * (1.0 - (v / vt) ** 2)

    t, h, v = t0, h0, 0.0
    for tk in times:
        n = max(1, int(math.ceil((tk - t) / substep_s - 1e-9)))
        d = (tk - t) / n
        for _ in range(n):
            # (H, v)' = (-v, acc(H, v))
            a1 = acc(h, v)
            h2, v2 = h - 0.5 * d * v, v + 0.5 * d * a1
            a2 = acc(h2, v2)
            h3, v3 = h - 0.5 * d * v2, v + 0.5 * d * a2
            a3 = acc(h3, v3)
            h4, v4 = h - d * v3, v + d * a3
            a4 = acc(h4, v4)
            hn = h - d / 6.0 * (v + 2.0 * v2 + 2.0 * v3 + v4)
            vn = v + d / 6.0 * (a1 + 2.0 * a2 + 2.0 * a3 + a4)
            if hn <= land_h:
                # touchdown inside this step: linear in the step (the speed is
                # about constant over 0.1 s near the ground)
                return t + d * (h - land_h) / (h - hn)
            t, h, v = t + d, hn, vn
        yield tk, h
    raise ValueError("the descent did not land within the times given")


def _sample(kind, atm, up, t_top, land_h, v_land, ground_s, dt_s, truth):
    """Sample the flight: up(t) until t_top, then the descent, then the ground."""
    ts, hs = [], []
    k = 0
    while k * dt_s <= t_top:
        ts.append(k * dt_s)
        hs.append(up(k * dt_s))
        k += 1
    h_top = up(t_top)
    gen = _descent(atm, t_top, h_top, land_h, v_land, (j * dt_s for j in range(k, 10 ** 9)))
    while True:
        try:
            t, h = next(gen)
        except StopIteration as stop:
            touchdown = stop.value
            break
        ts.append(t)
        hs.append(h)
    k = len(ts)
    while k * dt_s <= touchdown + ground_s:
        ts.append(k * dt_s)
        hs.append(land_h)
        k += 1
    return Flight(kind, dt_s, ts, hs, top_time_s=t_top, top_gph_m=h_top,
                  touchdown_time_s=touchdown, land_gph_m=land_h, **truth)


def balloon_flight(atm, rate_m_s=5.0, top_gph_m=35000.0, start_gph_m=0.0, pad_s=120.0,
                   land_gph_m=None, land_speed_m_s=5.0, ground_s=600.0, dt_s=1.0):
    """A sounding balloon (an invented but typical flight): pad_s seconds still at
    start_gph_m, an ascent at rate_m_s (gpm/s) to top_gph_m, the burst, the
    parachute descent (from rest, speed law of descent_speed_m_s, reached
    within a few seconds) to land_gph_m (default: the start), and ground_s
    seconds on the ground; one reading every dt_s seconds from t = 0."""
    land = start_gph_m if land_gph_m is None else land_gph_m
    t_top = pad_s + (top_gph_m - start_gph_m) / rate_m_s

    def up(t):
        if t <= pad_s:
            return start_gph_m
        return start_gph_m + rate_m_s * (t - pad_s)

    params = dict(rate_m_s=rate_m_s, top_gph_m=top_gph_m, start_gph_m=start_gph_m, pad_s=pad_s,
                  land_gph_m=land, land_speed_m_s=land_speed_m_s, ground_s=ground_s, dt_s=dt_s)
    return _sample("ascent", atm, up, t_top, land, land_speed_m_s, ground_s, dt_s,
                   dict(launch_time_s=pad_s, start_gph_m=start_gph_m, params=params))


def float_flight(atm, rate_m_s=5.0, float_gph_m=32000.0, float_s=6 * 3600.0, approach_s=300.0,
                 wave_m=30.0, wave_period_s=900.0, start_gph_m=0.0, pad_s=120.0, land_gph_m=None,
                 land_speed_m_s=5.0, ground_s=600.0, dt_s=1.0):
    """A float (an invented but typical flight): pad_s seconds still, an ascent at
    rate_m_s, then from t1 (where H = float_gph_m - rate_m_s approach_s) a
    smooth approach H = float_gph_m - rate_m_s approach_s exp(-s/approach_s)
    (s = t - t1; the speed is continuous at t1) plus a slow wave
    wave_m sin(2 pi s/wave_period_s) (1 - exp(-s/approach_s))^2; float_s
    seconds after t1 the cut-down, then the parachute descent and the ground as
    in balloon_flight. float_start_s = t1 + 3 approach_s (within
    rate_m_s approach_s e^-3, 75 gpm by default, of the float height);
    float_end_s = the cut-down."""
    land = start_gph_m if land_gph_m is None else land_gph_m
    d = rate_m_s * approach_s
    t1 = pad_s + (float_gph_m - d - start_gph_m) / rate_m_s
    t_cut = t1 + float_s

    def up(t):
        if t <= pad_s:
            return start_gph_m
        if t <= t1:
            return start_gph_m + rate_m_s * (t - pad_s)
        s = t - t1
        e = math.exp(-s / approach_s)
        return float_gph_m - d * e + wave_m * math.sin(_TWO_PI * s / wave_period_s) * (1.0 - e) ** 2

    params = dict(rate_m_s=rate_m_s, float_gph_m=float_gph_m, float_s=float_s, approach_s=approach_s,
                  wave_m=wave_m, wave_period_s=wave_period_s, start_gph_m=start_gph_m, pad_s=pad_s,
                  land_gph_m=land, land_speed_m_s=land_speed_m_s, ground_s=ground_s, dt_s=dt_s)
    return _sample("float", atm, up, t_cut, land, land_speed_m_s, ground_s, dt_s,
                   dict(launch_time_s=pad_s, start_gph_m=start_gph_m, float_start_s=t1 + 3 * approach_s,
                        float_end_s=t_cut, params=params))


def levels_crossed(atm, flight):
    """The WMO mandatory levels crossed on the ascent: a list of (p_pa, true
    gph_m), lowest first (levels above the start's pressure and at or below the
    highest point)."""
    p_start = atm.p_pa(flight.start_gph_m)
    out = []
    for p in MANDATORY_PA:
        if p < p_start:
            h = atm.gph_of_p(p)
            if h <= flight.max_gph_m:
                out.append((p, h))
    return out


# ----------------------------------------------------------------- sensor model
def _f32(x):
    return struct.unpack("<f", struct.pack("<f", x))[0]


def _quant(x, q):
    return round(x / q) * q if q else x


class Stream:
    """The readings of one seeded flight: ``readings[k]`` is the tuple
    (p_pa, t_k, rh_pct, time_s, gps_m) handed to ``feed`` for the k-th reading
    of the clean stream, or None where a fault removed it (a gap). The truth is
    kept beside it: ``flight`` (times and gph), ``atm``, ``true_p_pa``,
    ``true_t_k``, ``true_rh_pct`` per reading. ``faulty`` is the set of indices
    a fault altered; ``time_origin_s`` turns stamps into flight times
    (rel_time); ``settings`` are make_stream's arguments."""

    def __init__(self, flight, atm, readings, true_p, true_t, true_rh, time_origin_s, settings):
        self.flight = flight
        self.atm = atm
        self.readings = readings
        self.true_p_pa = true_p
        self.true_t_k = true_t
        self.true_rh_pct = true_rh
        self.time_origin_s = time_origin_s
        self.settings = settings
        self.faulty = set()
        self.faults = []

    def __len__(self):
        return len(self.readings)

    def copy(self):
        """A copy whose readings and fault marks can be changed (the truth is shared)."""
        s = Stream(self.flight, self.atm, list(self.readings), self.true_p_pa, self.true_t_k,
                   self.true_rh_pct, self.time_origin_s, self.settings)
        s.faulty = set(self.faulty)
        s.faults = list(self.faults)
        return s

    def rel_time(self, time_s):
        """Flight time, s, of a time stamp of this stream."""
        return time_s - self.time_origin_s


def make_stream(flight, atm, seed, sigma_p_pa=10.0, sigma_t_k=0.2, sigma_rh_pct=1.0,
                bias_p_pa=0.0, bias_t_k=0.0, bias_rh_pct=0.0, quant_p_pa=0.0, quant_t_k=0.0,
                quant_rh_pct=0.0, humidity=None, time_format="s", time_origin_s=0.0, jitter_s=0.0,
                gps=False, sigma_gps_m=5.0, gps_nofix=(), gps_nofix_value=_NAN):
    """The sensor readings of ``flight`` through ``atm`` (seeded, reproducible).

    Draw order of ``random.Random(seed)`` (fixed, whatever the options): three
    standard normals for the per-flight biases (pressure, temperature,
    humidity), then five per reading (pressure, temperature, humidity, time
    jitter, GPS). A reading is

        p = true p + bias_p_pa z_bp + sigma_p_pa z_p   (then quantised to quant_p_pa), Pa
        t = true T + bias_t_k z_bt + sigma_t_k z_t     (quant_t_k), K
        rh = true RH + bias_rh_pct z_brh + sigma_rh_pct z_rh, clamped to 0..100
             (a sensor's output range; common practice), then quant_rh_pct;
             None when ``humidity`` is False (default: the atmosphere's
             ``humid``)
        time_s: per time_format
            's'    time_origin_s + t + jitter (a float; origin 0, 1.7e7 "seconds
                   since New Year", 1.7e9 epoch-like, ...)
            'f32'  the same rounded to the nearest float32 (what a board that
                   keeps time in float32 passes)
            'ms'   ticks/1000 with ticks = round(1000 (time_origin_s + t +
                   jitter)), an integer millisecond tick counter
            None   no time stamps
          jitter = jitter_s z_j clamped to +-0.45 dt (stamps stay in order);
        gps_m: (gps=True) the truth's geometric height (geometric_height_m) +
          sigma_gps_m z_g; readings in a "no fix" spell get gps_nofix_value
          (nan by default); gps_nofix is a list of (first index, count).
    """
    rnd = random.Random(seed)
    gauss = rnd.gauss
    bp = bias_p_pa * gauss(0.0, 1.0)
    bt = bias_t_k * gauss(0.0, 1.0)
    brh = bias_rh_pct * gauss(0.0, 1.0)
    if humidity is None:
        humidity = atm.humid
    nofix = set()
    for k0, n in gps_nofix:
        nofix.update(range(k0, k0 + n))
    jmax = 0.45 * flight.dt_s
    readings, tp, tt, trh = [], [], [], []
    for k, (t_rel, h) in enumerate(zip(flight.t_s, flight.gph_m)):
        # the five draws of this reading, always all five, in this order
        zp = gauss(0.0, 1.0)
        zt = gauss(0.0, 1.0)
        zrh = gauss(0.0, 1.0)
        zj = gauss(0.0, 1.0)
        zg = gauss(0.0, 1.0)
        p_true = atm.p_pa(h)
        t_true = atm.t_k(h)
        rh_true = atm.rh_pct(h)
        tp.append(p_true)
        tt.append(t_true)
        trh.append(rh_true)
        p = _quant(p_true + bp + sigma_p_pa * zp, quant_p_pa)
        t = _quant(t_true + bt + sigma_t_k * zt, quant_t_k)
        if humidity:
            rh = (rh_true or 0.0) + brh + sigma_rh_pct * zrh
            rh = _quant(min(100.0, max(0.0, rh)), quant_rh_pct)
        else:
            rh = None
        if time_format is None:
            ts = None
        else:
            j = min(jmax, max(-jmax, jitter_s * zj))
            ts = time_origin_s + t_rel + j
            if time_format == "f32":
                ts = _f32(ts)
            elif time_format == "ms":
                ts = round(1000.0 * ts) / 1000.0
            elif time_format != "s":
                raise ValueError("time_format %r: 's', 'f32', 'ms' or None" % (time_format,))
        if not gps:
            g = None
        elif k in nofix:
            g = gps_nofix_value
        else:
            g = geometric_height_m(h) + sigma_gps_m * zg
        readings.append((p, t, rh, ts, g))
    settings = dict(seed=seed, sigma_p_pa=sigma_p_pa, sigma_t_k=sigma_t_k, sigma_rh_pct=sigma_rh_pct,
                    bias_p_pa=bias_p_pa, bias_t_k=bias_t_k, bias_rh_pct=bias_rh_pct,
                    quant_p_pa=quant_p_pa, quant_t_k=quant_t_k, quant_rh_pct=quant_rh_pct,
                    humidity=humidity, time_format=time_format, time_origin_s=time_origin_s,
                    jitter_s=jitter_s, gps=gps, sigma_gps_m=sigma_gps_m, gps_nofix=tuple(gps_nofix),
                    biases=(bp, bt, brh))
    return Stream(flight, atm, readings, tp, tt, trh, time_origin_s, settings)


# ------------------------------------------------------------------------ faults
_FIELDS = ("p_pa", "t_k", "rh_pct", "time_s", "gps_m")


def replace(stream, index, **fields):
    """A copy of ``stream`` with reading ``index`` changed: any of p_pa, t_k,
    rh_pct, time_s, gps_m given as keywords (the rest kept); marked faulty."""
    s = stream.copy()
    r = list(s.readings[index])
    for name, value in fields.items():
        r[_FIELDS.index(name)] = value
    s.readings[index] = tuple(r)
    s.faulty.add(index)
    s.faults.append(("replace", index, tuple(sorted(fields))))
    return s


def _alter(stream, index, field, fn, label):
    s = stream.copy()
    r = list(s.readings[index])
    i = _FIELDS.index(field)
    r[i] = fn(r[i])
    s.readings[index] = tuple(r)
    s.faulty.add(index)
    s.faults.append((label, index))
    return s


def pressure_scaled(stream, index, x):
    """Reading ``index`` with its pressure times (1 + x) (x = -0.06: 6 % low)."""
    return _alter(stream, index, "p_pa", lambda p: p * (1.0 + x), "pressure x(1%+g)" % x)


def temperature_spike(stream, index, dk):
    """Reading ``index`` with its temperature dk kelvin off."""
    return _alter(stream, index, "t_k", lambda t: t + dk, "temperature %+g K" % dk)


def hpa_as_pa(stream, index):
    """Reading ``index`` with its pressure in hPa passed as a number of Pa (a unit slip)."""
    return _alter(stream, index, "p_pa", lambda p: p / 100.0, "hPa as Pa")


def time_shifted(stream, index, dt_s):
    """Reading ``index`` with a wrong time stamp, dt_s seconds off (+1e6: forward;
    negative: backward); the other stamps unchanged."""
    return _alter(stream, index, "time_s", lambda t: t + dt_s, "time %+g s" % dt_s)


def nan_value(stream, index, field="p_pa"):
    """Reading ``index`` with ``field`` (p_pa, t_k, rh_pct, time_s, gps_m) nan."""
    return _alter(stream, index, field, lambda v: _NAN, "nan " + field)


def humidity_lost(stream, index):
    """Every reading from ``index`` on without humidity (rh None); marked faulty."""
    s = stream.copy()
    for k in range(index, len(s.readings)):
        r = s.readings[k]
        if r is not None:
            s.readings[k] = (r[0], r[1], None, r[3], r[4])
            s.faulty.add(k)
    s.faults.append(("humidity lost", index))
    return s


def gap(stream, index, n):
    """The readings index .. index + n - 1 missing (n readings, n dt seconds):
    removed (None), not marked faulty (they never arrive). Put a glitch at
    index + n with another fault function."""
    s = stream.copy()
    for k in range(index, min(index + n, len(s.readings))):
        s.readings[k] = None
    s.faults.append(("gap %d" % n, index))
    return s


# ----------------------------------------------------------------------- scoring
def column_names():
    """The event bits and phases of tinygeo.column by name (None where a name
    does not exist): dict with keys EV_LEVEL, EV_TROPOPAUSE, EV_BURST,
    EV_LANDED, EV_LAUNCH, EV_FLOAT, PH_WAIT, PH_ASCENT, PH_FLOAT, PH_DESCENT,
    PH_LANDED."""
    from tinygeo import column as column_mod
    names = ("EV_LEVEL", "EV_TROPOPAUSE", "EV_BURST", "EV_LANDED", "EV_LAUNCH", "EV_FLOAT",
             "PH_WAIT", "PH_ASCENT", "PH_FLOAT", "PH_DESCENT", "PH_LANDED")
    return {n: getattr(column_mod, n, None) for n in names}


class Run:
    """What a column did with a stream, reading by reading (index k of the
    clean stream): ``present[k]`` (False for a removed reading), ``reason[k]``
    (None if accepted; the error's ``.reason`` if rejected; 'crash:<type>'
    for any other exception), ``bits[k]`` (0 when rejected), ``gph_m[k]`` and
    ``phase[k]`` read after the reading (whether accepted or not; nan before
    the first accepted one), ``events`` [(k, bits, burst_gph_m, burst_time_s)]
    for readings with bits, ``levels`` [(k, level_p_pa, level_gph_m)] for
    every level reported (through on_event when the column has one unset,
    else from the returned bits), ``sigma_m`` {k: the column's sigma_m after
    reading k} for the indices run_column was asked for, ``column`` the column
    at the end."""

    def __init__(self, n):
        self.present = [False] * n
        self.reason = [None] * n
        self.bits = [0] * n
        self.gph_m = [_NAN] * n
        self.phase = [None] * n
        self.events = []
        self.levels = []
        self.sigma_m = {}
        self.column = None


def run_column(factory, stream, sigma_at=()):
    """Feed every reading of ``stream`` to ``factory()`` (a new column) and
    record a Run. sigma_at: indices at which to record the column's sigma_m
    (Run.sigma_m, a dict index -> value)."""
    names = column_names()
    ev_level = names["EV_LEVEL"] or 0
    col = factory()
    run = Run(len(stream))
    sigma_at = set(sigma_at)
    current = [0]
    via_callback = getattr(col, "on_event", 0) is None
    if via_callback:
        def record(c, bits):
            if bits & ev_level:
                lv = getattr(c, "levels", None)
                if lv is None:      # a column that calls once per level
                    run.levels.append((current[0], getattr(c, "level_p_pa", _NAN),
                                       getattr(c, "level_gph_m", _NAN)))
                    return
                for x in lv:        # once per feed: every level it crossed
                    run.levels.append((current[0], x[0], x[1]))
        col.on_event = record
    feed = col.feed
    for k, r in enumerate(stream.readings):
        if r is None:
            continue
        run.present[k] = True
        current[0] = k
        try:
            bits = feed(r[0], r[1], r[2], r[3], r[4])
        except ValueError as e:
            reason = getattr(e, "reason", None)
            run.reason[k] = reason if reason is not None else "crash:" + type(e).__name__
            bits = 0
        except Exception as e:      # a crash is a finding, recorded like a rejection
            run.reason[k] = "crash:" + type(e).__name__
            bits = 0
        run.bits[k] = bits
        run.gph_m[k] = getattr(col, "gph_m", _NAN)
        run.phase[k] = getattr(col, "phase", None)
        if bits:
            run.events.append((k, bits, getattr(col, "burst_gph_m", _NAN),
                               getattr(col, "burst_time_s", _NAN)))
            if not via_callback and bits & ev_level:
                run.levels.append((k, getattr(col, "level_p_pa", _NAN), getattr(col, "level_gph_m", _NAN)))
        if k in sigma_at:
            run.sigma_m[k] = getattr(col, "sigma_m", _NAN)
    run.column = col
    return run


def event_scores(run, stream):
    """Plain numbers about the flight events of a run, against the truth
    (times are flight times, s, of the readings that carried the event, minus
    the true moment):

    n_launch, launch_delay_s; n_burst, n_burst_before_top (bursts reported at
    readings before the true start of the descent), burst_delay_s (the first
    burst), burst_gph_m and burst_time_s of the column at that first burst
    minus the true top gph and time (burst_gph_err_m, burst_time_err_s),
    burst_true_gph_m (the truth's gph at the first burst reading); n_landed,
    n_landed_before_touchdown, landed_delay_s (the first landing),
    landed_true_gph_m (the truth's gph there); n_float (None when the column
    has no EV_FLOAT), float_delay_s (the first, relative to float_start_s),
    n_float_outside (float events outside float_start_s - 3600 .. float_end_s);
    final_phase (the name of the column's last phase). nan where not
    applicable."""
    names = column_names()
    fl = stream.flight
    out = {}

    def times_of(bit):
        if bit is None:
            return None
        return [k for k, b, _, _ in run.events if b & bit]

    launches = times_of(names["EV_LAUNCH"]) or []
    out["n_launch"] = len(launches)
    out["launch_delay_s"] = fl.t_s[launches[0]] - fl.launch_time_s if launches else _NAN

    bursts = [(k, g, ts) for k, b, g, ts in run.events if names["EV_BURST"] and b & names["EV_BURST"]]
    out["n_burst"] = len(bursts)
    out["n_burst_before_top"] = sum(1 for k, _, _ in bursts if fl.t_s[k] < fl.top_time_s)
    if bursts:
        k, g, ts = bursts[0]
        out["burst_delay_s"] = fl.t_s[k] - fl.top_time_s
        out["burst_true_gph_m"] = fl.gph_m[k]
        out["burst_gph_err_m"] = g - fl.top_gph_m
        out["burst_time_err_s"] = stream.rel_time(ts) - fl.top_time_s if ts == ts else _NAN
    else:
        for key in ("burst_delay_s", "burst_true_gph_m", "burst_gph_err_m", "burst_time_err_s"):
            out[key] = _NAN

    landed = times_of(names["EV_LANDED"]) or []
    out["n_landed"] = len(landed)
    out["n_landed_before_touchdown"] = sum(1 for k in landed if fl.t_s[k] < fl.touchdown_time_s)
    out["landed_delay_s"] = fl.t_s[landed[0]] - fl.touchdown_time_s if landed else _NAN
    out["landed_true_gph_m"] = fl.gph_m[landed[0]] if landed else _NAN

    floats = times_of(names["EV_FLOAT"])
    if floats is None:
        out["n_float"] = None
        out["float_delay_s"] = _NAN
        out["n_float_outside"] = None
    else:
        out["n_float"] = len(floats)
        if fl.float_start_s is None:
            out["float_delay_s"] = _NAN
            out["n_float_outside"] = len(floats)
        else:
            out["float_delay_s"] = fl.t_s[floats[0]] - fl.float_start_s if floats else _NAN
            out["n_float_outside"] = sum(1 for k in floats
                                         if not fl.float_start_s - 3600.0 <= fl.t_s[k] <= fl.float_end_s)
    ph = run.phase[-1] if run.phase else None
    for k in range(len(run.phase) - 1, -1, -1):
        if run.phase[k] is not None:
            ph = run.phase[k]
            break
    out["final_phase"] = next((n for n, v in names.items()
                               if n.startswith("PH_") and v is not None and v == ph), ph)
    return out


def level_tolerance_m(p_pa, tv_k, sigma_p_pa):
    """Tolerance, gpm, of a mandatory level's gph from sensors with pressure
    noise sigma_p_pa, Pa: 4 (Rd/g0) Tv sigma_p/p + 2 m (the hypsometric
    equation's dz = (Rd/g0) Tv dp/p, Wallace and Hobbs 2006 eq. 3.29, at four
    sigma, plus 2 m for the interpolation between readings and the temperature
    noise; the target of the column's level tests)."""
    return 4.0 * RD_G0 * tv_k * sigma_p_pa / p_pa + 2.0


def level_scores(run, stream, sigma_p_pa=None):
    """One dict per mandatory level crossed on the ascent (levels_crossed),
    lowest first: p_pa, true_gph_m, count (how many times it was reported),
    err_m (level_gph_m of the first report minus the truth; nan if never),
    tol_m (level_tolerance_m with the truth's Tv and sigma_p_pa, default the
    stream's sensor sigma). Levels reported but not crossed are counted in a
    last dict with p_pa None (count only)."""
    if sigma_p_pa is None:
        sigma_p_pa = stream.settings["sigma_p_pa"]
    truth = levels_crossed(stream.atm, stream.flight)
    out = []
    seen = set()
    for p, h in truth:
        reps = [g for _, lp, g in run.levels if lp == p]
        seen.add(p)
        out.append(dict(p_pa=p, true_gph_m=h, count=len(reps), err_m=(reps[0] - h) if reps else _NAN,
                        tol_m=level_tolerance_m(p, stream.atm.tv_k(h), sigma_p_pa)))
    out.append(dict(p_pa=None, true_gph_m=_NAN, count=sum(1 for _, lp, _ in run.levels if lp not in seen),
                    err_m=_NAN, tol_m=_NAN))
    return out


def clean_rejects(run, stream):
    """Readings that carry no fault but were rejected: dict reason -> count,
    with 'n_clean' the number of fault-free readings fed and 'gph_min'/'gph_max'
    the truth's gph range of the rejected ones (nan if none)."""
    out = {}
    n = 0
    gs = []
    for k, r in enumerate(stream.readings):
        if r is None or k in stream.faulty:
            continue
        n += 1
        reason = run.reason[k]
        if reason is not None:
            out[reason] = out.get(reason, 0) + 1
            gs.append(stream.flight.gph_m[k])
    out["n_clean"] = n
    out["gph_min"] = min(gs) if gs else _NAN
    out["gph_max"] = max(gs) if gs else _NAN
    return out


def fault_scores(clean_run, fault_run, index, tol_m=1.0, settle=10):
    """A run with a fault at reading ``index`` against the run of the same
    stream without it (same seed, same noise). Over the readings after the
    fault (k > index) that the faulted stream still has:

    lost: readings rejected by the fault run (while accepted by the clean one)
      or whose gph_m (after the reading) is not within tol_m of the clean
      run's; rejected: readings rejected by the fault run that the clean run
      accepted;
    back_after: readings after the fault until the last lost one (0: never
      lost; None: still lost at the end);
    worst_m: max |gph_m difference| from index + settle on (inf where only one
      run has a height yet); offset_end_m: the signed difference (fault minus
      clean) at the last reading.
    index = -1 compares every reading (two variants of one stream).
    Target of the column's redesign: worst_m <= 1 m and lost <= 10."""
    lost = rejected = 0
    last_lost = None
    worst = 0.0
    diff = end = _NAN
    n = len(clean_run.gph_m)
    for k in range(index + 1, n):
        if not fault_run.present[k]:
            continue
        a, b = fault_run.gph_m[k], clean_run.gph_m[k]
        if a == a and b == b:
            end = a - b
            diff = abs(end)
        else:
            diff = 0.0 if a != a and b != b else math.inf   # a height on one side only
            end = diff
        bad_reject = fault_run.reason[k] is not None and clean_run.reason[k] is None
        if bad_reject:
            rejected += 1
        if bad_reject or not diff <= tol_m:
            lost += 1
            last_lost = k
        if k >= index + settle and not diff <= worst:
            worst = diff
    back = 0 if last_lost is None else (None if last_lost == n - 1 else last_lost - index)
    return dict(lost=lost, rejected=rejected, back_after=back, worst_m=worst, offset_end_m=end)
