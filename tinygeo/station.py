"""A fixed station or a moored buoy: averaged pressure, sea-level pressure,
QNH, the 3-hour tendency and its characteristic, the 24-hour change, dew
point, and quality control of the readings, from a stream of
pressure/temperature/humidity readings.

``Station`` keeps O(1) state: the sums of the average being built, the
latest readings for the checks, and one fixed ring of completed averages
long enough for 24 hours, preallocated in the constructor (``array('d')``;
a list built once where the firmware lacks ``array``). Nothing grows with
the number of readings. The formulas come from the core modules' kernels,
called after ``feed`` has checked a reading once: tinygeo.sealevel (the
sea-level reduction), tinygeo.highsite (the isobaric surface), tinygeo.standard (QNH, the
plausibility of a pressure for the station's height), tinygeo.moisture
(virtual temperature, dew point).

Logger loop (a sketch; ``sensor`` is your driver)::

    from tinygeo.station import Station, EV_AVERAGE
    from tinygeo.errors import ReadingError

    st = Station(3.5, 54.2)                 # barometer 3.5 m above the water line
    while True:
        r = sensor.read()
        try:
            bits = st.feed(r.p_pa, r.t_k, r.rh_pct, r.time_s)
        except ReadingError as e:
            log("rejected %s: %s" % (e.reason, e))     # the station is unchanged
            continue
        if bits & EV_AVERAGE:
            report(st.time_s, st.mslp_pa, st.tendency_3h_pa, st.tendency_code, st.flags)

The contract
------------
``Station(height_m, lat_deg, average_s=600.0, ice=False, min_readings=1,
stuck_readings=60, max_p_step_pa=50, max_p_rate_pa_s=1, max_t_step_k=3,
max_t_rate_k_s=0.01, max_rh_step_pct=10, max_rh_rate_pct_s=0.05,
guard_m=2000, steady_pa=10, max_gap_s=1800, mean12=False, iso_p_pa=None,
takeover_readings=3, on_event=None)``

Note the order: the barometer's height first, then the latitude (the
column, Column(lat_deg, start_height_m), has them the other way round);
passing them by keyword, Station(height_m=3.5, lat_deg=54.2), avoids a
swap that no check can see (both are plausible numbers).

Site
- height_m: the barometer's height above mean sea level, m, -500..5000 (a
  sea buoy: above the water line; a lake or river: the water's elevation
  above sea level plus the mast). It is the height the pressure is reduced
  from, and the elevation of QNH.
- lat_deg: latitude, degrees, -90..90: height_m is converted once to
  geopotential height with tinygeo's normal gravity (geopotential_height).
- ice: relative humidity with respect to ice at and below 0 degC (default:
  to water, as tinygeo.moisture).

Averages
- average_s: the length of an average, s: a whole number of seconds from 60
  to 3600 that divides 3 hours (10800 s), so that 3, 12 and 24 hours are
  whole numbers of averages: 60, 120, 300, 600 (default), 900, 1800, 3600...
  Averages are aligned to the clock of time_s: the average of 600 s holds
  the readings with time_s in [n 600, (n + 1) 600) (10:00:00 to 10:09:59
  for seconds since midnight), and completes when the first accepted
  reading after its end arrives (time_s attribute: its end). 10 minutes is
  the averaging period WMO recommends for pressure in reports (WMO-No. 8,
  Vol. I, Ch. 3, from memory); hourly readings need average_s=3600.
- min_readings: readings of a quantity, 1..100000, that an average needs;
  with fewer the quantity is nan in that average (FL_FEW). For a 1 Hz
  barometer on a buoy, half the readings an average should hold (300 for
  600 s) keeps the heave out of short averages.

Checks (a reading failing one raises ReadingError; see "Checks")
- max_p_step_pa, max_p_rate_pa_s: a pressure may differ from the latest
  accepted one by at most max_p_step_pa + max_p_rate_pa_s dt (dt the time
  since it), Pa 0..100000 (None: no check) and Pa/s 0..1000. Defaults 50 Pa
  (0.5 hPa, of the order of the step limits in WMO guidance on the quality
  control of automatic weather station data, from memory; above the
  reading-to-reading heave of a buoy in a regular sea of 8 m waves of 8 s,
  about 40 Pa in 1 s; an irregular sea of 8 m significant height has single
  waves of up to about twice that, which step a 1 Hz reading by up to about
  80 Pa: a review measured hundreds of rejections in 6 hours and FL_TAKEOVER
  on every average there, with the averages still right within 0.5 Pa; set
  100 Pa for buoys in storms) and 1 Pa/s (36 hPa/h, beyond the fastest changes at a
  fixed point in intense tropical cyclones and squall lines; common
  practice).
- max_t_step_k, max_t_rate_k_s: the same for temperature, K 0..100 (None: no
  check) and K/s 0..10; defaults 3 K (WMO AWS quality-control guidance,
  from memory) and 0.01 K/s (36 K/h; common practice).
- max_rh_step_pct, max_rh_rate_pct_s: the same for relative humidity
  against the latest reading that had one, % 0..200 (None: no check) and
  %/s 0..100; defaults 10 % (WMO AWS guidance, from memory) and 0.05 %/s
  (common practice).
  Because the allowance grows with the time since the latest accepted
  reading, a genuine jump larger than the step is accepted after at most
  (jump - step)/rate seconds: the checks reject spikes and never lock the
  station for good. A bad FIRST reading is accepted (nothing to compare
  with) and costs at most that many seconds of rejections.
- guard_m: a pressure whose standard pressure altitude (U.S. Standard
  Atmosphere 1976) lies more than guard_m from the barometer's geopotential
  height is refused, m, 100..20000 (None: no guard). Default 2000 m: real
  weather moves the pressure altitude of a place by about -600..+1300 m
  (sea-level pressures from 1085 to 870 hPa, the recorded extremes, from
  memory) and a cold high site by a few hundred metres more, while a
  pressure in hPa passed as Pa lies 30 km or more away.
- stuck_readings: a quantity whose value is the same in this many accepted
  readings in a row, 2..1000000 (None: no test), is stuck: the whole run is
  taken out of the average being built (a part of it in an average already
  completed stays there), and every further reading of that value too,
  until the value changes (FL_STUCK_P, FL_STUCK_T, FL_STUCK_RH). Default 60:
  an hour of 1-minute readings, the period of WMO's persistence test for
  automatic stations (minimum variability over 60 minutes, from memory),
  and a minute of a 1 Hz sensor whose noise and heave change its last digit
  every few readings. A coarse sensor read often (0.1 K every second) needs
  a larger value, or its steady readings are taken for stuck ones. A
  humidity of 100 % or more is never taken for stuck: saturated air (fog)
  holds a sensor there for hours (common practice).

Tendency
- steady_pa: the change within which a part of the 3-hour trace counts as
  steady for the characteristic, Pa, 0..1000 (default 10 Pa: one unit of the
  tendency's report in tenths of hPa; common practice). It governs the
  shape parts (steady halves, peaks and troughs); the net change counts as
  "same" within 5 Pa whatever steady_pa is (see Tendency below).
- max_gap_s: the longest run of missing averages, s, 0..10800, inside the
  3-hour trace for which the characteristic is still given (default 1800:
  a turn of the trace that lasted less than half an hour can hide in such a
  gap; common practice). The tendency value itself needs only the two end
  averages (it is their difference).

High stations
- mean12: True: the sea-level reduction uses the mean of the latest
  average's temperature and that of the average 12 hours earlier (the
  12-hour mean temperature method of WMO practice, which takes the daily
  cycle of the station temperature out of the reduction; WMO-No. 8, Vol. I,
  Ch. 3, from memory); FL_NO_T12 and the latest temperature alone when that
  average is missing. Useful above about HIGH_STATION_M (800 m); harmless
  below. Needs a second ring of 12 hours of temperatures.
- iso_p_pa: the standard isobaric surface whose geopotential height
  (iso_gph_m) is given, Pa, 50000..100000; None (default): the surface of
  tinygeo.highsite.standard_surface_pa(height_m) for stations at or above
  800 m (850 hPa below 2300 m, 700 hPa below 3700 m, 500 hPa above), none
  below.
- on_event: callable(station, bits) called after a feed that raised events.

``feed(p_pa, t_k, rh_pct=None, time_s=None) -> int`` adds one reading and
returns the event bits it caused (0 = none). p_pa: pressure at the
barometer, Pa, 40000..115000; t_k: air temperature, K, 180..340; rh_pct:
relative humidity, %, -3..103, or None; time_s: time stamp in seconds, any
origin (int or float), REQUIRED. A rejected reading raises
tinygeo.errors.ReadingError with ``.reason`` one of 'number', 'pressure',
'temperature', 'humidity', 'time', and changes nothing but ``rejected``.

Attributes (of the latest completed average; nan, or None for the code,
until known)
  time_s: the end of the latest average, in the clock of the time stamps.
  p_pa: mean station pressure over the average, Pa (heave and gusts
    averaged out: a buoy's barometer rises and falls with the waves, and the
    pressure with it by rho g, about 12 Pa per metre).
  t_k, rh_pct: mean temperature and humidity; dew_point_k: the dew point
    (frost point with ice=True below 0 degC) of those means
    (tinygeo.moisture.dew_point_from_rh), K.
  mslp_pa: sea-level pressure, Pa (see "Sea level").
  qnh_pa: QNH for the barometer's height as the elevation, Pa
    (tinygeo.sealevel.qnh: the standard atmosphere, no actual temperature;
    unrounded). NOT an aviation altimeter setting: those come from the
    aerodrome's own calibrated, certified instruments and procedures.
  iso_p_pa, iso_gph_m: the standard isobaric surface (Pa, None if none) and
    its geopotential height, gpm (see "High stations").
  tendency_3h_pa: p_pa minus the average 3 hours earlier, Pa.
  tendency_code: the characteristic of pressure tendency, 0..8 (WMO code
    table 0200; see "Tendency"), or None.
  change_24h_pa: p_pa minus the average 24 hours earlier, Pa.
  flags: the FL_* bits of the latest average (below).
  gap_s: the missing time just before the latest average, s (0: none; stops
    at COUNT_MAX, 34 years).
  average_readings: the accepted readings that fell in the latest average
    (at most COUNT_MAX: a reading beyond that in one average is refused as
    'time', a clock that is stuck).
  count, rejected: readings accepted and rejected (stop at COUNT_MAX).
  averages, missing: averages completed, and averages missing in gaps (stop
    at COUNT_MAX).
  Every setting is an attribute of the same name.

Events (bits returned by feed): EV_AVERAGE 1 (an average completed: the
attributes above are new), EV_FLAGS 2 (its flags differ from the previous
average's), EV_GAP 4 (averages are missing just before it: gap_s),
EV_RESTART 8 (a run of readings took over and the station started afresh
from this reading; see "Recovery").

Flags: FL_STUCK_P 1, FL_STUCK_T 2, FL_STUCK_RH 4 (stuck readings taken out
of this average), FL_GAP 8 (averages missing just before this one),
FL_TREND_GAP 16 (the station has run for 3 hours but the tendency or its
characteristic is unknown: an end average or the pressure is missing, or
the trace has a gap longer than max_gap_s), FL_NO_T12 32 (mean12 set but no
temperature 12 hours earlier: the reduction used the latest one), FL_FEW 64
(a quantity had fewer than min_readings readings: nan in this average),
FL_TAKEOVER 128 (readings that contradicted the latest accepted one by a
step took over during this average: a sensor's real jump), FL_CLOCK_HELD
256 (readings stamped before the latest accepted one, by no more than the
clock step, were taken at the latest stamp in this average; see "Recovery"),
FL_CLOCK_STUCK 512 (stuck_readings readings in a row or more had the same
time stamp in this average: a clock that stopped puts everything into one
average), FL_MSLP_ODD 1024 (the sea-level pressure lies outside 870..1085
hPa, beyond the lowest and highest ever observed (WMO records, from memory):
a wrong height_m, in feet say, is the likely cause). An average whose
readings were all stuck still completes, with nan values and its FL_STUCK_*
flags (a frozen sensor driver shows as such, not as a gap).

Recovery
--------
Clock steps: the clock step is max_gap_s + average_s (2400 s by default: the
longest gap the tendency bridges, plus the average it ends in). A reading
stamped before the latest accepted one by no more than that is taken at the
latest stamp (FL_CLOCK_HELD) until the clock passes it: a clock corrected
back by a few minutes, or the readings after one stamp that ran ahead, keep
the station and its 24 hours of history. A reading stamped further back, or
more than the clock step after the latest accepted one (a stamp far ahead,
or a long outage), is rejected as 'time'.

A reading that goes back in time beyond the clock step, jumps ahead beyond
it, or steps beyond the allowance is rejected, and remembered: readings in a row that contradict the latest accepted one
and agree with each other (each one with the one before it, by the same
checks) form a run; after takeover_readings (3, 2..100) of them the run is
followed, so no station locks. A run that began by going back in time (a
clock set back) or that outnumbers what the station accepted (a bad first
reading) restarts the station from its latest reading (EV_RESTART: the
averages, the tendency and its history start afresh; count, rejected,
averages and missing go on); a run that began by jumping ahead (the first readings after a long
outage) goes on from its latest reading, the averages in between missing
(FL_GAP; a restart if the jump is beyond 2**30 averages); a run of steps
(a sensor that really jumped) is accepted from its latest reading on into
the average being built (FL_TAKEOVER). A single
bad reading never forms a run: the next good reading agrees with the latest
accepted one and clears it. Checkpoints keep the run.

Averaging in float32
--------------------
A float32 sum of 600 pressures of 100 000 Pa reaches 6e7, where a float32
step is 4 Pa: each addition rounds by up to 2 Pa (by up to 16 Pa, always
downwards, with the truncating 30-bit floats of older MicroPython builds).
Measured on the float32/30-bit emulator (tests/test_station.py), the mean
of such a naive sum is off by 0.04 Pa in float32 and 4.2 Pa with truncating
30-bit floats. So each average sums the DEVIATIONS from its first reading
(exact differences, a few tens of Pa with heave), and the pressure sum is
compensated (classic Kahan summation, Kahan 1965, Comm. ACM 8(1) 40): the
mean is then within half a float32 step of the exact mean of the readings
(measured 0.0039 Pa; one step at 1e5 Pa is 0.0078 Pa) and within one 30-bit
step (measured 0.027 Pa; a step is 0.031 Pa).

Sea level
---------
mslp_pa = tinygeo.sea_level_pressure(p_pa, t_k, height_m, rh_pct, lat_deg,
ice) of the latest average: the hypsometric reduction through a fictitious
column of mean virtual temperature Tv(station) + 0.0065 K/gpm H/2 (WMO-No. 8,
Vol. I, Ch. 3, reduction of pressure, from memory; see tinygeo.sealevel).
With mean12 the station temperature in it is the mean of the latest average
and the one 12 hours earlier, and the virtual-temperature increment of the
latest average is added to it. Above about 800 m any sea-level pressure is
a convention more than a measurement; WMO practice then reports the height
of a standard isobaric surface: iso_gph_m = tinygeo.isobaric_height(p_pa,
t_k, height_m, iso_p_pa, rh_pct, lat_deg, ice) (the same column, extended to
the surface with the exact constant-lapse thickness).

Tendency
--------
tendency_3h_pa is the difference of two averages 3 hours apart, given when
both exist (no gap inside matters for it). The characteristic (WMO-No. 306
Manual on Codes, code table 0200, from memory) names the shape of the trace
over the 3 hours:
  0 increasing, then decreasing; same or higher than 3 hours ago
  1 increasing, then steady; or increasing, then increasing more slowly; higher
  2 increasing (steadily or unsteadily); higher
  3 decreasing or steady, then increasing; or increasing, then increasing
    more rapidly; higher
  4 steady; same as 3 hours ago
  5 decreasing, then increasing; same or lower
  6 decreasing, then steady; or decreasing, then decreasing more slowly; lower
  7 decreasing (steadily or unsteadily); lower
  8 steady or increasing, then decreasing; or decreasing, then decreasing
    more rapidly; lower
The table defines the classes in words; the rule that decides them from the
averages is this module's own (tendency_code): with a, b, c the averages 3
hours ago, at the middle of the trace (the nearest one present) and now,
D = c - a, s = steady_pa:
- same when |D| < 5 Pa (the change rounds to 0.0 hPa in a report in tenths
  of hPa), higher when D >= 5 Pa, lower when D <= -5 Pa;
- a peak: the highest average lies more than s above both ends; a trough:
  the lowest lies more than s below both; when both, the later one counts;
- the changes of the two halves, h1 = b - a and h2 = c - b, each scaled to
  half the 3 hours; 'steady' is within s; 'more slowly' is under half the
  rate of the first half, 'more rapidly' over twice it.
Higher: a peak -> 0, a trough -> 3, h1 > s and h2 < h1/2 -> 1, h2 > s and
h2 > 2 h1 -> 3, else 2. Lower: the mirror image (a trough -> 5, a peak -> 8,
h1 < -s and h2 > h1/2 -> 6, h2 < -s and h2 < 2 h1 -> 8, else 7). Same: a
peak -> 0, a trough -> 5, else 4. The characteristic needs both ends, a
middle average and no run of missing averages longer than max_gap_s.

Checks
------
``feed`` checks the reading on its own (a number: int or float, not bool or
text; in range, with a hint for hPa given as Pa or Celsius as kelvin; the
pressure plausible for height_m), then against the latest accepted reading
(time must not go back; the steps above; see "Recovery" for clock steps). A
reading that would fall in an average COUNT_MAX averages or more after the
first one (34 years of 1-second averages; checkpoints keep the average's
number as an int32) restarts the station (EV_RESTART). Every check runs before anything
is changed: a rejected reading leaves the station exactly as it was, only
``rejected`` counts it, so a stream with bad readings interleaved gives
bit-identical results to the same stream without them. A clock set back is
held or, beyond the clock step, restarts the station after takeover_readings
readings (see "Recovery"); the only memory a rejected reading leaves is the
recovery run.

Checkpoint
----------
to_bytes() packs the settings, the state and the ring(s) in the frame of
tinygeo.checkpoint (magic b"TGST", version, length, doubles and int32s,
CRC-32); Station.from_bytes(blob) restores a station that continues
bit-identically. Refused (CheckpointError, nothing restored): a blob that is
not bytes, truncated, of another version, corrupted, or holding impossible
settings or state. Int time stamps are kept exact (the first one as two
int32 halves, the others relative to it). on_event is not stored.
"""
import math

from .sealevel import msl_tv, QNH_MIN_PA, QNH_MAX_PA
from .highsite import iso_tv
from .standard import pressure_at, altitude_at, BOTTOM_GPH_M
from .moisture import tv_rh, td_rh
from .errors import ReadingError, quote, real, INF, NINF

EV_AVERAGE = 1
EV_FLAGS = 2
EV_GAP = 4

FL_STUCK_P = 1
FL_STUCK_T = 2
FL_STUCK_RH = 4
FL_GAP = 8
FL_TREND_GAP = 16
FL_NO_T12 = 32
FL_FEW = 64
FL_TAKEOVER = 128
FL_CLOCK_HELD = 256
FL_CLOCK_STUCK = 512
FL_MSLP_ODD = 1024
MSLP_LO_PA = 87000.0
MSLP_HI_PA = 108500.0
"""The lowest and highest sea-level pressures observed (about 870 and 1084
hPa, WMO records; from memory), rounded outwards: FL_MSLP_ODD beyond them."""
EV_RESTART = 8

P_MIN_PA = 40000.0
P_MAX_PA = 115000.0
"""Accepted barometer pressures, Pa (tinygeo.sealevel's station range)."""
T_MIN_K = 180.0
T_MAX_K = 340.0
"""Accepted air temperatures, K (tinygeo.sealevel's range)."""
RH_TOL_PCT = 3
"""Relative humidity is accepted from -3 to 103 % (sensor noise; unchanged)."""
SAME_PA = 5
"""|3-hour change| below which the pressure is 'the same', Pa: it rounds to
0.0 hPa in a report in tenths of hPa."""
THREE_H_S = 10800
HALF_DAY_S = 43200
DAY_S = 86400
COUNT_MAX = 1073741823
"""2**30 - 1: counters stop here (MicroPython's small-int limit on 32-bit
boards, so a counter never allocates)."""

_NAN = float("nan")
_TS_MAX = 1 << 62     # int time stamps beyond +-2**62 s are refused (10**400 would overflow a float)
_TS_MIN = -_TS_MAX    # (both built once: a big int on 32-bit boards)


def tendency_code(trace_pa, steady_pa=10):
    """The characteristic of pressure tendency (WMO code table 0200), 0..8,
    of a 3-hour pressure trace; None if it cannot be decided.

    trace_pa: a sequence of at least 3 equally spaced pressures, Pa, from 3
              hours ago to now (nan for a missing one); both ends and one
              value strictly between them must be present.
    steady_pa: the change within which a part of the trace is steady, Pa.

    The rule is in the module docstring ("Tendency"); it is this module's
    own reading of the code table's definitions (WMO-No. 306 Manual on
    Codes, code table 0200, from memory). Station uses the same rule on its
    ring of averages.

    Example: tendency_code([101000.0, 100950.0, 100900.0, 100850.0]) -> 7.
    """
    n = len(trace_pa)
    if n < 3:
        return None
    st = _scan(trace_pa, n, 0, n - 1)
    if st is None:
        return None
    return _classify(st, steady_pa)


def _scan(ring, n, j0, k):
    # (a, b, c, hi, i_hi, lo, i_lo, i_mid, length, longest missing run) of the
    # trace ring[j0 % n .. k % n], or None when an end or every inner value
    # is missing
    a = ring[j0 % n]
    c = ring[k % n]
    if a != a or c != c:
        return None
    hi = NINF
    lo = INF
    ih = il = 0
    run = longest = 0
    i = j0
    while i <= k:
        v = ring[i % n]
        if v != v:
            run += 1
            if run > longest:
                longest = run
        else:
            run = 0
            if v > hi:
                hi = v
                ih = i
            if v < lo:
                lo = v
                il = i
        i += 1
    length = k - j0
    # the present value nearest the middle, strictly inside
    m = j0 + length // 2
    d = 0
    im = -1
    while d < length:
        if j0 < m - d < k and ring[(m - d) % n] == ring[(m - d) % n]:
            im = m - d
            break
        if j0 < m + d < k and ring[(m + d) % n] == ring[(m + d) % n]:
            im = m + d
            break
        d += 1
    if im < 0:
        return None
    return (a, ring[im % n], c, hi, ih - j0, lo, il - j0, im - j0, length, longest)


def _classify(st, s):
    # code table 0200 from the scan (see "Tendency")
    a, b, c, hi, ih, lo, il, im, length, longest = st
    d = c - a
    top = a if a > c else c
    bot = a if a < c else c
    peak = hi - top > s
    trough = bot - lo > s
    half = length * 0.5
    h1 = (b - a) * half / im
    h2 = (c - b) * half / (length - im)
    if d >= SAME_PA:
        if peak and (not trough or ih > il):
            return 0
        if trough:
            return 3
        if h1 > s and h2 < 0.5 * h1:
            return 1
        if h2 > s and h2 > 2 * h1:
            return 3
        return 2
    if d <= -SAME_PA:
        if trough and (not peak or il > ih):
            return 5
        if peak:
            return 8
        if h1 < -s and h2 > 0.5 * h1:
            return 6
        if h2 < -s and h2 < 2 * h1:
            return 8
        return 7
    if peak and (not trough or ih > il):
        return 0
    if trough:
        return 5
    return 4


def _ring(n):
    # n floats, all nan, allocated once: 8 bytes each in an array('d'); a
    # list (a pointer and a float object each) where the firmware has no array
    try:
        from array import array
    except ImportError:  # pragma: no cover - firmware without the array module
        return [_NAN] * n
    return array("d", [_NAN] * n)


# --- checkpoint layout ----------------------------------------------------------
# settings (the constructor is called with them on restore); None -> nan, 0
_CFG_F = ("height_m", "lat_deg", "average_s", "max_p_step_pa", "max_p_rate_pa_s",
          "max_t_step_k", "max_t_rate_k_s", "max_rh_step_pct", "max_rh_rate_pct_s", "guard_m",
          "steady_pa", "max_gap_s", "_iso_set")
_CFG_I = ("ice", "min_readings", "_stuck_set", "mean12", "takeover_readings")
# state: the latest average's results and the sums of the average being built
_ST_F = ("p_pa", "t_k", "rh_pct", "dew_point_k", "mslp_pa", "qnh_pa", "iso_gph_m",
         "tendency_3h_pa", "change_24h_pa", "_rp", "_sp", "_cp", "_rt", "_st", "_rr", "_sr",
         "_lp", "_lt", "_lrh", "_rn_p", "_rn_t", "_rn_rh", "_dtl", "_rn_dt")
# time stamps as given (stored relative to the first one when it is an int)
_TS_F = ("_ts", "_tsrh", "_rn_ts", "_rn_tsrh")
_ST_I = ("count", "rejected", "averages", "missing", "flags", "_code", "gap_s",
         "average_readings", "_k", "_kring", "_klast", "_np", "_nt", "_nr", "_sflags",
         "_runp", "_runt", "_runr", "_inp", "_int", "_inr", "_nslot", "_t0_int", "_t0_hi",
         "_t0_lo", "_run", "_rn_time", "_runts")
_RESTORE = ("count 0 1073741823;rejected 0 1073741823;averages 0 1073741823;"
            "missing 0 1073741823;flags 0 2047;_code -1 8;gap_s 0 1073741823;"
            "average_readings 0 1073741823;"
            "_k -1 1073741823;_kring -1 1073741823;_klast -1 1073741823;_np 0 1073741823;"
            "_nt 0 1073741823;_nr 0 1073741823;_sflags 0 2047;_t0_hi -1073741824 1073741823;"
            "_runp 0 1073741823;_runt 0 1073741823;_runr 0 1073741823;_inp 0 1073741823;"
            "_int 0 1073741823;_inr 0 1073741823;_nslot 0 1073741823;"
            "p_pa 40000 115000 n;t_k 180 340 n;rh_pct -3 103 n;mslp_pa 0 1000000 n;"
            "_lp 40000 115000 n;_lt 180 340 n;_lrh -3 103 n;_run 0 99;_rn_time 0 2;"
            "_rn_p 40000 115000 n;_rn_t 180 340 n;_rn_rh -3 103 n;dew_point_k 100 350 n;"
            "qnh_pa 0 200000 n;iso_gph_m -100000 100000 n;tendency_3h_pa -75000 75000 n;"
            "change_24h_pa -75000 75000 n;_dtl 0 1e19;_rn_dt 0 1e19;_runts 0 1073741823;_rp 40000 115000 n;_rt 180 340 n;_rr -3 103 n")
_MAGIC = b"TGST"
_VERSION = 3


class Station:
    """Averages, sea-level pressure, tendency and quality control for a fixed
    station or a buoy (see the module docstring for every option, attribute,
    event, flag and rule)."""

    p_pa: float; t_k: float; rh_pct: float; dew_point_k: float; mslp_pa: float
    qnh_pa: float; iso_gph_m: float; tendency_3h_pa: float; change_24h_pa: float
    _rp: float; _sp: float; _cp: float; _rt: float; _st: float; _rr: float; _sr: float
    _lp: float; _lt: float; _lrh: float

    def __init__(self, height_m, lat_deg, average_s=600.0, ice=False, min_readings=1,
                 stuck_readings=60, max_p_step_pa=50, max_p_rate_pa_s=1, max_t_step_k=3,
                 max_t_rate_k_s=0.01, max_rh_step_pct=10, max_rh_rate_pct_s=0.05,
                 guard_m=2000, steady_pa=10, max_gap_s=1800, mean12=False, iso_p_pa=None,
                 takeover_readings=3, on_event=None):
        from .errors import check_range, check_lat, check_flag, RangeError
        from .sealevel import HEIGHT_MIN_M, HEIGHT_MAX_M
        from .highsite import standard_surface_pa, ISO_MIN_PA, ISO_MAX_PA
        from .potential import geopotential_height
        self.height_m = check_range("height_m", height_m, HEIGHT_MIN_M, HEIGHT_MAX_M, "m",
                                    "barometer height above mean sea level (buoy: above the "
                                    "water line) in metres")
        self.lat_deg = check_lat(lat_deg)
        avg = check_range("average_s", average_s, 60, 3600, "s", "length of an average in seconds")
        if avg != int(avg) or THREE_H_S % int(avg):
            raise RangeError("average_s=%s must be whole seconds dividing 10800 s (3 h): 60, 120, "
                             "300, 600, 900, 1800, 3600 ..." % quote(average_s))
        self.average_s = avg
        self._avg = int(avg)
        self.ice = check_flag("ice", ice)
        self.min_readings = _count("min_readings", min_readings, 1, 100000)
        self.stuck_readings = None if stuck_readings is None else \
            _count("stuck_readings", stuck_readings, 2, 1000000)
        self._stuck_set = 0 if stuck_readings is None else self.stuck_readings
        self.max_p_step_pa = None if max_p_step_pa is None else \
            check_range("max_p_step_pa", max_p_step_pa, 0, 100000, "Pa")
        self.max_p_rate_pa_s = check_range("max_p_rate_pa_s", max_p_rate_pa_s, 0, 1000, "Pa/s")
        self.max_t_step_k = None if max_t_step_k is None else \
            check_range("max_t_step_k", max_t_step_k, 0, 100, "K")
        self.max_t_rate_k_s = check_range("max_t_rate_k_s", max_t_rate_k_s, 0, 10, "K/s")
        self.max_rh_step_pct = None if max_rh_step_pct is None else \
            check_range("max_rh_step_pct", max_rh_step_pct, 0, 200, "%")
        self.max_rh_rate_pct_s = check_range("max_rh_rate_pct_s", max_rh_rate_pct_s, 0, 100,
                                             "%/s")
        self.guard_m = None if guard_m is None else \
            check_range("guard_m", guard_m, 100, 20000, "m")
        self.steady_pa = check_range("steady_pa", steady_pa, 0, 1000, "Pa")
        self.max_gap_s = check_range("max_gap_s", max_gap_s, 0, THREE_H_S, "s")
        self.mean12 = check_flag("mean12", mean12)
        self.takeover_readings = _count("takeover_readings", takeover_readings, 2, 100)
        self._iso_set = _NAN
        if iso_p_pa is not None:
            self._iso_set = check_range("iso_p_pa", iso_p_pa, ISO_MIN_PA, ISO_MAX_PA, "Pa",
                                        "a standard isobaric surface in Pa (85000, 70000 ...)")
            self.iso_p_pa = self._iso_set
        else:
            self.iso_p_pa = standard_surface_pa(self.height_m)
        if self.iso_p_pa is not None:
            from . import layers   # noqa: F401 (highsite.iso_tv's; loaded now, not in a feed)
        self.on_event = on_event
        # --- derived settings (built once, so that feed builds no float for them)
        self._gph = geopotential_height(self.height_m, self.lat_deg)
        if self.guard_m is None:
            self._p_lo = P_MIN_PA
            self._p_hi = P_MAX_PA
        else:
            # pressures whose standard pressure altitude lies within guard_m
            # of the barometer (pressure_at falls with height)
            g = self.guard_m
            self._p_lo = pressure_at(self._gph + g)
            lo = self._gph - g
            self._p_hi = pressure_at(lo) if lo >= BOTTOM_GPH_M else INF
        self._ps = INF if self.max_p_step_pa is None else self.max_p_step_pa
        self._ts_step = INF if self.max_t_step_k is None else self.max_t_step_k
        self._rs = INF if self.max_rh_step_pct is None else self.max_rh_step_pct
        self._stuck = 0 if self.stuck_readings is None else self.stuck_readings
        self._clock_s = self.max_gap_s + self._avg   # the clock step (see "Recovery")
        self._m3 = THREE_H_S // self._avg          # averages in 3 hours
        self._n = DAY_S // self._avg + 1            # ring: 24 hours and the latest
        self._n12 = HALF_DAY_S // self._avg + 1
        self._ring_p = _ring(self._n)
        self._ring_t = _ring(self._n12) if self.mean12 else None
        self._reset()

    def _reset(self):
        # the state of a station that has seen no reading
        nan = _NAN
        self.p_pa = self.t_k = self.rh_pct = self.dew_point_k = nan
        self.mslp_pa = self.qnh_pa = self.iso_gph_m = nan
        self.tendency_3h_pa = self.change_24h_pa = nan
        self._code = -1
        self.flags = 0
        self.gap_s = 0
        self.average_readings = 0
        self.count = self.rejected = self.averages = self.missing = 0
        self._t0 = None           # the first time stamp, as given
        self._phase = 0           # t0 modulo the average: slots align to the clock
        self._ts = None           # the latest accepted stamp, as given
        self._tsrh = None         # the stamp of the latest accepted humidity
        self._k = -1              # the slot of the average being built (from 0)
        self._kring = -1          # the latest slot written into the ring
        self._klast = -1          # the slot of the latest completed average
        # sums of the average being built: reference (its first reading),
        # sum of deviations (pressure: Kahan compensated), counts
        self._rp = self._sp = self._cp = nan
        self._rt = self._st = self._rr = self._sr = nan
        self._np = self._nt = self._nr = 0
        self._nslot = 0
        self._sflags = 0
        # stuck test: the latest accepted values, the length of their runs,
        # and how many of the run are in the average being built
        self._lp = self._lt = self._lrh = nan
        self._runp = self._runt = self._runr = 0
        self._inp = self._int = self._inr = 0
        self._t0_int = self._t0_hi = self._t0_lo = 0
        # the recovery memory: readings in a row that contradict the latest
        # accepted one (time back, a step) and agree with each other
        self._run = 0
        self._rn_time = 0
        self._rn_p = self._rn_t = self._rn_rh = nan
        self._rn_ts = self._rn_tsrh = None
        self._rn_dt = 0           # the run's latest step in time
        self._dtl = 0             # the latest step in time between accepted readings
        self._runts = 0           # readings in a row with the same stamp

    # ------------------------------------------------------------ results
    @property
    def tendency_code(self):
        """The characteristic of pressure tendency of the latest average (WMO
        code table 0200), 0..8, or None."""
        c = self._code
        return None if c < 0 else c

    @property
    def time_s(self):
        """The end of the latest completed average, in the clock of the time
        stamps (nan before the first one)."""
        t0 = self._t0
        if self._klast < 0 or t0 is None:
            return _NAN
        return t0 - self._phase + (self._klast + 1) * self._avg

    # ------------------------------------------------------------ feed
    def feed(self, p_pa, t_k, rh_pct=None, time_s=None):
        """Add one reading; return the event bits (EV_*) it caused, 0 if none.

        p_pa: pressure at the barometer, Pa, 40000..115000; t_k: air
        temperature, K, 180..340; rh_pct: relative humidity, %, -3..103, or
        None; time_s: time stamp, s (int or float), required. Raises
        ReadingError (``.reason``) and changes nothing but ``rejected``.
        """
        # 1. the values on their own
        p = self._num(p_pa, "p_pa", "Pa")
        if not P_MIN_PA <= p <= P_MAX_PA:
            from .errors import pressure_hint
            h = pressure_hint(p)
            self._bad("pressure", 1, "p_pa", quote(p_pa), P_MIN_PA, P_MAX_PA, "Pa",
                      "; " + h if h else "")
        t = self._num(t_k, "t_k", "K")
        if not T_MIN_K <= t <= T_MAX_K:
            from .errors import temperature_hint
            h = temperature_hint(t)
            self._bad("temperature", 1, "t_k", quote(t_k), T_MIN_K, T_MAX_K, "K",
                      "; " + h if h else "")
        rh = _NAN
        if rh_pct is not None:
            rh = self._num(rh_pct, "rh_pct", "%")
            if rh < -RH_TOL_PCT or rh > 100 + RH_TOL_PCT:
                self._bad("humidity", 2, quote(rh_pct))
        if time_s is None:
            self._bad("time", 3)
        ts = time_s
        if isinstance(ts, bool) or not isinstance(ts, int):
            ts = self._num(time_s, "time_s", "s")   # ints stay ints (exact at any size)
        if not _TS_MIN < ts < _TS_MAX:
            self._bad("number", 0, "time_s", quote(time_s), "s within +-2**62")
        if not self._p_lo <= p <= self._p_hi:
            from .errors import pressure_hint
            h = pressure_hint(p)
            self._bad("pressure", 4, quote(p_pa), altitude_at(p), self._gph, self.guard_m,
                      h or "wrong unit or height_m? (guard_m=None: no guard)")
        # 2. against the latest accepted reading; a reading that contradicts
        # it joins the recovery run, which takes over after takeover_readings
        # readings in a row (see "Recovery")
        restart = 0
        held = 0
        if self.count:
            if ts < self._ts and self._ts - ts <= self._clock_s:
                ts = self._ts      # a small clock step back: held (see "Recovery")
                held = 1
            if self._nslot >= COUNT_MAX and (ts - self._t0 + self._phase) // self._avg == self._k:
                # 2**30 readings in one average: a stuck clock (refused before
                # anything changes)
                self._bad("time", 8, quote(time_s))
            why = self._against(p, t, rh, ts, self._lp, self._lt, self._lrh, self._ts, self._tsrh)
            if why:
                restart = self._contradicts(why, p, t, rh, ts)
            else:
                self._run = 0
        if restart != 1 and self.count and \
                (ts - self._t0 + self._phase) // self._avg >= COUNT_MAX:
            restart = 1    # the average's number would leave what a checkpoint holds
        if restart == 1:
            # a clock set back, a bad first reading, or the end of the slot
            # numbers: start afresh from this reading (the counters go on)
            c, r, a, m = self.count, self.rejected, self.averages, self.missing
            run = self._rn_dt
            self._reset()
            self.count, self.rejected, self.averages, self.missing = c, r, a, m
            self._dtl = run
        # 3. accepted: into the average (closing the one before if this
        # reading starts a new one)
        if self.count == 0 or restart == 1:
            self._start(ts)
        k = ts - self._t0 + self._phase
        if isinstance(k, int):
            k = k // self._avg
        else:
            k = int(k // self._avg)
        bits = 0
        if k != self._k:
            if self._k >= 0:
                bits = self._close()
            self._open(k, p, t, rh)
        if restart == 2:
            # a sensor's real jump: flagged on the average it goes into
            self._sflags |= FL_TAKEOVER
        if held:
            self._sflags |= FL_CLOCK_HELD
        if self.count and restart != 1:
            self._dtl = ts - self._ts
            if ts == self._ts and not held:
                if self._runts < COUNT_MAX:
                    self._runts += 1
            else:
                self._runts = 1
        else:
            self._runts = 1
        if self._stuck and self._runts >= self._stuck:
            self._sflags |= FL_CLOCK_STUCK
        self._add(p, t, rh)
        self._ts = ts
        if rh == rh:
            self._tsrh = ts
        if self.count < COUNT_MAX:
            self.count += 1
        if self._nslot < COUNT_MAX:
            self._nslot += 1
        if restart == 1:
            bits |= EV_RESTART
        if bits and self.on_event is not None:
            self.on_event(self, bits)
        return bits

    def _against(self, p, t, rh, ts, lp, lt, lrh, lts, ltsrh, ahead=True):
        # None if the reading agrees with the reference reading (lp, lt, lrh
        # at stamps lts, ltsrh): time not going back, steps within the
        # allowance; else why not: the arguments of _bad
        dt = ts - lts
        if dt < 0:
            return ("time", 5, quote(ts), lts, self._clock_s)
        if ahead and dt > self._clock_s and dt > 2 * self._dtl and self.count >= 2:
            return ("time", 7, quote(ts), dt, lts, self._clock_s, self._dtl)
        d = p - lp
        if d > self._ps or d < -self._ps:
            allow = self._ps + self.max_p_rate_pa_s * dt
            if d > allow or d < -allow:
                return ("pressure", 6, "p_pa", quote(p), d, "Pa", dt, allow, "max_p_step_pa")
        d = t - lt
        if d > self._ts_step or d < -self._ts_step:
            allow = self._ts_step + self.max_t_rate_k_s * dt
            if d > allow or d < -allow:
                return ("temperature", 6, "t_k", quote(t), d, "K", dt, allow, "max_t_step_k")
        if rh == rh and ltsrh is not None:
            d = rh - lrh
            if d > self._rs or d < -self._rs:
                allow = self._rs + self.max_rh_rate_pct_s * (ts - ltsrh)
                if d > allow or d < -allow:
                    return ("humidity", 6, "rh_pct", quote(rh), d, "%", ts - ltsrh, allow,
                            "max_rh_step_pct")
        return None

    def _contradicts(self, why, p, t, rh, ts):
        # the reading contradicts the latest accepted one (why: how): it
        # joins the run if it agrees with the run's latest reading, else
        # starts one. Raises ReadingError until the run has
        # takeover_readings readings; then returns 1 when the station must
        # restart (a run started by time going back, or the station had no
        # more readings than the run), 2 when it goes on from this reading
        # (a real jump of a sensor: FL_TAKEOVER on the average it goes into)
        if self._run and not self._against(p, t, rh, ts, self._rn_p, self._rn_t, self._rn_rh,
                                           self._rn_ts, self._rn_tsrh, False):
            # (within a run, time may step ahead by any amount: sparse readings)
            self._run += 1
            self._rn_dt = ts - self._rn_ts
        else:
            self._run = 1
            # 1: began going back in time, 2: jumping ahead, 0: a step
            self._rn_time = (1 if why[1] == 5 else 2) if why[0] == "time" else 0
            self._rn_tsrh = None
            self._rn_dt = 0
        self._rn_p = p
        self._rn_t = t
        self._rn_rh = rh
        self._rn_ts = ts
        if rh == rh:
            self._rn_tsrh = ts
        if self._run < self.takeover_readings:
            self._bad(why[0], why[1], *why[2:])
        self._run = 0
        if self._rn_time == 1 or self.count <= self.takeover_readings:
            return 1
        if self._rn_time == 2:
            # after a long outage, or readings sparser than before: go on
            # with the averages in between missing, at the run's spacing
            self._dtl = self._rn_dt
            return 0
        return 2

    def _num(self, x, name, unit):
        # a finite float by the rule of tinygeo.errors.real, else rejected
        v = x if isinstance(x, float) else real(x)
        if v is None or v != v or v == INF or v == NINF:
            self._bad("number", 0, name, quote(x), unit)
        return v

    def _start(self, ts):
        # the first reading: the clock's origin and the slots' alignment
        self._t0 = ts
        self._phase = ts % self._avg
        t0i = isinstance(ts, int) and not isinstance(ts, bool) and -(1 << 62) < ts < (1 << 62)
        self._t0_int = 1 if t0i else 0
        self._t0_hi = (ts >> 32) if t0i else 0
        lo = (ts & 0xFFFFFFFF) if t0i else 0
        self._t0_lo = lo - (1 << 32) if lo & 0x80000000 else lo

    def _open(self, k, p, t, rh):
        # a new average, slot k; its first reading is the reference of its sums
        self._k = k
        self._rp = p
        self._rt = t
        self._rr = rh
        self._sp = self._cp = self._st = self._sr = 0.0
        self._np = self._nt = self._nr = 0
        self._nslot = 0
        self._sflags = 0
        self._inp = self._int = self._inr = 0

    def _add(self, p, t, rh):
        # one accepted reading into the sums, with the stuck test (see
        # stuck_readings): a run that reaches stuck_readings is taken out
        stuck = self._stuck
        # pressure (Kahan-compensated sum of deviations)
        if p == self._lp:
            if self._runp < COUNT_MAX:
                self._runp += 1
        else:
            self._runp = 1
            self._lp = p
        if stuck and self._runp >= stuck:
            self._sflags |= FL_STUCK_P
            if self._inp:
                y = -(self._inp * (p - self._rp)) - self._cp
                s = self._sp + y
                self._cp = (s - self._sp) - y
                self._sp = s
                self._np -= self._inp
                self._inp = 0
        else:
            y = (p - self._rp) - self._cp
            s = self._sp + y
            self._cp = (s - self._sp) - y
            self._sp = s
            self._np += 1
            self._inp = 1 if self._runp == 1 else self._inp + 1
        # temperature
        if t == self._lt:
            if self._runt < COUNT_MAX:
                self._runt += 1
        else:
            self._runt = 1
            self._lt = t
        if stuck and self._runt >= stuck:
            self._sflags |= FL_STUCK_T
            if self._int:
                self._st = self._st - self._int * (t - self._rt)
                self._nt -= self._int
                self._int = 0
        else:
            self._st = self._st + (t - self._rt)
            self._nt += 1
            self._int = 1 if self._runt == 1 else self._int + 1
        # humidity (when given)
        if rh != rh:
            return
        if self._rr != self._rr:
            self._rr = rh          # the first humidity of this average
        if rh == self._lrh and rh < 100.0:     # (saturation is not a stuck sensor)
            if self._runr < COUNT_MAX:
                self._runr += 1
        else:
            self._runr = 1
            self._lrh = rh
        if stuck and self._runr >= stuck:
            self._sflags |= FL_STUCK_RH
            if self._inr:
                self._sr = self._sr - self._inr * (rh - self._rr)
                self._nr -= self._inr
                self._inr = 0
        else:
            self._sr = self._sr + (rh - self._rr)
            self._nr += 1
            self._inr = 1 if self._runr == 1 else self._inr + 1

    # ------------------------------------------------------------ an average completes
    def _close(self):
        # the average of slot _k is complete: its means into the ring and the
        # results; returns the event bits
        k = self._k
        m = self.min_readings
        fl = self._sflags
        p = t = rh = _NAN
        if self._np >= m:
            p = self._rp + (self._sp - self._cp) / self._np
        elif self._np:
            fl |= FL_FEW
        if self._nt >= m:
            t = self._rt + self._st / self._nt
        elif self._nt:
            fl |= FL_FEW
        if self._nr >= m:
            rh = self._rr + self._sr / self._nr
        elif self._nr:
            fl |= FL_FEW
        # the ring(s): slots skipped since the latest write are missing
        n = self._n
        rp = self._ring_p
        rt = self._ring_t
        j = self._kring + 1
        if j < k - n + 1:
            j = k - n + 1
        while j < k:
            rp[j % n] = _NAN
            if rt is not None:
                rt[j % self._n12] = _NAN
            j += 1
        rp[k % n] = p
        if rt is not None:
            rt[k % self._n12] = t
        self._kring = k
        bits = EV_AVERAGE
        gap = 0
        if self._klast >= 0:
            gap = k - self._klast - 1
        if gap:
            fl |= FL_GAP
            bits |= EV_GAP
            self.missing = min(self.missing + gap, COUNT_MAX)
        self._klast = k
        self.gap_s = min(gap * self._avg, COUNT_MAX)   # saturates (34 years)
        self.average_readings = self._nslot
        if self.averages < COUNT_MAX:
            self.averages += 1
        self.p_pa = p
        self.t_k = t
        self.rh_pct = rh
        # dew point of the means (tinygeo.dew_point_from_rh)
        td = _NAN
        if t == t and rh > 0:
            td = td_rh(t, rh, self.ice)
            if not 150.0 <= td <= 350.0:
                td = _NAN
        self.dew_point_k = td
        # sea level, QNH, isobaric surface (tinygeo.sealevel)
        mslp = qnh = iso = _NAN
        if p == p and t == t:
            tv = t if rh != rh else tv_rh(t, p, rh, self.ice)
            tr = tv
            if rt is not None:
                t12 = _NAN
                j = k - (self._n12 - 1)
                if j >= 0:
                    t12 = rt[j % self._n12]
                if t12 == t12:
                    tr = 0.5 * (t + t12) + (tv - t)
                else:
                    fl |= FL_NO_T12
            mslp = msl_tv(p, tr, self._gph)
            if not MSLP_LO_PA <= mslp <= MSLP_HI_PA:
                fl |= FL_MSLP_ODD
            if self.iso_p_pa is not None:
                iso = iso_tv(p, tv, self._gph, self.iso_p_pa)
        if p == p:
            # tinygeo.qnh: the standard atmosphere's pressure at the pressure
            # altitude of p lowered by the elevation
            h = altitude_at(p) - self.height_m
            if h >= BOTTOM_GPH_M:
                q = pressure_at(h)
                if QNH_MIN_PA <= q <= QNH_MAX_PA:
                    qnh = q
        self.mslp_pa = mslp
        self.qnh_pa = qnh
        self.iso_gph_m = iso
        # tendency, characteristic, 24-hour change
        tend = ch24 = _NAN
        code = -1
        j0 = k - self._m3
        if j0 >= 0:
            a = rp[j0 % n]
            if p == p and a == a:
                tend = p - a
                st = _scan(rp, n, j0, k)
                if st is not None and st[9] * self._avg <= self.max_gap_s:
                    code = _classify(st, self.steady_pa)
            if code < 0:
                fl |= FL_TREND_GAP
        j = k - (n - 1)
        if j >= 0:
            a = rp[j % n]
            if p == p and a == a:
                ch24 = p - a
        self.tendency_3h_pa = tend
        self._code = code
        self.change_24h_pa = ch24
        if fl != self.flags:
            bits |= EV_FLAGS
        self.flags = fl
        return bits

    def _bad(self, reason, i, *args):
        # count the rejection and raise ReadingError(message i % args, reason);
        # the messages are one text (one object in RAM), split only here
        msg = ("%s=%s is not a finite number; pass one in %s"           # 0 name, value, unit
               "|%s=%s outside %g..%g %s%s"                               # 1
               "|rh_pct=%s outside -3..103 %%; percent, not a 0..1 fraction (None if unknown)"
               "|time_s is required (seconds, int or float, any origin)"  # 3
               "|p_pa=%s is at pressure altitude %.0f gpm, not within %.0f +- %g gpm of the "
               "barometer; %s"                                            # 4
               "|time_s=%s before the latest accepted reading's %s by more than the clock "
               "step of %g s; time must not decrease (clock set back? takeover_readings "
               "in a row restart the station)"                            # 5
               "|%s=%s steps %+.3g %s in %s s, beyond the %.3g allowed; spike? (%s=None "
               "turns this check off)"                                     # 6
               "|time_s=%s is %.0f s after the latest accepted reading's %s, beyond the "
               "clock step of %g s (max_gap_s + average_s) and twice the latest spacing "
               "(%g s); a stamp ahead, or a long outage: takeover_readings in a row go "
               "on from it"                                               # 7
               "|time_s=%s: 2**30 readings in one average; is the clock stuck?"  # 8
               ).split("|")[i] % args
        if self.rejected < COUNT_MAX:
            self.rejected += 1
        raise ReadingError(msg, reason)

    # ------------------------------------------------------------ checkpoint
    def to_bytes(self):
        """The whole station (settings, state, ring) as a checkpoint blob,
        bytes (tinygeo.checkpoint's frame, magic b"TGST")."""
        from .checkpoint import pack
        f = []
        for n in _CFG_F:
            v = getattr(self, n)
            f.append(_NAN if v is None else v * 1.0)
        for n in _ST_F:
            f.append(getattr(self, n))
        t0 = self._t0
        for n in _TS_F:
            v = getattr(self, n)
            if v is None:
                v = _NAN
            elif self._t0_int:
                v = v - t0
            f.append(v * 1.0)
        f.append(_NAN if t0 is None else t0 * 1.0)
        for v in self._ring_p:
            f.append(v)
        if self._ring_t is not None:
            for v in self._ring_t:
                f.append(v)
        ints = []
        for n in _CFG_I:
            ints.append(getattr(self, n) * 1)
        for n in _ST_I:
            ints.append(getattr(self, n))
        return pack(_MAGIC, _VERSION, f, ints)

    @classmethod
    def from_bytes(cls, blob, on_event=None):
        """A Station restored from a to_bytes() blob; continues bit-identically.

        Raises CheckpointError (nothing restored) for a blob that is not
        bytes, truncated, too long, of another version, corrupted (CRC-32
        mismatch) or holding impossible settings or state.
        """
        from .checkpoint import unpack, check_finite, check_values, HEAD_LEN, CRC_LEN
        from .errors import CheckpointError, TinygeoError
        ni = len(_CFG_I) + len(_ST_I)
        base = len(_CFG_F) + len(_ST_F) + len(_TS_F) + 1
        # the ring's length follows from average_s: take the float count from
        # the blob's length here and check it against the settings below
        try:
            size = len(blob)
        except TypeError:
            size = 0
        nf = (size - HEAD_LEN - CRC_LEN - 4 * ni) // 8
        if nf < base:
            nf = base
        f, ints = unpack(blob, _MAGIC, _VERSION, nf, ni, "station")
        check_finite(f, "station")
        c = len(_CFG_F)
        (height, lat, avg, ps, pr, tst, tr, rs, rr, guard, steady, gap, iso) = f[:c]
        ice, min_r, stuck, mean12, takeover = ints[:len(_CFG_I)]

        def opt(x):
            return None if x != x else x
        try:
            st = cls(height, lat, avg, ice, min_r, stuck or None, opt(ps), pr, opt(tst), tr,
                     opt(rs), rr, opt(guard), steady, gap, mean12, opt(iso), takeover,
                     on_event)
        except TinygeoError as e:
            raise CheckpointError("station checkpoint holds settings the station refuses: %s" % e)
        want = base + st._n + (st._n12 if st.mean12 else 0)
        if nf != want:
            raise CheckpointError("station checkpoint holds %d values, its settings need %d; not "
                                  "written by this tinygeo" % (nf, want))
        i = c
        for n in _ST_F:
            setattr(st, n, f[i])
            i += 1
        j = len(_CFG_I)
        for n in _ST_I:
            setattr(st, n, ints[j])
            j += 1
        t0 = f[base - 1]
        if t0 != t0:
            t0 = None
        elif st._t0_int:
            t0 = (st._t0_hi << 32) + (st._t0_lo & 0xFFFFFFFF)
        st._t0 = t0
        if t0 is not None:
            st._phase = t0 % st._avg
        for n in _TS_F:
            v = f[i]
            i += 1
            if v != v:
                v = None
            elif st._t0_int and t0 is not None:
                v = t0 + int(v) if v == int(v) else t0 + v
            setattr(st, n, v)
        i = base
        for r in range(st._n):
            v = f[i]
            if v == v and not P_MIN_PA <= v <= P_MAX_PA:
                raise CheckpointError("station checkpoint holds an average of %r Pa; not written "
                                      "by this tinygeo" % (v,))
            st._ring_p[r] = v
            i += 1
        if st._ring_t is not None:
            for r in range(st._n12):
                v = f[i]
                if v == v and not T_MIN_K <= v <= T_MAX_K:
                    raise CheckpointError("station checkpoint holds an average of %r K; not "
                                          "written by this tinygeo" % (v,))
                st._ring_t[r] = v
                i += 1
        check_values(st, _RESTORE, "station")
        # the sums of the average being built: deviations from its first
        # reading, so at most the count times the widest range
        if not (abs(st._sp) <= st._np * 80000.0 and abs(st._cp) <= abs(st._sp) + 1.0
                and abs(st._st) <= st._nt * 200.0 and abs(st._sr) <= st._nr * 110.0
                and st._inp <= st._np and st._int <= st._nt and st._inr <= st._nr) \
                and st._k >= 0:
            raise CheckpointError("station checkpoint holds sums its counts cannot reach; not "
                                  "written by this tinygeo")
        if (st.count > 0) != (t0 is not None) or (st.count > 0) != (st._ts is not None) \
                or st._k < st._kring or st._kring < st._klast \
                or (st._run > 0 and st._rn_ts is None):
            raise CheckpointError("station checkpoint holds an inconsistent clock; not written "
                                  "by this tinygeo")
        return st

    def __repr__(self):
        return "Station(height_m=%r, count=%d, p_pa=%r, mslp_pa=%r, tendency_3h_pa=%r)" % (
            self.height_m, self.count, self.p_pa, self.mslp_pa, self.tendency_3h_pa)


def _count(name, value, lo, hi):
    # an int setting (not a bool) within lo..hi
    if isinstance(value, bool) or not isinstance(value, int) or value < lo or value > hi:
        from .errors import RangeError
        raise RangeError("%s=%s outside %d..%d readings; pass an int" % (name, quote(value), lo, hi))
    return value
