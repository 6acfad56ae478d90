"""The running hypsometric integration of an atmospheric column, reading by
reading: live geopotential and geometric height, vertical rate, flight events,
height uncertainty, GPS cross-check and power-loss checkpoints.

``Column`` keeps a fixed set of attributes and updates them in place: every
``feed`` costs O(1) time and memory (no list, dict or string is built on the
accepted path; one 6-tuple when a new height node is taken, every 3 km) and
calls the core modules for every formula: ``tinygeo.moisture`` (virtual
temperature), ``tinygeo.layers`` (thickness of the layer between two
readings, stable ln(p1/p2)) and ``tinygeo.potential`` (geopotential height of
the start, geometric height of the column). Having checked a reading itself,
it uses their unchecked internal forms (moisture.rh_q, layers.half_k_ln,
potential.gph_series/height_series with the latitude's series evaluated once): the same
formulas, without building the floats of a second round of argument checks
(on MicroPython every float result is a heap block; bench/heap.py).

Logger loop (a sketch; ``sensor`` is your driver, ``flash`` your storage)::

    from tinygeo.column import Column, EV_BURST, EV_LANDED
    from tinygeo.errors import ReadingError

    col = Column(48.2, start_height_m=512.0)
    while True:
        r = sensor.read()
        try:
            bits = col.feed(r.p_pa, r.t_k, r.rh_pct, r.time_s, r.gps_m)
        except ReadingError as e:
            log("rejected %s: %s" % (e.reason, e))   # the column is unchanged
            continue
        show(col.height_m, col.rate_m_s, col.sigma_m)
        if bits & EV_BURST:
            release_parachute_log(col.burst_gph_m)
        if col.count % 30 == 0:
            flash.write(col.to_bytes())              # restore: Column.from_bytes(blob)
        if bits & EV_LANDED:
            break

The contract (constructor, ``feed``, attributes, events, flags, phases)
-----------------------------------------------------------------------
``Column(lat_deg, start_height_m=0.0, anchor_p_pa=None, ellipsoid=WGS84,
ice=False, dry_fallback=False, sigma_p_pa=10.0, sigma_t_k=0.2,
sigma_rh_pct=1.0, bias_p_pa=50.0, bias_t_k=0.2, bias_rh_pct=3.0,
max_rate_m_s=200.0, landing_s=60.0, landing_tol_pa=50.0, launch_m=20.0,
burst_drop_m=50.0, burst_readings=3, tropopause_max_p_pa=50000.0,
rh_tol_pct=3.0, track_sigma=True, on_event=None, geoid_undulation_m=None,
max_t_step_k=3.0, max_t_rate_k_s=1.0, max_t_gradient_k_m=0.1)``

- lat_deg: geodetic latitude of the flight, degrees, -90..90 (kept fixed: the
  latitude only enters the conversion between geopotential and geometric
  height, 0.5 % at most).
- start_height_m: height above mean sea level, m, of the first accepted
  reading; or, with anchor_p_pa, of the pressure anchor_p_pa.
- anchor_p_pa: a pressure, Pa, known to sit at start_height_m (a station
  barometer, a surveyed launch pad). The first reading is then placed by one
  hypsometric step from it, with the first reading's virtual temperature at
  both ends (an isothermal step: exact for the few metres a launch pad sits
  above or below its reference).
- ellipsoid: tinygeo.WGS84 (default) or tinygeo.GRS80.
- ice: humidity relative to ice at and below 0 degC (default: to water, the
  WMO upper-air convention); passed to tinygeo.moisture.
- dry_fallback: what a reading without humidity uses. False (default): the
  mixing ratio of the latest reading that had a humidity is held (flag
  FL_HELD_MIXING; dry air, FL_DRY, if there was none yet). True: dry air
  (flag FL_DRY).
- sigma_p_pa, sigma_t_k, sigma_rh_pct: RANDOM 1-sigma errors of one reading
  (noise, independent from reading to reading).
- bias_p_pa, bias_t_k, bias_rh_pct: SYSTEMATIC 1-sigma errors (calibration
  offsets, the same for the whole flight).
  Defaults (common practice for a radiosonde-class sensor set, from memory,
  not a specification of any product): pressure noise 0.1 hPa and calibration
  0.5 hPa; temperature noise 0.2 K and calibration 0.2 K; humidity noise 1 %RH
  and calibration 3 %RH. A consumer MEMS barometer is closer to 0.02 hPa noise
  and 1 hPa offset (data-sheet class, from memory).
- max_rate_m_s: fastest believable vertical speed, m/s (|rate_m_s|, the
  geometric height difference over the time step; above 98 750 gpm, where
  height_m is nan, nothing is checked); a reading implying more is rejected
  (reason 'rate'). None disables the check.
  200 m/s is above the free fall of a burst balloon's train in the thin upper
  air (tens of m/s, up to about 100 m/s at 30 km; common practice).
- landing_s, landing_tol_pa: after the burst, pressure within landing_tol_pa of
  a reference reading for landing_s seconds (time_s needed) means landed.
- launch_m: rise, gpm, above the lowest height seen while waiting that means
  launched (PH_WAIT -> PH_ASCENT, EV_LAUNCH).
- burst_drop_m, burst_readings: descent is confirmed when burst_readings
  readings in a row lie at least burst_drop_m (gpm) below the highest point
  (EV_BURST, PH_DESCENT); burst_gph_m is that highest point.
- tropopause_max_p_pa: only readings at or above this level (pressure at or
  below it) can be the tropopause (500 hPa by default, common practice, which
  keeps surface inversions out of the search).
- rh_tol_pct: how far beyond 0..100 %RH a humidity is still accepted, 0..3 %
  (sensor noise; the value is passed on unchanged, as tinygeo.moisture
  accepts -3..103 %).
- track_sigma: False skips the uncertainty bookkeeping (sigma_* become nan)
  for a leaner feed.
- on_event: callable(column, bits) called after a reading with events has
  updated the column (see EV_LEVEL for readings crossing several levels).
- geoid_undulation_m: None (default): gps_m is a height above mean sea
  level. A number N, m, -150..150: gps_m is an ellipsoidal (GPS receiver)
  height and is converted with tinygeo.msl_height(gps_m, N) = h - N.
- max_t_step_k, max_t_rate_k_s, max_t_gradient_k_m: the temperature-step
  check against sensor glitches (reason 'temperature'). A reading is rejected
  when its temperature differs from the latest accepted one by more than
      max_t_step_k + max_t_rate_k_s dt + max_t_gradient_k_m |dz|
  where dt is the time since the latest accepted reading with a time stamp
  (0 when this reading or every earlier one has none) and dz the
  thickness, gpm, of the layer between the latest accepted reading and this
  one. The allowance grows with the time and the height since the latest
  accepted reading, so after a genuine step change the column accepts the
  new temperatures again after (jump - max_t_step_k)/max_t_rate_k_s seconds
  or the matching climb; without time stamps and without a pressure change
  (standing still, untimed) it does not grow. Defaults: 3 K (a few times the
  noise of any radiosonde-class sensor), 1 K/s (cloud exits and the sun
  change a sensor's reading by a few K over several seconds) and 0.1 K/m
  (the strongest real inversions, about 10 K per 100 m; common practice):
  at 5 m/s and 1 s steps a reading may differ by 4.5 K from the previous one,
  at 2 s steps by 6 K, while the sharpest real inversion changes it by 0.5 K
  per second. max_t_step_k=None disables the check; ranges 0..100 K,
  0..100 K/s, 0..10 K/m.

``feed(p_pa, t_k, rh_pct=None, time_s=None, gps_m=None) -> int`` adds one
reading and returns the bits of the events it caused (0 = none).
p_pa: pressure, Pa, 0.1..120000; t_k: air temperature, K, 150..350;
rh_pct: relative humidity, %, or None; time_s: a time stamp, s, any origin,
never decreasing, or None; gps_m: GPS height above mean sea level, m,
-1000..100000, or None (an ellipsoidal height if geoid_undulation_m is
set). A bad reading raises
tinygeo.errors.ReadingError with ``.reason`` one of 'number' (not a finite
number), 'pressure', 'temperature', 'humidity', 'time', 'rate', 'gps', after
incrementing ``rejected`` -- nothing else changes.

Attributes after each accepted reading (nan where not known yet):
  count, rejected (int): readings accepted / rejected.
  p_pa, t_k, tv_k, rh_pct, time_s: the latest accepted reading (tv_k is the
    virtual temperature used; rh_pct and time_s are nan when not given).
  gph_m: geopotential height, gpm (compensated running sum).
  height_m: geometric height above mean sea level, m (see "Geometric height").
  rate_m_s: vertical speed between the two latest readings with a time, m/s
    (nan when this reading has no time; the raw difference, not smoothed).
  flags (int): FL_* bits of the latest reading: FL_DRY 1 (no humidity, dry
    air assumed), FL_HELD_MIXING 2 (no humidity, the last mixing ratio used),
    FL_NO_TIME 4 (no time_s, so no rate), FL_DESCENT 8 (pressure rose:
    integrating downwards), FL_SAME_P 16 (pressure repeated: nothing added).
  phase (int): PH_WAIT, PH_ASCENT, PH_DESCENT, PH_LANDED.
  max_gph_m: highest gph so far that the next reading confirmed (a reading
    counts as the peak once the reading after it is at least as high, or as
    the lower of the two: one glitched reading is never the peak); with
    _max_time/_max_p its time and pressure; launch_time_s.
  burst_gph_m, burst_time_s, burst_p_pa: that peak at the confirmed descent
    (set with EV_BURST); within one reading's rise of the true top.
  level_p_pa, level_gph_m, level_height_m, level_t_k: the mandatory level of
    the latest EV_LEVEL.
  tropopause_p_pa, tropopause_gph_m, tropopause_t_k (set with EV_TROPOPAUSE).
  sigma_m, sigma_random_m, sigma_bias_m: 1-sigma height uncertainty, m
    (properties computed from the running sums; see "Uncertainty").
  gps_m, gps_diff_m: the latest GPS height given (above mean sea level), and
    barometric height minus it at that reading, m.

Methods: ``reanchor_gps()``, ``to_bytes()``, ``Column.from_bytes(blob)``.

Integration
-----------
Between two readings (p1, Tv1) and (p2, Tv2) the column rises by
tinygeo.layer_thickness(p1, p2, Tv1, Tv2) = (Rd/g0) (Tv1+Tv2)/2
ln(p1/p2) gpm (hypsometric equation, Wallace and Hobbs 2006 eq. 3.29/3.30;
the trapezoid in ln p), negative when the pressure rises (descent, FL_DESCENT),
exactly zero for a repeated pressure (FL_SAME_P; the reading still updates
temperature, time and events). Float32 care: the logarithm is the stable
ln_ratio of tinygeo.layers, and the running sum of thousands of small
increments is compensated (classic Kahan summation, Kahan 1965, "Further
remarks on reducing truncation errors", Comm. ACM 8(1) 40): the correction
is folded into every step, so it never grows beyond one unit in the last
place of the sum; a separately accumulated Neumaier-type correction drifts
when floats are truncated rather than rounded (30-bit MicroPython builds).

Geometric height
----------------
height_m comes from tinygeo.potential: at a node gph g0 the exact
h0 = geometric_height(g0), and geopotential_height of h0 + 1500 m and
h0 + 3000 m; between refreshes height_m is the quadratic in gph through these
three points, used while gph_m stays within 3000 gpm of g0 (then a new node
is taken at the current gph_m). h(gph) has d3h/dgph3 ~ 6/R^2 = 1.5e-13 per
m^2, so the interpolation error is below 3 mm (double precision), and one
Newton solve plus two series evaluations every 3 km replace a Newton solve
per reading. At a node height_m is geometric_height(gph_m) (so the first
reading sits at start_height_m to 1e-9 m): the full Newton solve for the
first node (and after a jump of more than 6000 gpm), else one Newton step
started from the old quadratic (a few mm off, so the step leaves about
1e-12 m). The series coefficients of the latitude (tinygeo.potential) are
evaluated once, in the constructor: a node costs about 70 float results
(MicroPython heap blocks) instead of 800. rate_m_s is the difference
of these heights over the time step. Above 98 750 gpm (outside
geometric_height) height_m is nan.

Events
------
EV_LEVEL: a WMO mandatory isobaric level (MANDATORY_PA) was crossed; its gph,
  height and temperature are interpolated linearly in ln p between the two
  readings (ln p from tinygeo.ln_ratio). Levels are reported on the way
  up only (phases PH_WAIT and PH_ASCENT), each at most once, the first time
  the column reaches it; a level at or below the start is never reported,
  except one exactly equal to the first reading's pressure. On descent nothing
  is reported (the ascent is the sounding). If one reading crosses several
  levels (sparse data), on_event is first called with EV_LEVEL alone for each
  lower one (level_* set to it), then with the reading's bits for the highest,
  which level_* keep.
EV_TROPOPAUSE: the first tropopause by the WMO lapse-rate definition: "the
  lowest level at which the lapse rate decreases to 2 K/km or less, provided
  also the average lapse rate between this level and all higher levels within
  2 km does not exceed 2 K/km" (WMO 1957, WMO-No. 49 Technical Regulations;
  wording from memory), with lapse rates per km of geopotential height and
  temperature t_k (not tv_k). The profile searched is the ascent envelope:
  readings higher than every earlier one (dips from pendulum motion or noise
  are skipped), in phases PH_WAIT/PH_ASCENT, at pressures <=
  tropopause_max_p_pa. Exactly, for envelope points i with
  theta_i = t_i + 0.002 gph_i (K): i is the tropopause when no envelope point
  j after it with gph_j <= gph_i + 2000 has theta_j < theta_i, the point just
  after it (even if farther than 2 km: sparse data) has theta >= theta_i, and
  a point above gph_i + 2000 exists. The event fires at that point, i.e. about
  2 km above the tropopause. Look-ahead is bounded by O(1) state: along the
  envelope, a point that rejects the current candidate also rejects every point
  between them (they have theta >= the candidate's and lie less than 2 km
  below it), so one candidate at a time gives exactly the brute-force answer
  (tests/test_column.py compares both on random profiles).
EV_BURST: descent confirmed (see burst_drop_m); PH_ASCENT -> PH_DESCENT.
EV_LANDED: pressure steady after the burst (see landing_s); -> PH_LANDED.
EV_LAUNCH: the rise of launch_m above the waiting height; PH_WAIT ->
  PH_ASCENT.
Bit values: EV_LEVEL 1, EV_TROPOPAUSE 2, EV_BURST 4, EV_LANDED 8,
EV_LAUNCH 16; phases PH_WAIT 0, PH_ASCENT 1, PH_DESCENT 2, PH_LANDED 3.
Phases only move forward: a rise after the confirmed descent is integrated
but starts no new ascent.

Uncertainty
-----------
First-order (linear) propagation of the sensor errors through the
hypsometric sum z_n = z_0 + sum_i (Rd/g0) (Tv_{i-1}+Tv_i)/2 ln(p_{i-1}/p_i)
(JCGM 100:2008, Evaluation of measurement data -- Guide to the expression of
uncertainty in measurement (GUM), eq. 10 for uncorrelated and eq. 13 for fully
correlated inputs; from memory). With K = Rd/g0, L_i = ln(p_{i-1}/p_i) and
Tm_i = (Tv_{i-1}+Tv_i)/2 the sensitivities are
  dz_n/dTv_i = K (L_i + L_{i+1})/2 (the end readings get one half-layer),
  dz_n/dp_i  = K (Tm_{i+1} - Tm_i)/p_i inside, K Tm_1/p_0 at the start and
               -K Tm_n/p_n at the latest reading,
  dTv/dT ~ 1 and dTv/dRH = Tv q at constant T and p, where
  r = RH q = (1 - eps) e/p and Tv = T/(1 - r) (readings under 1 %RH and
  readings without humidity keep the last slope). dTv/dT = 1 neglects that at constant RH a warmer
  reading also holds more vapour (Tv - T grows by about 6 % per K): the
  temperature terms come out a few per cent low in humid soundings (2-4 % on
  the tests' 0-31 km humid sounding, exact for dry air).
Random part: sum of (sensitivity x sigma)^2 over every reading (each reading's
sensitivity is final once the next reading arrives, so the sum is kept in
O(1)): temperature and humidity noise add as a random walk over the layers,
pressure noise counts at the two ends (and barely inside).
Systematic part: a calibration offset is the same for every reading, so its
sensitivities add before squaring: temperature (Rd/g0) dT ln(p0/p),
humidity K sum_i (dTv/dRH)_mean L_i dRH, pressure (sum_i dz_n/dp_i) dp, which
at the latest reading is -(Rd Tv/(g0 p)) dp (at 10 hPa, 0.5 hPa is about
340 m). The three are independent (added in squares); after reanchor_gps the
GPS sigma joins them. sigma_m = sqrt(random^2 + systematic^2). Computed in
geopotential metres (within 1.1 % of metres up to 35 km). Not modelled: the
error of the dry assumption when humidity is missing (Tv - T reaches 3-5 K
in warm moist air; watch FL_DRY / FL_HELD_MIXING), sensor lag, and
non-hydrostatic motion.

Bad readings and the rejected counter
-------------------------------------
Every check and every computation happens before the first attribute is
written, so a rejected reading leaves the column exactly as it was, except
``rejected``, a diagnostic counter that is deliberately outside the results:
a stream with bad readings interleaved gives bit-identical results
(every other attribute, every event, every later height) to the same stream
without them, and differs only in ``rejected`` (also stored in checkpoints).
Time: a time_s lower than the latest given one is rejected ('time'); an equal
time_s is accepted only if the height does not change (a duplicate), because
otherwise the speed is infinite ('time').

Checkpoint
----------
to_bytes() packs every setting and every state variable: magic b"TGCK",
version, payload length, the payload (floats as IEEE doubles '<d', so a
float32 board stores its values exactly too and a restore continues
bit-identically on the same platform), then CRC-32 (IEEE 802.3 polynomial;
binascii.crc32 when the firmware has it, else the same CRC computed here)
of everything before it. CRC-32 detects every single-bit error and every burst
of up to 32 bits; truncation is caught by the length. on_event is not stored
(pass it to from_bytes). CHECKPOINT_BYTES is the blob size. Version 2 (this
one) keeps the uncertainty sums as Tv0 + Tv of the latest layer (_tm2) and the
start pressure (_p_start) instead of version 1's -dz/dp and sum of dz/dTv;
version 1 blobs are refused.
"""
import math

from .potential import msl_height, GPH_MIN_M, GPH_MAX_M, gph_series, height_series, newton_step
from .layers import ln_ratio, half_k_ln, HALF_RG
from .moisture import rh_q, tv_w, ONE_M_EPS
from .constants import WGS84, GRS80
from .errors import RangeError, ReadingError, quote, INF, NINF
# What only the constructor or a rejection uses (check_lat, check_range, the
# hints, potential.series, moisture.boiling_error, and vapour_pressure/mixing_ratio
# for a held mixing ratio) is imported where it is used: fewer names in this
# module's dict (on MicroPython a dict grows in steps; 59 names fit the step
# below 73).

# --- events, flags, phases ----------------------------------------------------
EV_LEVEL = 1
EV_TROPOPAUSE = 2
EV_BURST = 4
EV_LANDED = 8
EV_LAUNCH = 16

FL_DRY = 1
FL_HELD_MIXING = 2
FL_NO_TIME = 4
FL_DESCENT = 8
FL_SAME_P = 16

PH_WAIT = 0
PH_ASCENT = 1
PH_DESCENT = 2
PH_LANDED = 3

MANDATORY_PA = (100000.0, 92500.0, 85000.0, 70000.0, 50000.0, 40000.0, 30000.0, 25000.0,
                20000.0, 15000.0, 10000.0, 7000.0, 5000.0, 3000.0, 2000.0, 1000.0)
"""WMO mandatory (standard isobaric) levels, Pa: 1000 ... 10 hPa (WMO-No. 306
Manual on Codes and WMO-No. 49 Technical Regulations, from memory)."""

P_MIN_PA = 0.1
"""Lowest pressure accepted, Pa (as tinygeo.layers; below the 0.37 Pa top of
the U.S. Standard Atmosphere 1976)."""
P_MAX_PA = 120000.0
"""Highest pressure accepted, Pa (no sensor reads more; 1200 hPa)."""
T_MIN_K = 150.0
T_MAX_K = 350.0
GPS_MIN_M = -1000.0
GPS_MAX_M = 100000.0

WMO_LAPSE_K_PER_GPM = 0.002
"""2 K/km, the lapse rate of the WMO tropopause definition, in K per gpm."""
WMO_DEPTH_GPM = 2000.0
"""2 km, the depth over which the WMO definition checks the mean lapse rate."""

_NAN = float("nan")
# HALF_RG (tinygeo.layers) = 0.5 * RD / G0: half of Rd/g0, gpm/K.
# The zero the column stores is the literal 0.0 (equal float literals are one
# object of the module's constant table, so every stored zero shares it).
# Integral constants are ints: free on MicroPython (a float constant is a heap
# object for the module's lifetime); every operation gives the same double.
_NODE_D = 1500             # m between the nodes of the height quadratic
_NODE_W = 3000             # gpm: the quadratic is used within +-_NODE_W of its node
_NODE_W2 = 6000            # gpm: and gives the start of the next node's Newton step within it
_RH_SLOPE_MIN = 1          # %RH below which dTv/dRH is held, not recomputed


# --- checkpoint layout ----------------------------------------------------------
# Settings first (the constructor is called with them on restore), then state.
_CFG_F = ("lat_deg", "start_height_m", "_anchor", "sigma_p_pa", "sigma_t_k", "sigma_rh_pct",
          "bias_p_pa", "bias_t_k", "bias_rh_pct", "_max_rate", "landing_s", "landing_tol_pa",
          "launch_m", "burst_drop_m", "tropopause_max_p_pa", "rh_tol_pct", "_geoid_n",
          "_t_step", "max_t_rate_k_s", "max_t_gradient_k_m")
_CFG_I = ("_ell", "ice", "dry_fallback", "burst_readings", "track_sigma")
_ST_F = ("p_pa", "t_k", "tv_k", "rh_pct", "time_s", "gph_m", "_c", "height_m", "rate_m_s",
         "max_gph_m", "launch_time_s", "burst_gph_m", "burst_time_s", "burst_p_pa",
         "level_p_pa", "level_gph_m", "level_height_m", "level_t_k",
         "tropopause_p_pa", "tropopause_gph_m", "tropopause_t_k", "gps_m", "gps_diff_m",
         "_t_last", "_g_t", "_min_gph", "_launch_gph", "_max_time", "_max_p", "_burst_line", "_env_g",
         "_land_lo", "_land_hi", "_land_t", "_h_t", "_h_p", "_h_rh", "_w_held",
         "_tp_g", "_tp_top", "_tp_th", "_tp_p", "_tp_t",
         "_n_g", "_n_h", "_n_k1", "_n_k2", "_n_lo", "_n_hi", "_h_tm",
         "_var_done", "_ct", "_tm2", "_s2", "_p_start", "_sum_rh", "_sum_p", "_slope", "_var_anchor")
_ST_I = ("count", "rejected", "flags", "phase", "_lvl", "_burst_n", "_tp_state", "_gps_n")
_MAGIC = b"TGCK"
_VERSION = 3
_HEAD = "<4sBH"            # magic, version, payload length (7 bytes: _column_rare._HEAD_LEN)
# header, the doubles ('<d') then the ints ('<i'), CRC-32 (no padding with '<')
CHECKPOINT_BYTES = 7 + 8 * (len(_CFG_F) + len(_ST_F)) + 4 * (len(_CFG_I) + len(_ST_I)) + 4
"""Size of a checkpoint blob, bytes."""


class Column:
    """The running hypsometric integration of an atmospheric column (see the
    module docstring for every option, attribute, event and formula)."""

    # the state (declared for type checkers; set by __init__ from _ST_I and _ST_F)
    count: int; rejected: int; flags: int; phase: int; _lvl: int; _burst_n: int; _tp_state: int
    _gps_n: int
    p_pa: float; t_k: float; tv_k: float; rh_pct: float; time_s: float; gph_m: float; _c: float
    height_m: float; rate_m_s: float; max_gph_m: float; launch_time_s: float; burst_gph_m: float
    burst_time_s: float; burst_p_pa: float; level_p_pa: float; level_gph_m: float
    level_height_m: float; level_t_k: float; tropopause_p_pa: float; tropopause_gph_m: float
    tropopause_t_k: float; gps_m: float; gps_diff_m: float; _t_last: float; _g_t: float
    _min_gph: float; _launch_gph: float; _max_time: float; _max_p: float; _burst_line: float
    _env_g: float; _land_lo: float; _land_hi: float; _land_t: float; _h_t: float; _h_p: float
    _h_rh: float; _w_held: float; _tp_g: float; _tp_top: float; _tp_th: float; _tp_p: float
    _tp_t: float; _n_g: float; _n_h: float; _n_k1: float; _n_k2: float; _n_lo: float; _n_hi: float
    _h_tm: float; _var_done: float; _ct: float; _tm2: float; _s2: float; _p_start: float
    _sum_rh: float; _sum_p: float; _slope: float; _var_anchor: float

    def __init__(self, lat_deg, start_height_m=0, anchor_p_pa=None, ellipsoid=WGS84,
                 ice=False, dry_fallback=False, sigma_p_pa=10, sigma_t_k=0.2,
                 sigma_rh_pct=1, bias_p_pa=50, bias_t_k=0.2, bias_rh_pct=3,
                 max_rate_m_s=200, landing_s=60, landing_tol_pa=50, launch_m=20,
                 burst_drop_m=50, burst_readings=3, tropopause_max_p_pa=50000,
                 rh_tol_pct=3, track_sigma=True, on_event=None, geoid_undulation_m=None,
                 max_t_step_k=3, max_t_rate_k_s=1, max_t_gradient_k_m=0.1):
        from .errors import check_lat, check_range, pressure_hint
        from .potential import series
        # --- settings (checked here; RangeError names the bad one)
        self.lat_deg = check_lat(lat_deg)
        if ellipsoid is WGS84 or getattr(ellipsoid, "name", None) == "WGS84":
            self.ellipsoid = WGS84
        elif ellipsoid is GRS80 or getattr(ellipsoid, "name", None) == "GRS80":
            self.ellipsoid = GRS80
        else:
            raise RangeError("ellipsoid=%s not supported; pass tinygeo.WGS84 or tinygeo.GRS80"
                             % quote(ellipsoid))
        self.start_height_m = check_range("start_height_m", start_height_m, -1000, 100000, "m",
                                          "height above mean sea level in metres")
        if anchor_p_pa is None:
            self._anchor = _NAN
        else:
            self._anchor = check_range("anchor_p_pa", anchor_p_pa, 0.1, P_MAX_PA, "Pa",
                                       pressure_hint(anchor_p_pa) if isinstance(anchor_p_pa, (int, float))
                                       else None)
        self.ice = bool(ice)
        self.dry_fallback = bool(dry_fallback)
        self.sigma_p_pa = check_range("sigma_p_pa", sigma_p_pa, 0, 10000, "Pa")
        self.sigma_t_k = check_range("sigma_t_k", sigma_t_k, 0, 50, "K")
        self.sigma_rh_pct = check_range("sigma_rh_pct", sigma_rh_pct, 0, 100, "%")
        self.bias_p_pa = check_range("bias_p_pa", bias_p_pa, 0, 10000, "Pa")
        self.bias_t_k = check_range("bias_t_k", bias_t_k, 0, 50, "K")
        self.bias_rh_pct = check_range("bias_rh_pct", bias_rh_pct, 0, 100, "%")
        if max_rate_m_s is None:
            self._max_rate = _NAN
        else:
            self._max_rate = check_range("max_rate_m_s", max_rate_m_s, 1, 10000, "m/s")
        self.landing_s = check_range("landing_s", landing_s, 0, 1000000, "s")
        self.landing_tol_pa = check_range("landing_tol_pa", landing_tol_pa, 0, 10000, "Pa")
        self.launch_m = check_range("launch_m", launch_m, 0, 10000, "gpm")
        self.burst_drop_m = check_range("burst_drop_m", burst_drop_m, 0, 100000, "gpm")
        if not isinstance(burst_readings, int) or burst_readings < 1 or burst_readings > 100000:
            raise RangeError("burst_readings=%s outside 1..100000 readings; pass an int"
                             % quote(burst_readings))
        self.burst_readings = burst_readings
        self.tropopause_max_p_pa = check_range("tropopause_max_p_pa", tropopause_max_p_pa, 0,
                                            P_MAX_PA, "Pa")
        self.rh_tol_pct = check_range("rh_tol_pct", rh_tol_pct, 0, 3, "%")
        self.track_sigma = bool(track_sigma)
        if max_t_step_k is None:
            self._t_step = _NAN
        else:
            self._t_step = check_range("max_t_step_k", max_t_step_k, 0, 100, "K")
        self._t_step_neg = -self._t_step        # derived, so feed builds no float for its check
        self.max_t_rate_k_s = check_range("max_t_rate_k_s", max_t_rate_k_s, 0, 100, "K/s")
        self.max_t_gradient_k_m = check_range("max_t_gradient_k_m", max_t_gradient_k_m, 0, 10, "K/m")
        self.on_event = on_event
        if geoid_undulation_m is None:
            self._geoid_n = _NAN
        else:
            self._geoid_n = check_range("geoid_undulation_m", geoid_undulation_m, -150, 150, "m",
                                        "geoid undulation N in metres (Earth: about -107..+86 m)")
        # --- derived settings
        # the geopotential series at this latitude, evaluated once (tinygeo.potential)
        self._pc = series(self.lat_deg, self.ellipsoid)
        self._min_rate = -self._max_rate
        self._spk2 = HALF_RG * HALF_RG * self.sigma_p_pa * self.sigma_p_pa   # (K/2 sigma_p)^2
        self._st2 = self.sigma_t_k * self.sigma_t_k
        # --- state: every int of _ST_I 0 (but _gps_n), every float of _ST_F
        # nan (but the zeros, which share one float)
        for n in _ST_I:
            setattr(self, n, 0)
        self._gps_n = -1
        for n in _ST_F:
            setattr(self, n, _NAN)
        self._c = self._var_done = self._ct = self._tm2 = self._s2 = 0.0
        self._sum_rh = self._sum_p = self._slope = self._var_anchor = 0.0

    # ------------------------------------------------------------------ feed
    def feed(self, p_pa, t_k, rh_pct=None, time_s=None, gps_m=None):
        """Add one reading; return the bits (EV_*) of the events it caused, 0 if none.

        p_pa: pressure, Pa, 0.1..120000; t_k: temperature, K, 150..350;
        rh_pct: relative humidity, %, -rh_tol_pct..100 + rh_tol_pct, or None;
        time_s: time stamp, s, not below the latest one given, or None;
        gps_m: GPS height above mean sea level, m, -1000..100000, or None.
        Raises ReadingError (``.reason``) and changes nothing but
        ``rejected`` for a bad reading. Formulas: see the module docstring.
        """
        # ---- 1. check the values (nothing is written before step 3)
        # (the messages, by number, are in _bad)
        p = self._num(p_pa, "p_pa", "Pa")
        if not P_MIN_PA <= p <= P_MAX_PA:
            from .errors import pressure_hint
            hint = pressure_hint(p)
            self._bad("pressure", 1, "p_pa", quote(p_pa), P_MIN_PA, P_MAX_PA, "Pa",
                      "; " + hint if hint else "")
        t = self._num(t_k, "t_k", "K")
        if not T_MIN_K <= t <= T_MAX_K:
            from .errors import temperature_hint
            hint = temperature_hint(t)
            self._bad("temperature", 1, "t_k", quote(t_k), T_MIN_K, T_MAX_K, "K",
                      "; " + hint if hint else "")
        if rh_pct is not None:
            rh = self._num(rh_pct, "rh_pct", "%")
            if rh < 0 or rh > 100:     # floats are built only out here (rare)
                tol = self.rh_tol_pct
                if rh < -tol or rh > 100 + tol:
                    self._bad("humidity", 2, quote(rh_pct), -tol, 100 + tol)
        if time_s is not None:
            ts = self._num(time_s, "time_s", "s")
            if ts < self._t_last:
                self._bad("time", 3, quote(time_s), self._t_last)
        if gps_m is not None:
            gps = self._num(gps_m, "gps_m", "m")
            if self._geoid_n == self._geoid_n:
                try:
                    gps = msl_height(gps, self._geoid_n)
                except RangeError as e:
                    self._bad("gps", 4, quote(gps_m), e)
            if not GPS_MIN_M <= gps <= GPS_MAX_M:
                self._bad("gps", 5, quote(gps_m), GPS_MIN_M, GPS_MAX_M)

        # ---- 2. compute the new state in locals
        flags = 0
        first = self.count == 0
        if rh_pct is not None:
            # tinygeo.virtual_temperature (its moisture.tv_rh, inlined to share q):
            # Tv = T/(1 - r), r = (1 - eps) e/p = rh q, and dTv/dRH = Tv q
            q = rh_q(t, p, self.ice)
            r = rh * q
            if r >= ONE_M_EPS:
                from .moisture import boiling_error
                self._bad("humidity", 6, quote(rh_pct), t, p, boiling_error(r * p / ONE_M_EPS, p))
            tv = t / (1 - r)
            if rh >= _RH_SLOPE_MIN:
                slope = tv * q
            else:
                slope = self._slope
            w = _NAN
        else:
            slope = self._slope
            w = self._w_held
            if self.dry_fallback or self._h_p != self._h_p:
                tv = t
                flags = FL_DRY
            else:
                if w != w:
                    try:
                        # the mixing ratio of the latest reading that had a humidity, kg/kg
                        if self._h_rh <= 0.0:
                            w = 0.0
                        else:
                            from .moisture import vapour_pressure, mixing_ratio
                            w = mixing_ratio(vapour_pressure(self._h_t, self._h_p, self._h_rh,
                                                             self.ice), self._h_p)
                    except RangeError as e:
                        # e >= p at the rounding edge of feed's r < 1 - eps test
                        self._bad("humidity", 7, e)
                if w > 1:
                    self._bad("humidity", 8, w)
                tv = tv_w(t, w)                # tinygeo.virtual_temperature_from_mixing_ratio
                flags = FL_HELD_MIXING
        t0 = self.t_k
        if first:
            p0 = self._anchor
            tv0 = tv
            s = gph_series(self.start_height_m, self._pc, self.ellipsoid.a_m)
            c = 0.0
        else:
            p0 = self.p_pa
            tv0 = self.tv_k
            s = self.gph_m
            c = self._c
        if p0 != p0 or p == p0:   # first reading without anchor, or a repeated pressure
            dz = 0.0
            a = 0.0
            tm2 = tv0 + tv
            if not first:
                flags |= FL_SAME_P
            g = s
        else:
            if T_MIN_K <= tv <= T_MAX_K and T_MIN_K <= tv0 <= T_MAX_K:
                # tinygeo.layer_thickness (arguments checked above), as its two products
                a = half_k_ln(p0, p)       # (Rd/g0)/2 ln(p0/p): also dz/dTv of either end
                tm2 = tv0 + tv
                dz = a * tm2
            else:
                # the range tinygeo.layer_thickness accepts for Tv (checked here,
                # not by calling it, so nothing below runs with dz unset)
                self._bad("temperature", 9, tv, t, p, T_MIN_K, T_MAX_K)
            if p > p0:
                flags |= FL_DESCENT
            # classic Kahan step: c carries the part of the sum lost so far
            y = dz - c
            g = s + y
            c = (g - s) - y
        # temperature step (see max_t_step_k); a nan t0 (first reading) passes
        dtk = t - t0
        if dtk > self._t_step or dtk < self._t_step_neg:
            # the full allowance, only for a change beyond max_t_step_k
            allow = self._t_step + self.max_t_gradient_k_m * abs(dz)
            if time_s is not None and self._t_last == self._t_last:
                allow += self.max_t_rate_k_s * (ts - self._t_last)
            if abs(dtk) > allow:
                self._bad("temperature", 10, quote(t_k), dtk, t0, allow)
        # geometric height from the node pair (new nodes are kept in locals until the commit)
        if self._n_lo <= g <= self._n_hi:
            nodes = None
            d = g - self._n_g
            h = self._n_h + d * (self._n_k1 + d * self._n_k2)
        else:
            guess = _NAN
            d = g - self._n_g
            if -_NODE_W2 <= d <= _NODE_W2:
                # just out of the window: the old quadratic is within a few mm
                guess = self._n_h + d * (self._n_k1 + d * self._n_k2)
            nodes = self._nodes(g, guess)
            d = g - nodes[0]
            h = nodes[1] + d * (nodes[2] + d * nodes[3])
        if time_s is None:
            flags |= FL_NO_TIME
            rate = _NAN
        elif self._t_last == self._t_last:
            dt = ts - self._t_last
            if dt == 0.0:
                if g != self._g_t:
                    self._bad("time", 11, quote(time_s), g - self._g_t)
                rate = _NAN     # a duplicate: the rate stays as it was
            else:
                rate = (h - self._h_tm) / dt
                if rate > self._max_rate or rate < self._min_rate:
                    self._bad("rate", 12, quote(p_pa), rate, dt, self._max_rate)
        else:
            rate = _NAN

        # ---- 3. commit (no exception is raised from here on, but by on_event)
        time0 = self.time_s    # the previous reading's time (for the peak, below)
        self.count += 1
        self.p_pa = p
        self.t_k = t
        self.tv_k = tv
        self.gph_m = g
        self._c = c
        self.flags = flags
        if rh_pct is None:
            self.rh_pct = _NAN
            self._w_held = w
        else:
            self.rh_pct = rh
            self._h_t = t
            self._h_p = p
            self._h_rh = rh
            self._w_held = _NAN
        if nodes is not None:
            self._n_g, self._n_h, self._n_k1, self._n_k2, self._n_lo, self._n_hi = nodes
        self.height_m = h
        if time_s is None:
            self.time_s = _NAN
            self.rate_m_s = _NAN
        else:
            self.time_s = ts
            if rate == rate:
                self.rate_m_s = rate
            elif ts != self._t_last:
                self.rate_m_s = _NAN
            self._t_last = ts
            self._g_t = g
            self._h_tm = h
        if gps_m is not None:
            self.gps_m = gps
            self.gps_diff_m = h - gps
            self._gps_n = self.count
        if not self.track_sigma:
            pass
        elif first and p0 != p0:
            # Streaming first-order propagation (module docstring, "Uncertainty");
            # tm2 = Tv0 + Tv, a = (Rd/g0)/2 ln(p0/p) = dz/dTv of either end.
            # The first reading: no layer yet; its sensitivities are all 0 so far
            self._s2 = self._st2 + (slope * self.sigma_rh_pct) ** 2
            self._p_start = p
        else:
            if first:
                # anchored start: the anchor is exact, the first reading is both ends
                self._ct = a + a
                self._p_start = p0
            else:
                # final sensitivities of the previous reading: dz_n/dp = HALF_RG pco,
                # dz_n/dTv = ct (its slope's share of the humidity bias: ct slope)
                pco = (tm2 - self._tm2) / p0
                ct = self._ct + a
                self._var_done += ct * ct * self._s2 + pco * pco * self._spk2
                self._sum_p += pco
                self._sum_rh += ct * self._slope
                self._ct = a
            self._tm2 = tm2
            if first or slope != self._slope:
                sr = slope * self.sigma_rh_pct
                self._s2 = self._st2 + sr * sr
        self._slope = slope

        # ---- 4. events
        bits = 0
        ph = self.phase
        if first:
            self.max_gph_m = g
            self._env_g = g
            self._max_time = self.time_s
            self._max_p = p
            self._min_gph = g
            self._launch_gph = g + self.launch_m
            bits |= self._tropopause(g, t, p)
            lvl = 0
            while lvl < 16 and MANDATORY_PA[lvl] > p:
                lvl += 1
            self._lvl = lvl
            if lvl < 16 and MANDATORY_PA[lvl] == p:
                bits |= self._levels(p, p, g, g, t, t)
        else:
            if ph < PH_DESCENT:
                if self._lvl < 16 and MANDATORY_PA[self._lvl] >= p:
                    bits |= self._levels(p0, p, s, g, t0, t)
                if g > self._env_g:
                    bits |= self._tropopause(g, t, p)
            if g > self._env_g:
                self._env_g = g
            # The peak is the higher of the lower ends of consecutive pairs: a
            # reading counts only once the next one is at least as high as it,
            # or it is the lower of the pair. One glitched reading (a pressure
            # dropout that passes the rate check, e.g. with no time stamps)
            # then never becomes the "highest point" that a false burst would
            # be measured from. Costs at most one reading's rise at the top.
            pk = s if s < g else g
            if pk > self.max_gph_m:
                self.max_gph_m = pk
                if s < g:
                    self._max_time = time0
                    self._max_p = p0
                else:
                    self._max_time = self.time_s
                    self._max_p = p
                self._burst_line = pk - self.burst_drop_m
                self._burst_n = 0
            if ph == PH_WAIT:
                if g < self._min_gph:
                    self._min_gph = g
                    self._launch_gph = g + self.launch_m
                elif g >= self._launch_gph:
                    self.phase = PH_ASCENT
                    self.launch_time_s = self.time_s
                    self._burst_line = self.max_gph_m - self.burst_drop_m
                    self._burst_n = 0
                    bits |= EV_LAUNCH
            elif ph == PH_ASCENT:
                if g <= self._burst_line:
                    self._burst_n += 1
                    if self._burst_n >= self.burst_readings:
                        self.phase = PH_DESCENT
                        self.burst_gph_m = self.max_gph_m
                        self.burst_time_s = self._max_time
                        self.burst_p_pa = self._max_p
                        bits |= EV_BURST
                else:
                    self._burst_n = 0
            elif ph == PH_DESCENT and time_s is not None:
                if self._land_lo <= p <= self._land_hi:
                    if ts - self._land_t >= self.landing_s:
                        self.phase = PH_LANDED
                        bits |= EV_LANDED
                else:   # a new reference reading
                    self._land_lo = p - self.landing_tol_pa
                    self._land_hi = p + self.landing_tol_pa
                    self._land_t = ts
        if bits and self.on_event is not None:
            self.on_event(self, bits)
        return bits

    # ------------------------------------------------------------ helpers
    def _num(self, x, name, unit):
        # a finite float from an int or float; anything else is rejected
        if isinstance(x, float):
            v = x
        elif isinstance(x, int) and not isinstance(x, bool):
            v = float(x)
        else:
            v = _NAN
        if v != v or v == INF or v == NINF:   # comparisons allocate nothing
            self._bad("number", 0, name, quote(x), unit)
        return v

    def _bad(self, reason, i, *args):
        # count the rejection and raise ReadingError(message i % args, reason).
        # The messages are one text, "|"-separated: on MicroPython every string
        # constant with a space is an object in RAM for the module's lifetime,
        # one text is one object (its characters stay in flash with ROMFS or
        # frozen bytecode); split only here, when a reading is rejected.
        msg = ("%s=%s is not a finite number; pass one in %s"          # 0 name, value, unit
               "|%s=%s outside %g..%g %s%s"                              # 1 name, value, lo, hi, unit, "; hint"
               "|rh_pct=%s outside %g..%g %%; percent, not a 0..1 fraction (None if unknown)"
               "|time_s=%s before the previous %r s; time must not decrease "
               "(clock reset? new Column)"                               # 3
               "|gps_m=%s (ellipsoidal): %s"                             # 4
               "|gps_m=%s outside %g..%g m; above sea level; ellipsoidal? set geoid_undulation_m"
               "|rh_pct=%s at t_k=%r, p_pa=%r: %s"                       # 6
               "|rh_pct=None: no mixing ratio to hold (%s); pass rh_pct or set dry_fallback=True"
               "|rh_pct=None: held mixing ratio %r outside 0..1 kg/kg; pass rh_pct or set "
               "dry_fallback=True"                                       # 8
               "|virtual temperature %r (t_k=%r, p_pa=%r) outside %g..%g K; check the units"
               "|t_k=%s jumps %+.1f K from %r K, over the %.1f K allowed; glitch? "
               "(max_t_step_k=None: no check)"                           # 10
               "|time_s=%s repeated but the column moved %.3g gpm; time must increase"
               "|p_pa=%s gives %.1f m/s over %.3g s, beyond max_rate_m_s=%g; glitch, or "
               "wrong unit/time").split("|")[i] % args                   # 12
        self.rejected += 1
        raise ReadingError(msg, reason)

    def _nodes(self, g, guess=_NAN):
        # exact geometric height h at g (tinygeo.geometric_height, with the
        # series evaluated once for the column's latitude: potential.height_series;
        # from a guess within a few mm, one Newton step: potential.newton_step)
        # and the quadratic in gph through it and the gph of h + D and h + 2D
        # (potential.gph_series); see "Geometric height". Returns the tuple
        # (g, h, k1, k2, lo, hi) and writes nothing.
        if not GPH_MIN_M <= g <= GPH_MAX_M:
            return (g, _NAN, _NAN, _NAN, g, g)
        c = self._pc
        a = self.ellipsoid.a_m
        if guess == guess:
            h = newton_step(g, guess, c, a)
        else:
            h = height_series(g, c, a)
        d = _NODE_D
        if h + 2 * d > GPH_MAX_M:
            d = -d
        ga = gph_series(h + d, c, a)
        gb = gph_series(h + 2 * d, c, a)
        sa = d / (ga - g)               # divided differences of h over gph (Newton form)
        k2 = (d / (gb - ga) - sa) / (gb - g)
        return (g, h, sa - k2 * (ga - g), k2, g - _NODE_W, g + _NODE_W)

    def _levels(self, p0, p, g0, g, t0, t):
        # report every mandatory level in [p, p0) not reported yet (ascent only)
        bits = 0
        cb = self.on_event
        lvl = self._lvl
        while lvl < 16 and MANDATORY_PA[lvl] >= p:
            if bits and cb is not None:
                cb(self, EV_LEVEL)   # the lower level crossed by this same reading
            lev = MANDATORY_PA[lvl]
            if p0 == p:
                f = 0.0
            else:
                f = ln_ratio(p0, lev) / ln_ratio(p0, p)
            self.level_p_pa = lev
            self.level_gph_m = g0 + f * (g - g0)
            self.level_t_k = t0 + f * (t - t0)
            gl = self.level_gph_m
            if self._n_lo <= gl <= self._n_hi and self._n_h == self._n_h:
                # one Newton step from the node quadratic (a few mm off)
                d = gl - self._n_g
                self.level_height_m = newton_step(gl, self._n_h + d * (self._n_k1 + d * self._n_k2),
                                              self._pc, self.ellipsoid.a_m)
            elif GPH_MIN_M <= gl <= GPH_MAX_M:
                self.level_height_m = height_series(gl, self._pc, self.ellipsoid.a_m)
            else:
                self.level_height_m = _NAN
            lvl += 1
            self._lvl = lvl
            bits = EV_LEVEL
        return bits

    def _tropopause(self, g, t, p):
        # one new envelope point (g above every earlier reading); O(1) search,
        # see the module docstring for the rule and why one candidate suffices
        st = self._tp_state
        if st == 3 or (st == 0 and p > self.tropopause_max_p_pa):
            return 0
        th = t + WMO_LAPSE_K_PER_GPM * g
        if st != 0:
            if g > self._tp_top:
                if st == 2 or th >= self._tp_th:
                    self._tp_state = 3
                    self.tropopause_p_pa = self._tp_p
                    self.tropopause_gph_m = self._tp_g
                    self.tropopause_t_k = self._tp_t
                    return EV_TROPOPAUSE
            elif th >= self._tp_th:
                self._tp_state = 2
                return 0
        # no candidate, or it was just rejected by this point: this point is the next one
        if p <= self.tropopause_max_p_pa:
            self._tp_state = 1
            self._tp_g = g
            self._tp_top = g + WMO_DEPTH_GPM
            self._tp_th = th
            self._tp_p = p
            self._tp_t = t
        else:
            self._tp_state = 0
        return 0

    # ------------------------------------------------------------ uncertainty
    @property
    def sigma_random_m(self):
        """Random part of the 1-sigma height uncertainty, m (gpm), nan before
        the first reading or with track_sigma=False."""
        if self.count == 0 or not self.track_sigma:
            return _NAN
        x = self._tm2 / self.p_pa               # -dz/dp at the latest reading, over K/2
        v = self._var_done + self._ct * self._ct * self._s2 + x * x * self._spk2
        return math.sqrt(v)

    @property
    def sigma_bias_m(self):
        """Systematic part of the 1-sigma height uncertainty, m (gpm)."""
        if self.count == 0 or not self.track_sigma:
            return _NAN
        # (Rd/g0) ln(p0/p) dT: the sum of dz/dTv over all readings telescopes
        bt = 2 * half_k_ln(self._p_start, self.p_pa) * self.bias_t_k
        bh = (self._sum_rh + self._ct * self._slope) * self.bias_rh_pct
        bp = HALF_RG * (self._sum_p - self._tm2 / self.p_pa) * self.bias_p_pa
        return math.sqrt(bt * bt + bh * bh + bp * bp + self._var_anchor)

    @property
    def sigma_m(self):
        """Total 1-sigma height uncertainty, m (gpm): random and systematic
        parts added in squares."""
        r = self.sigma_random_m
        # the systematic variance, as in sigma_bias_m
        bt = 2 * half_k_ln(self._p_start, self.p_pa) * self.bias_t_k
        bh = (self._sum_rh + self._ct * self._slope) * self.bias_rh_pct
        bp = HALF_RG * (self._sum_p - self._tm2 / self.p_pa) * self.bias_p_pa
        return math.sqrt(r * r + (bt * bt + bh * bh + bp * bp + self._var_anchor))

    # ------------------------------------------------------------ GPS
    def reanchor_gps(self, sigma_gps_m=10):
        """Move the column so that the latest reading sits at its GPS height;
        return the shift applied, m (the former -gps_diff_m).

        Needs a gps_m with the latest accepted reading (TinygeoError
        otherwise). Every live height moves by the same geopotential shift
        (gph_m, max_gph_m and the burst, launch and tropopause-search
        references); events already reported keep their values. The
        uncertainty restarts at this reading with sigma_gps_m (m, 1-sigma,
        default 10 m, a typical GPS vertical error; common practice) as a
        systematic part. Never called by the column itself.
        """
        from ._column_rare import reanchor_gps
        return reanchor_gps(self, sigma_gps_m)

    # ------------------------------------------------------------ checkpoint
    def to_bytes(self):
        """The whole column (settings and state) as a checkpoint blob, bytes
        (CHECKPOINT_BYTES long; layout in the module docstring)."""
        from ._column_rare import to_bytes
        return to_bytes(self)

    @classmethod
    def from_bytes(cls, blob, on_event=None):
        """A Column restored from a to_bytes() blob; continues bit-identically.

        Raises CheckpointError (nothing restored) for a blob that is not
        bytes, truncated, too long, of another version, corrupted (CRC-32
        mismatch) or holding impossible settings.
        """
        from ._column_rare import from_bytes
        return from_bytes(cls, blob, on_event)

    @property
    def _ell(self):
        # the ellipsoid's checkpoint code (a property: one attribute fewer
        # in every Column's dict)
        return 0 if self.ellipsoid is WGS84 else 1

    def __repr__(self):
        from ._column_rare import __repr__
        return __repr__(self)

