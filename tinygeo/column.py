"""The running hypsometric integration of an atmospheric column, reading by
reading: live geopotential and geometric height, vertical rate, flight events,
height uncertainty, GPS cross-check and power-loss checkpoints.

``Column`` sets its state up once and updates it in place: every ``feed``
costs O(1) time and memory (no list, dict or string is built on the accepted
path; one 6-tuple when a new height node is taken, every 3 km). The formulas
come from the core modules' kernels (the unchecked fast forms, called after
``feed`` has checked the reading once): ``tinygeo.moisture`` (virtual
temperature), ``tinygeo.layers`` (the layer's thickness, stable ln(p1/p2)),
``tinygeo.potential`` (geopotential and geometric height), and
``tinygeo.standard`` (pressure altitude, for the start guard).

Logger loop (a sketch; ``sensor`` is your driver, ``flash`` your storage)::

    from tinygeo.column import Column, EV_BURST, EV_LANDED
    from tinygeo.errors import ReadingError

    col = Column(48.2, start_height_m=512.0)
    while True:
        r = sensor.read()
        try:
            bits = col.feed(r.p_pa, r.t_k, r.rh_pct, r.time_s, r.gps_m)
        except ReadingError as e:
            log("rejected %s: %s" % (e.reason, e))   # the column's results are unchanged
            continue
        show(col.height_m, col.smooth_rate_gpm_s, col.sigma_m)
        if bits & EV_BURST:
            release_parachute_log(col.burst_gph_m)
        if col.count % 30 == 0:
            flash.write(col.to_bytes())              # restore: Column.from_bytes(blob)
        if bits & EV_LANDED:
            break

The contract
------------
``Column(lat_deg, start_height_m=0, anchor_p_pa=None, ellipsoid=WGS84,
ice=False, dry_fallback=False, sigma_p_pa=10, sigma_t_k=0.2, sigma_rh_pct=1,
bias_p_pa=50, bias_t_k=0.2, bias_rh_pct=3, max_rate_m_s=200,
start_guard_m=3000, time_unit_s=1, smooth_s=20, launch_gpm=20,
burst_drop_gpm=50, burst_rate_gpm_s=3, burst_readings=3, float_s=600,
float_band_gpm=150, landing_s=60, landing_band_gpm=10,
tropopause_max_p_pa=50000, tropopause_layer_gpm=100, rh_tol_pct=3,
takeover_readings=3, track_sigma=True, on_event=None,
geoid_undulation_m=None, max_t_step_k=3, max_t_rate_k_s=1,
max_t_gradient_k_gpm=0.1, launch_rate_gpm_s=0.5)``

Site and model
- lat_deg: geodetic latitude, degrees, -90..90 (kept fixed: the latitude
  only enters the conversion between geopotential and geometric height,
  0.5 % at most).
- start_height_m: height above mean sea level, m, -1000..100000, of the
  first reading; or, with anchor_p_pa, of the pressure anchor_p_pa.
- anchor_p_pa: a pressure, Pa, known to sit at start_height_m (a station
  barometer, a surveyed launch pad). The first reading is placed by one
  hypsometric step from it with its own virtual temperature at both ends
  (exact for the few metres a pad sits above or below its reference).
- ellipsoid: tinygeo.WGS84 (default) or tinygeo.GRS80.
- ice: humidity relative to ice at and below 0 degC (default: to water, the
  WMO upper-air convention). dry_fallback: see "Humidity".
- geoid_undulation_m: None (default): gps_m is a height above mean sea level;
  a number N, m, -150..150: gps_m is an ellipsoidal (GPS receiver) height,
  converted with tinygeo.msl_height(gps_m, N) = h - N.

Sensor (the noise sets every threshold; see "Noise")
- sigma_p_pa, sigma_t_k, sigma_rh_pct: RANDOM 1-sigma errors of one reading
  (noise, independent from reading to reading), Pa 0..10000, K 0..50, % 0..100.
- bias_p_pa, bias_t_k, bias_rh_pct: SYSTEMATIC 1-sigma errors (calibration
  offsets, the same for the whole flight).
  Defaults (common practice for a radiosonde-class sensor set, from memory,
  not a specification of any product): pressure noise 0.1 hPa and
  calibration 0.5 hPa; temperature 0.2 K and 0.2 K; humidity 1 %RH and
  3 %RH. A consumer MEMS barometer is closer to 0.02 hPa noise and 1 hPa
  offset (data-sheet class, from memory).
- time_unit_s: seconds per unit of time_s, 1e-6..1e6 (default 1; 0.001 for
  milliseconds from a tick counter).

Checks (see "Checks and recovery")
- max_rate_m_s: fastest believable vertical speed, m/s, 1..10000, or None
  (no check). 200 m/s is above the free fall of a burst balloon's train in
  the thin upper air (tens of m/s, up to about 100 m/s at 30 km; common
  practice).
- max_t_step_k, max_t_rate_k_s, max_t_gradient_k_gpm: the temperature-step
  check, K 0..100 (None: no check), K/s 0..100, K/gpm 0..10. Defaults 3 K (a
  few times the noise of any radiosonde-class sensor), 1 K/s (cloud exits and
  the sun change a sensor's reading by a few K over several seconds) and
  0.1 K/gpm (the strongest real inversions, about 10 K per 100 m; common
  practice).
- start_guard_m: the first reading is refused when its pressure altitude
  (U.S. Standard Atmosphere 1976) lies more than this from start_height_m,
  m, 100..100000, or None (no guard). Default 3000 m: real weather moves the
  pressure altitude of a place by at most about -600..+1300 m (sea-level
  pressures of 1085..870 hPa, the recorded extremes; common practice) and a
  cold high site by a few hundred metres more, while a pressure in hPa passed
  as Pa lies 28 km or more away and kPa 40 km. The same guard applies to
  anchor_p_pa (RangeError).
- rh_tol_pct: how far beyond 0..100 %RH a humidity is still accepted, 0..3 %
  (sensor noise; the value is used unchanged).
- takeover_readings: readings in a row, 2..100, that agree with each other
  and contradict the column before the column follows them (default 3).

Events (see "Events")
- smooth_s: time constant of the height track, s, 1..10000 (default 20).
- launch_gpm: rise of the track above its lowest point while waiting,
  0..10000 gpm (default 20), beyond the noise.
- launch_rate_gpm_s: with time stamps, the track must also rise faster than
  this, beyond its rate noise, for a launch and for a new ascent after a
  float, gpm/s, 0..1000 (default 0.5: balloons ascend at 3-6 m/s, common
  practice; the weather moves the pressure altitude of a pad by a few gpm
  an hour, 1 hPa/h is 0.0024 gpm/s near the ground. 0.5 rather than 1: the
  track's rate lags the climb, at 1 gpm/s a 5 m/s launch was reported 7 s
  later than by the height alone, at 0.5 within 1 s of it; measured with
  tests/streams.py's float flight).
- burst_drop_gpm, burst_rate_gpm_s, burst_readings: the descent is confirmed
  when burst_readings confirmed readings in a row (1..100000) find the track
  burst_drop_gpm (0..100000) below its highest point and sinking faster than
  burst_rate_gpm_s (0..1000), each beyond the noise (defaults 50 gpm,
  3 gpm/s, 3: a parachute sinks at 5 m/s or more at any height, a zero-
  pressure balloon at sunset more slowly; common practice).
- float_s, float_band_gpm: a float is the track staying within
  float_band_gpm (0..100000) beyond the noise of one height for float_s
  seconds (1..1000000) during the ascent (defaults 600 s and 150 gpm).
- landing_s, landing_band_gpm: after the descent, landed when the confirmed
  readings stay within landing_band_gpm (0..10000) beyond the noise for
  landing_s seconds (0..1000000) (defaults 60 s, 10 gpm).
- tropopause_max_p_pa, tropopause_layer_gpm: the tropopause is searched at
  and above this pressure (0..120000 Pa; 500 hPa by default, common
  practice), on the profile averaged over layers of tropopause_layer_gpm
  (1..5000 gpm; default 100).
- on_event: callable(column, bits), called once per feed that raised events,
  after the reading is fully committed (every attribute, levels included,
  is the column's state after the feed; a checkpoint taken inside it is the
  one taken after the feed). An exception it raises propagates out of feed
  with the reading accepted and the column consistent.
- track_sigma: False skips the uncertainty bookkeeping (sigma_* are nan).

``feed(p_pa, t_k, rh_pct=None, time_s=None, gps_m=None) -> int`` adds one
reading and returns the bits of the events it caused (0 = none).
p_pa: pressure, Pa, 0.1..120000; t_k: air temperature, K, 150..350;
rh_pct: relative humidity, %, or None; time_s: a time stamp in units of
time_unit_s, any origin (int or float) within -2**62..2**62 (beyond:
'time'), or None; gps_m: GPS height, m,
-1000..100000 above mean sea level (ellipsoidal if geoid_undulation_m is
set), nan for "no fix", or None. A rejected reading raises
tinygeo.errors.ReadingError with ``.reason`` one of 'number', 'pressure',
'temperature', 'humidity', 'time', 'rate', 'gps' (see "Checks and
recovery").

Attributes (nan where not known yet)
  count, rejected, retracted (int): readings accepted (retracted ones taken
    off again), rejected (retracted ones included), and those retracted.
    Counters stop at COUNT_MAX.
  p_pa, t_k, tv_k, rh_pct, flags: the latest accepted reading (tv_k the
    virtual temperature used; rh_pct nan when not given).
  time_s: seconds since the first time stamp (time_origin, as given).
  gph_m: geopotential height, gpm (compensated running sum).
  height_m: geometric height above mean sea level, m.
  rate_m_s: raw vertical speed between the two latest timed readings, m/s
    (the difference of two noisy heights: read smooth_rate_gpm_s for a rate).
  noise_gph_m: the height noise of one reading at the latest confirmed
    reading, gpm: (Rd/g0) Tv sigma_p_pa / p.
  smooth_gph_m, smooth_rate_gpm_s: the height track of the confirmed readings
    (see "Events"), gpm and gpm/s.
  phase (int): PH_WAIT, PH_ASCENT, PH_FLOAT, PH_DESCENT, PH_LANDED.
  max_gph_m: the track's highest point so far, gpm; launch_time_s.
  burst_gph_m, burst_time_s, burst_p_pa: the track's highest point at the
    confirmed descent (set with EV_BURST).
  float_gph_m, float_time_s: the track's height and the time where the float
    began (set with EV_FLOAT).
  landing_time_s: the time of the reading that confirmed the landing.
  level_p_pa, level_gph_m, level_height_m, level_t_k: the mandatory level of
    the latest EV_LEVEL (the highest, when one reading crossed several).
  levels, levels_n: every mandatory level the latest EV_LEVEL reported,
    lowest first, as a list of (p_pa, gph_m, height_m, t_k) built when read,
    and how many (not in checkpoints: empty after a restore).
  tropopause_p_pa, tropopause_gph_m, tropopause_t_k, tropopause_time_s:
    the tropopause level itself (set with EV_TROPOPAUSE, which fires 2 km
    above it, where the definition is confirmed).
  sigma_m, sigma_random_m, sigma_bias_m: 1-sigma height uncertainty, m.
  gps_m, gps_diff_m: the latest GPS height given (above mean sea level), and
    the barometric height minus it at that reading, m.
  Every setting is an attribute of the same name (anchor_p_pa, max_rate_m_s,
  start_guard_m and max_t_step_k are None when not set).

Flags (flags, bits of the latest accepted reading): FL_DRY 1 (no humidity,
dry air assumed), FL_HELD_MIXING 2 (no humidity, the last mixing ratio used),
FL_NO_TIME 4 (no time_s), FL_DESCENT 8 (pressure rose: integrating
downwards), FL_SAME_P 16 (pressure repeated: nothing added), FL_NO_GPS 32
(gps_m was nan: no fix, ignored), FL_CAPPED 64 (the held mixing ratio was
above saturation at this reading's temperature and was capped),
FL_REPLACED 128 (this reading replaced the previous one, which the readings
contradicted or the "there and back" test retracted; or the column restarted
from the reading before it, the first reading retracted), FL_TAKEOVER 256 (the column followed a run of readings that
contradicted it; FL_TAKEOVER alone when it restarted from them),
FL_SAME_TIME 512 (time_s repeated the previous stamp: no rate check for
this step).

Methods: ``reanchor_gps()``, ``to_bytes()``, ``Column.from_bytes(blob)``.
Constants: SPIKE_GPM, SPIKE_K ("there and back"), UNIT_FACTOR (unit change).

Integration
-----------
Between two readings (p1, Tv1) and (p2, Tv2) the column rises by
(Rd/g0) (Tv1+Tv2)/2 ln(p1/p2) gpm (hypsometric equation, Wallace and Hobbs
2006 eq. 3.29/3.30; the trapezoid in ln p; tinygeo.layer_thickness),
negative when the pressure rises (FL_DESCENT), exactly zero for a repeated
pressure (FL_SAME_P). The logarithm is the stable ln_ratio of
tinygeo.layers; the running sum is compensated (classic Kahan summation,
Kahan 1965, "Further remarks on reducing truncation errors", Comm. ACM 8(1)
40): its error stays within one unit in the last place of the sum, also when
floats are truncated rather than rounded (30-bit MicroPython builds).
Because the sum telescopes in ln p, the height of a reading is that of its
measured pressure: a skipped or rejected reading costs time resolution, not
height, and a pressure glitch leaves no offset once it is passed.

Geometric height: at a node gph g0 the exact h0 = geometric_height(g0),
and geopotential_height of h0 + 1500 m and h0 + 3000 m; between refreshes
height_m is the quadratic in gph through these three points, used while
gph_m stays within 3000 gpm of g0. h(gph) has d3h/dgph3 ~ 6/R^2, so the
interpolation error is below 3 mm; at a node height_m is exact (the full
Newton solve for the first node and after a jump of more than 6000 gpm,
else one Newton step from the old quadratic). The series of the latitude are
evaluated once, in the constructor. Above 98 750 gpm height_m is nan.

Humidity
--------
With rh_pct the virtual temperature is exact: Tv = T/(1 - r), r = (1 - eps)
e/p (Wallace and Hobbs 2006 eq. 3.16; e from the WMO-No. 8 Magnus form and
enhancement factor, tinygeo.moisture). Without it: dry air (FL_DRY) if
dry_fallback or no humidity came yet, else the mixing ratio w of the latest
reading that had one, held (FL_HELD_MIXING), but never above the saturation
mixing ratio at the current temperature and pressure (FL_CAPPED): air
cannot hold more vapour than saturation, and a rising parcel that keeps its
mixing ratio condenses the excess (Wallace and Hobbs 2006 sec. 3.5, the
conservation of the mixing ratio below saturation). Held air that cools is
then taken as saturated, the upper bound. The missing humidity enters the
uncertainty as a systematic term (below).

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
  dTv/dT ~ 1 and dTv/dRH = Tv q at constant T and p (r = RH q); readings
  under 1 %RH and readings without humidity keep the last slope.
Random part: sum of (sensitivity x sigma)^2 over every reading (a
reading's sensitivity is final once the next reading arrives, so the sum is
kept in O(1)). Systematic part: a calibration offset is the same for every
reading, so its sensitivities add before squaring: temperature
(Rd/g0) dT ln(p0/p), humidity K sum_i (dTv/dRH)_i (L_i + L_{i+1})/2 dRH,
pressure (sum_i dz_n/dp_i) dp (at 10 hPa, 0.5 hPa is about 340 m).
Missing humidity: the true mixing ratio lies anywhere between 0 and the
saturation value w_s, so a reading without humidity gets a Tv uncertainty
of dTv/dw w_s/sqrt(3) with dTv/dw = T (1/eps - 1) (the largest RMS error of
an estimate in [0, w_s] when the truth is uniform there); it is systematic
(the same weather for many readings), so these add before squaring. The
parts add in squares; after reanchor_gps the GPS sigma joins them.
sigma_m = sqrt(random^2 + systematic^2), in geopotential metres (within
1.1 % of metres up to 35 km). Not modelled: sensor lag, non-hydrostatic
motion.

Noise
-----
A reading's pressure noise sigma_p_pa moves its height by
sigma_z = (Rd/g0) Tv sigma_p / p (noise_gph_m): 0.8 m at the ground, 120 m at
5 hPa for 10 Pa. Every threshold of the checks and events adds NOISE_K = 4
times the relevant noise (a Gaussian noise exceeds 4 sigma with probability
6e-5), so noise alone does not fake a glitch or an event.

Checks and recovery
-------------------
``feed`` first checks the values on their own (a number: int or float, not
bool or text; in range; a hint for Celsius given as kelvin, hPa as Pa, a
fraction as percent). A reading failing these is rejected and changes
nothing but ``rejected``. Then it is checked against the latest accepted
reading: its time must not go back; the height change must not need a
vertical speed above max_rate_m_s, beyond the noise: |dz| <= max_rate dt +
4 sqrt(2) sigma_z (a repeated time stamp, dt = 0, skips this check:
FL_SAME_TIME); its temperature may differ by at most
max_t_step_k + 4 sqrt(2) sigma_t + max_t_rate_k_s dt +
max_t_gradient_k_gpm |dz| (the allowance grows with time and height, so
after a genuine step the new temperatures pass again). The first reading
must lie within start_guard_m of start_height_m (reason 'pressure').

The column keeps one reading of look-back. A reading that contradicts the
latest one is rejected, and remembered as the start of a run. Retraction:
if the next reading agrees with that remembered one and with the reading
before the latest one, and contradicts the latest too (or agrees with it
only less well: the larger share of its speed and temperature allowances,
_fit), the latest reading was the bad one (a pressure glitch after a gap, a
time stamp far ahead): it is retracted (``retracted``, ``rejected``) and the
column goes on from the reading before it with the new reading
(FL_REPLACED). Takeover: readings that agree with each other and contradict
the latest one form a run (a reading that agrees with both the latest one and
the run joins the run only while the latest is the first reading, not yet
confirmed, or once the run has two readings); after takeover_readings in a
row the column follows the run (FL_TAKEOVER): before anything is confirmed
(a bad first reading) it restarts from the run's first reading, placed at
start_height_m; later (a clock reset, a real change faster than the checks
allow) it integrates on through them. A reading that agrees with the latest
one and is not taken by the run is accepted, and the run is forgotten. So no
single bad reading, the first included, and no single wrong time stamp
locks the column: it costs at most takeover_readings + 1 readings, and the
heights after it are those of a column that never saw it (to a few mm at
1 Hz: the skipped reading's layer is integrated as one; bench/montecarlo.py
and tests/test_column_streams.py measure it at every position; 10 Hz on a
1 s clock, 10 Pa, a glitch anywhere after the first reading: within 5 cm).
A bad first reading is the exception: the column restarts from a later
reading, whose own noise then places the flight (sqrt(2) noise_gph_m, 1.1 m
at the ground for 10 Pa; measured 0.87 m in that coarse-clock stream). A rejected
reading changes nothing of the results, only ``rejected`` and the recovery
memory (the remembered run, not saved in checkpoints); a reading of a run
that is followed was rejected when it came and counts in both ``rejected``
and ``count``. Because the latest reading may still be retracted, events are
decided on confirmed readings: a reading is confirmed when the next reading
is accepted on top of it, so events come one reading late.

There and back (no clock needed): a spike whose implied speed stays under
max_rate_m_s (+8.2 hPa at 300 hPa is -176 gpm and +185 gpm back, 1 s apart),
and any glitch where no rate check is possible (time_s None, a repeated
stamp: FL_SAME_TIME), is found on heights alone. With b the reading before
the latest one h and n the new reading, T = SPIKE_GPM + SPIKE_K sqrt(2)
noise_gph_m (the larger noise of b and n; 30 gpm + 8 sqrt(2) x: 39 gpm at
the ground for 10 Pa of noise, 56 gpm at 300 hPa, 790 gpm at 10 hPa): h is
retracted (FL_REPLACED on n, ``retracted`` and ``rejected`` count it) when
n agrees with b within T and h lies beyond T from both, on one side. K = 8
on the noise of a difference of two readings: noise alone gets there with a
probability of about 1e-15 a reading (bench/montecarlo.py: none in 211 340
noise-only readings of 20 ascents, for 10 and 2 Pa sensors, none in 20 floats
of 6 h at 32 km and 20 at 36 km with a +-300 gpm wave). The floor, 30 gpm,
is real motion: out by 30 gpm and back within two readings needs a speed of
30 m/s one way and then the other within one reading interval, which a
balloon at 1 Hz never does (turbulence moves it by a few m/s; a burst
starts a fall, not a return). A slower log (minutes between readings) may
have such a real turning point: the test then retracts that reading only,
never rejects one, and the heights stay right (the sum telescopes in ln p;
tests/test_column.py feeds one). The first reading has no reading before
it: while the column holds two readings, the third retracts the first when
the second and third agree within T and the first lies beyond T from both;
the column restarts from the second (placed at start_height_m, or from the
anchor), FL_REPLACED on the third (a first reading 3-6 % off, inside the
start guard, without a usable clock: the whole flight was 500 m off).

A unit change mid-flight (hPa or kPa passed as Pa from some reading on) is
a run that agrees with itself and contradicts the column; it is never
followed: a run that contradicted the column by rate, at a pressure beyond
UNIT_FACTOR = 5 (either way) from the latest accepted reading's, is refused
('pressure', the message naming the factor and the likely unit) for as long
as it lasts, and it retracts nothing (a factor 5 is about 11 km: no balloon
moves that far between two readings whose rate check failed). When the
pressure comes back in Pa the column goes on.

Time: stamps are kept relative to the first one (time_origin), and an int
stamp is subtracted as an int before it becomes a float, so tick counters
(milliseconds, time_unit_s=0.001) and large origins (seconds since a year's
start, the epoch) keep their resolution on float32 and 30-bit boards. Pass
ints there: a float time stamp is already rounded to the board's precision
before the column sees it (float32 spacing is 2 s at 1.7e7 s). GPS: a gps_m
of nan means "no fix": the reading is kept, its GPS ignored (FL_NO_GPS).

Events
------
The height track is a critically damped g-h filter (fading-memory
polynomial filter of degree 1: gains g = 1 - th^2, h = (1 - th)^2 with
th = exp(-dt/smooth_s) per step dt; Morrison 1969, "Introduction to
Sequential Smoothing and Prediction"; the steady-state noise ratios
sigma_x^2/sigma^2 = (1 - th)(1 + 4th + 5th^2)/(1 + th)^3 and
sigma_v^2/sigma^2 = 2(1 - th)^3/((1 + th)^3 dt^2) are those of that filter
(from memory)) run on the confirmed readings' gph: smooth_gph_m and
smooth_rate_gpm_s, O(1) memory; a step within 5 % of the one its gains were
made for keeps them (clock jitter). Without time stamps each reading counts as
one second. Its noise, sigma_x and sigma_v, scales every event threshold.
EV_LAUNCH 16: in PH_WAIT, the track rises launch_gpm + 4 sigma_x above its
  lowest point and, with time stamps, rises faster than launch_rate_gpm_s +
  4 sigma_v -> PH_ASCENT (launch_time_s). The weather on the pad moves the
  track too (1 hPa/h: 26 gpm in 3 h) but at a few thousandths of a gpm/s.
EV_FLOAT 32: in PH_ASCENT, the track stays within float_band_gpm + 4 sigma_x
  of one height for float_s seconds -> PH_FLOAT (float_gph_m, float_time_s,
  where the float began). In PH_FLOAT the float's top rises with the track
  wherever the track passes it slower than launch_rate_gpm_s + 4 sigma_v (a
  wave's crest), and a new ascent (PH_ASCENT, no event) needs the track above
  the top's band and rising faster than that; without time stamps, any rise
  above the band. So one float is one event however it oscillates, and
  leaving it needs more than its own observed excursion. Floats are a normal
  flight for zero-pressure and superpressure balloons.
EV_BURST 4: in PH_ASCENT or PH_FLOAT (a cut-down after a float is a burst),
  burst_readings confirmed readings in a row find the track burst_drop_gpm
  + 4 sigma_x below its highest point and sinking faster than
  burst_rate_gpm_s + 4 sigma_v -> PH_DESCENT; burst_gph_m, burst_time_s,
  burst_p_pa are the track's highest point.
EV_LANDED 8: in PH_DESCENT, the confirmed readings stay within
  landing_band_gpm + 4 sigma_z of one height for landing_s seconds ->
  PH_LANDED.
EV_LEVEL 1: a WMO mandatory isobaric level (MANDATORY_PA) was crossed
  between two confirmed readings on the way up (phases WAIT, ASCENT, FLOAT);
  its gph, height and temperature are interpolated linearly in ln p. Each
  level once; a level at or below the start is never reported, except one
  exactly equal to the first reading's pressure. If one reading crosses
  several levels, level_* is the highest and ``levels`` lists them all;
  on_event is called once, after the reading is committed.
EV_TROPOPAUSE 2: the first tropopause by the WMO lapse-rate definition: "the
  lowest level at which the lapse rate decreases to 2 K/km or less, provided
  also the average lapse rate between this level and all higher levels
  within 2 km does not exceed 2 K/km" (WMO 1957; WMO-No. 49 Technical
  Regulations; wording from memory), lapse rates per km of geopotential
  height, with t_k (not tv_k). The profile searched: the confirmed ascent
  readings averaged over layers of tropopause_layer_gpm (mean gph and mean
  t_k of the readings in each layer: with 0.2 K noise per reading a point
  lapse rate over 5 m is +-60 K/km, over averaged 100 gpm layers +-0.6 K/km).
  With theta = t + 0.002 gph (K) per layer point, a point i is the
  tropopause when theta of the point before it is higher (the lapse rate
  DECREASES TO 2 K/km or less at i: above 2 K/km below it), it lies at or
  above tropopause_max_p_pa, no point j after it with gph_j <= gph_i + 2000
  has theta_j < theta_i, and a point above gph_i + 2000 exists. O(1): one
  candidate at a time gives the same answer as checking every point (a
  point that rejects the candidate has theta below every point between
  them, so it decreases to the rate itself; tests compare with a brute-force
  search). The event fires where the definition is confirmed, 2 km above;
  the attributes name the level itself.
Bit values: EV_LEVEL 1, EV_TROPOPAUSE 2, EV_BURST 4, EV_LANDED 8,
EV_LAUNCH 16, EV_FLOAT 32; phases PH_WAIT 0, PH_ASCENT 1, PH_FLOAT 2,
PH_DESCENT 3, PH_LANDED 4. Phases move forward, except PH_FLOAT ->
PH_ASCENT.

Checkpoint
----------
to_bytes() packs every setting and the state (both records of the
look-back, the event state) in the frame of tinygeo.checkpoint (magic
b"TGCK", version, length, doubles and int32s, CRC-32); CHECKPOINT_BYTES is
the blob size. from_bytes refuses a blob whose CRC fails, of another
version or length, and one holding a value no column can hold (any inf; a
nan where a value must be; a value outside its range: every restored
field has one, _RESTORE_COL and _RESTORE_REC, from the readings' ranges, the
settings' and 2**30 readings; counters beyond COUNT_MAX; _has_b not count
>= 2; a step of 0 s; a track rate beyond 1e9 gpm/s), so a restored column
computes only finite results (tests/colhostile.py sets every field to 0,
-0.0, +-1e300, ints 0 and +-(2**31-1)). The recovery memory (a run of
contradicting readings) is not saved: after a restore the column starts it
afresh. A checkpoint taken while a run is pending can therefore continue
differently from the live column for one reading: the restored column
rejects the reading that would have retracted the bad one and keeps it one
reading longer. Measured on a 2 s ascent with 12 faults (a checkpoint after
every reading, 2180 positions): 2 positions diverged, each for one row
(18 m and 337 m: the bad reading held one reading longer), then within 1 cm
(3.9 mm and 9.9 mm at the end of the flight); every other position
continues bit-identically. on_event and levels are not stored.
"""
import math
import sys

from .potential import GPH_MIN_M, GPH_MAX_M, msl_height, gph_series, newton_step, height_series
from .layers import lnr, half_k_ln, HALF_RG
from .moisture import rh_q, tv_w, ONE_M_EPS, boiling_error
from .standard import altitude_at
from .constants import WGS84, GRS80, EPSILON, check_ellipsoid
from .errors import ReadingError, RangeError, quote, real, INF, NINF
# CPython keeps the objects' attributes in slots (faster: see tinygeo.cpyslots,
# a module the device package leaves out); MicroPython makes plain classes
# (a class with __slots__ there costs the names' RAM and slowed feed by 9 %)
if sys.implementation.name == "cpython":
    from .cpyslots import COLUMN as _SLOTS_COLUMN, RECORD as _SLOTS_RECORD
else:
    _SLOTS_COLUMN = _SLOTS_RECORD = ()

# --- events, flags, phases ----------------------------------------------------
EV_LEVEL = 1
EV_TROPOPAUSE = 2
EV_BURST = 4
EV_LANDED = 8
EV_LAUNCH = 16
EV_FLOAT = 32

FL_DRY = 1
FL_HELD_MIXING = 2
FL_NO_TIME = 4
FL_DESCENT = 8
FL_SAME_P = 16
FL_NO_GPS = 32
FL_CAPPED = 64
FL_REPLACED = 128
FL_TAKEOVER = 256
FL_SAME_TIME = 512

PH_WAIT = 0
PH_ASCENT = 1
PH_FLOAT = 2
PH_DESCENT = 3
PH_LANDED = 4

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

WMO_LAPSE_K_GPM = 0.002
"""2 K/km, the lapse rate of the WMO tropopause definition, in K/gpm."""
WMO_DEPTH_GPM = 2000.0
"""2 km, the depth over which the WMO definition checks the mean lapse rate."""

NOISE_K = 4
"""Multiple of a noise sigma that every check and event threshold allows."""
COUNT_MAX = 1073741823
"""2**30 - 1: count, rejected and retracted stop here (MicroPython's
small-int limit on 32-bit boards, so a counter never allocates; 3.4 years of
10 Hz readings)."""

_NAN = float("nan")
_TS_POS = 1 << 62          # time stamps beyond +-2**62 (int or float) are refused ('time')
_TS_NEG = -_TS_POS
# Integral constants are ints: free on MicroPython (a float constant is a heap
# object for the module's lifetime); every operation gives the same double.
_NODE_D = 1500             # m between the nodes of the height quadratic
_NODE_W = 3000             # gpm: the quadratic is used within +-_NODE_W of its node
_NODE_W2 = 6000            # gpm: and gives the start of the next node's Newton step within it
_RH_SLOPE_MIN = 1          # %RH below which dTv/dRH is held, not recomputed
SPIKE_GPM = 30
"""The floor of the "there and back" test, gpm (see "Checks and recovery")."""
SPIKE_K = 8
"""Multiple of the noise of a height difference (sqrt(2) noise_gph_m) that the
"there and back" test adds to SPIKE_GPM."""
_SPIKE_GPM = SPIKE_GPM
_SPIKE_PRE = SPIKE_GPM - 1    # feed's pre-filter on a layer (C: on the gph difference, SPIKE_GPM)
UNIT_FACTOR = 5
"""A run of readings whose pressure is off from the latest accepted reading by
more than this factor (either way) and that contradicted it by rate is never
followed (see "Checks and recovery")."""
_SQRT2 = 1.4142135623730951
_SPIKE_KN = SPIKE_K * _SQRT2      # 8 sqrt(2): the noise of a difference of two heights
# dTv/dw / T = 1/eps - 1 at w = 0 (from Tv = T (1 + w/eps)/(1 + w)), times
# 1/sqrt(3) (the RMS error bound of a mixing ratio known to lie in [0, w_s]);
# see "Humidity" and "Uncertainty"
_HUM_K = (1.0 / EPSILON - 1.0) * 0.5773502691896258
# ratios p_start/p beyond which layers.lnr surely takes its math.log branch
# (|d| >= LN_SWITCH 0.25 holds for q >= 5/3 and q <= 3/5; these keep 0.03
# away from both, far beyond the rounding of d)
_LN_Q_HI = 1.7
_LN_Q_LO = 0.58


class _Rec:
    """One reading and the integration state after it (the look-back keeps
    two: the latest accepted reading and the one before it).

    The reading (written by Column._check): p_pa, t_k, rh_pct (nan: not
    given), tsr (time stamp as given, int or float, or None), gpsr (GPS as
    given: None, nan or m above MSL), q (moisture.rh_q at it, nan if not
    needed). The state after it (Column._compute):
    tv_k, flags, gph_m, c (Kahan compensation), height_m, rdh/rdt (the
    height change and time of the latest timed step: rate_m_s), nodes (a
    new height node waiting, or None), t0 (the first time stamp, as given),
    tr, g_t, h_tm (stamp, gph and height of the latest timed reading), dt
    (seconds since the timed reading before it, nan if none), h_t, h_p, h_rh
    (the latest reading with humidity), w (its mixing ratio, held; nan until
    needed), gps_m, gps_diff_m, gps_here, half and lay (the layer's
    (Rd/g0)/2 ln(p0/p) and Tv0 + Tv, for Column._sigma), and the
    uncertainty sums var_done,
    var_p, tm2, s2, p_start, sum_rh, sum_p, slope, sum_hum, tvh (see
    "Uncertainty")."""

    if _SLOTS_RECORD:
        __slots__ = _SLOTS_RECORD

    def __init__(self):
        nan = _NAN
        self.p_pa = self.t_k = self.rh_pct = self.tv_k = self.q = nan
        self.tsr = self.gpsr = self.nodes = self.t0 = self.tr = None
        self.flags = 0
        self.gph_m = self.height_m = self.rdh = self.rdt = self.dt = nan
        self.c = 0.0
        self.g_t = self.h_tm = nan
        self.h_t = self.h_p = self.h_rh = self.w = nan
        self.gps_m = self.gps_diff_m = nan
        self.gps_here = False
        self.big = False
        self.var_done = self.var_p = self.ct = self.tm2 = self.s2 = self.sum_rh = self.sum_p = 0.0
        self.slope = self.sum_hum = self.tvh = self.half = self.lay = 0.0
        self.p_start = nan


# --- checkpoint layout ----------------------------------------------------------
# the record fields a checkpoint stores for both records (floats, then ints);
# time stamps (tsr, tr) are stored relative to t0, t0 itself apart (see to_bytes)
_REC_F = ("p_pa", "t_k", "rh_pct", "tv_k", "gph_m", "c", "height_m", "rdh", "rdt", "tsr", "tr",
          "dt", "g_t", "h_tm", "h_t", "h_p", "h_rh", "w", "gps_m", "gps_diff_m", "var_done", "var_p",
          "ct", "tm2", "s2", "p_start", "sum_rh", "sum_p", "slope", "sum_hum", "tvh")
_REC_I = ("flags", "gps_here")
# the settings (the constructor is called with them on restore)
_CFG_F = ("lat_deg", "start_height_m", "anchor_p_pa", "sigma_p_pa", "sigma_t_k", "sigma_rh_pct",
          "bias_p_pa", "bias_t_k", "bias_rh_pct", "max_rate_m_s", "start_guard_m",
          "time_unit_s", "smooth_s", "launch_gpm", "burst_drop_gpm", "burst_rate_gpm_s",
          "float_s", "float_band_gpm", "landing_s", "landing_band_gpm", "tropopause_max_p_pa",
          "tropopause_layer_gpm", "rh_tol_pct", "geoid_undulation_m", "max_t_step_k",
          "max_t_rate_k_s", "max_t_gradient_k_gpm", "launch_rate_gpm_s")
_CFG_I = ("ellipsoid_code", "ice", "dry_fallback", "burst_readings", "takeover_readings",
          "track_sigma")
# the column's event state; the clocks (time stamps as given, or confirmed
# reading counts without time) are stored relative to t0, like the records'
_ST_F = ("smooth_gph_m", "_f_v", "max_gph_m", "launch_time_s",
         "burst_gph_m", "burst_time_s", "burst_p_pa", "float_gph_m", "float_time_s",
         "landing_time_s", "level_p_pa", "level_gph_m", "level_height_m", "level_t_k",
         "tropopause_p_pa", "tropopause_gph_m", "tropopause_t_k", "tropopause_time_s",
         "_e_p", "_e_g", "_e_t", "_f_dt", "_f_lo", "_f_hi", "_f_a", "_f_b", "_f_cx", "_f_cv",
         "_f_bv",
         "_max_clk", "_max_p", "_min_g", "_launch_line", "_fl_g", "_fl_lo", "_fl_hi", "_fl_clk",
         "_fl_end", "_land_lo", "_land_hi", "_land_end", "_tb_top", "_tb_g0", "_tb_g1", "_tb_st",
         "_tb_c0", "_tb_c1", "_tb_th", "_tp_g", "_tp_top", "_tp_th", "_tp_p", "_tp_t", "_tp_clk",
         "_n_g", "_n_h", "_n_k1", "_n_k2", "_n_lo", "_n_hi", "_var_anchor")
_CLK_F = ("_max_clk", "_fl_clk", "_fl_end", "_land_end", "_tb_c0", "_tb_c1", "_tp_clk")
_ST_I = ("count", "rejected", "retracted", "phase", "_has_b", "_e_n", "_lvl", "_burst_n",
         "_tb_n", "_tp_state", "_t0_int", "_t0_hi", "_t0_lo")
# what a restored value may be (tinygeo.checkpoint.check_values: name lo hi,
# "n" where nan means "not known yet"); kept as text: read only on a restore
_RESTORE_COL = ("count 0 1073741823;rejected 0 1073741823;retracted 0 1073741823;phase 0 4;"
                "_has_b 0 1;_e_n 0 1073741823;_lvl 0 16;_burst_n 0 100000;_tb_n 0 1073741823;"
                "_tp_state 0 3;_t0_int 0 1;_t0_hi -1073741824 1073741823;"
                # heights (gpm; -250000..250000 as a record's), bands (sigma_p_pa 10 kPa at
                # 0.1 Pa is 1e9 gpm of noise), times (s: a stamp of 2**63 units of 1e6 s)
                "smooth_gph_m -250000 250000 n;max_gph_m -250000 250000 n;"
                "burst_gph_m -250000 250000 n;float_gph_m -250000 250000 n;"
                "level_gph_m -250000 250000 n;level_height_m -300000 300000 n;"
                "tropopause_gph_m -250000 250000 n;_e_g -250000 250000 n;_min_g -250000 250000 n;"
                "_fl_g -250000 250000 n;_tb_g0 -250000 250000 n;_tb_g1 -250000 250000 n;"
                "_tp_g -250000 250000 n;_tb_top -260000 260000 n;_tp_top -260000 260000 n;"
                "_n_g -250000 250000 n;_n_lo -253000 253000 n;_n_hi -253000 253000 n;"
                "_n_h -300000 300000 n;_n_k1 0.5 2 n;_n_k2 -0.001 0.001 n;"
                "_launch_line -1e12 1e12 n;_fl_lo -1e12 1e12 n;_fl_hi -1e12 1e12 n;"
                "_land_lo -1e12 1e12 n;_land_hi -1e12 1e12 n;"
                "launch_time_s -1e25 1e25 n;burst_time_s -1e25 1e25 n;float_time_s -1e25 1e25 n;"
                "landing_time_s -1e25 1e25 n;tropopause_time_s -1e25 1e25 n;"
                "_max_clk -2e19 2e19 n;_fl_clk -2e19 2e19 n;_fl_end -2e19 2e19 n;"
                "_land_end -2e19 2e19 n;_tb_c0 -2e19 2e19 n;_tb_c1 -2e19 2e19 n;"
                "_tp_clk -2e19 2e19 n;"
                "burst_p_pa 0.1 120000 n;level_p_pa 1000 100000 n;tropopause_p_pa 0 120000 n;"
                "_e_p 0.1 120000 n;_max_p 0.1 120000 n;_tp_p 0 120000 n;"
                "level_t_k 150 350 n;tropopause_t_k 150 350 n;_e_t 150 350 n;_tp_t 150 350 n;"
                "_tb_st 0 4e11;_tb_th -1000 1000 n;_tp_th -1000 1000 n;_var_anchor 0 1e8;"
                # the track: the step, s; gains 0..1; 4 sigma ratios; the rate per step
                "_f_dt 0 1e25 n;_f_lo 0 1e25 n;_f_hi 0 1e25 n;_f_a 0 1 n;_f_b 0 1 n;_f_cx 0 4 n;"
                "_f_cv 0 6 n;_f_v -1e12 1e12 n;_f_bv -1e28 0 n")
WINDOW_TOL = 1e-6
"""How far a restored gain window (_f_lo, _f_hi) may lie from the one
Column._track makes for _f_dt (0.95 and 1.05 of it), relative to _f_dt: the
rounding of a float32 or 30-bit-float board that wrote it (a few 1e-7)."""
_RESTORE_REC = ("p_pa 0.1 120000;t_k 150 350;rh_pct -3 103 n;tv_k 150 350;"
                "gph_m -250000 250000;c -1 1;height_m -250000 250000 n;dt 0 1e25 n;"
                "rdh -600000 600000 n;rdt 0 1e25 n;tsr -4.62e18 4.62e18 n;"
                "tr -4.62e18 4.62e18 n;g_t -250000 250000 n;h_tm -300000 300000 n;"
                # (w, the held mixing ratio, kg/kg: eps e/(p - e) with only e < p
                # checked, so above 1 where e nears p at a pressure of a few Pa)
                "h_t 150 350 n;h_p 0.1 120000 n;h_rh -3 103 n;w 0 1e30 n;"
                "gps_m -1000 100000 n;gps_diff_m -400000 400000 n;"
                # the uncertainty sums (see "Uncertainty"): a half-layer is at most
                # (Rd/g0)/2 ln(1.2e6) = 205 gpm/K, dTv/dRH at most 132 K/%, 2**30 readings
                "var_done 0 1e30;var_p 0 1e20;ct -1000 1000;tm2 0 700;s2 0 1e12;"
                "sum_rh -1e15 1e15;sum_p -1e14 1e14;slope 0 1000;sum_hum -1e15 1e15;tvh 0 1000;"
                "p_start 0.1 120000 n;flags 0 1023;gps_here 0 1")
_MAGIC = b"TGCK"
_VERSION = 5
CHECKPOINT_BYTES = (7 + 8 * (len(_CFG_F) + len(_ST_F) + 1 + 2 * len(_REC_F))
                    + 4 * (len(_CFG_I) + len(_ST_I) + 2 * len(_REC_I)) + 4)
"""Size of a checkpoint blob, bytes (the frame of tinygeo.checkpoint)."""


class Column:
    """The running hypsometric integration of an atmospheric column (see the
    module docstring for every option, attribute, event and formula)."""

    # event state (declared for type checkers; set by _reset_events from _ST_F)
    smooth_gph_m: float; _f_v: float; max_gph_m: float
    launch_time_s: float; burst_gph_m: float; burst_time_s: float; burst_p_pa: float
    float_gph_m: float; float_time_s: float; landing_time_s: float; level_p_pa: float
    level_gph_m: float; level_height_m: float; level_t_k: float; tropopause_p_pa: float
    tropopause_gph_m: float; tropopause_t_k: float; tropopause_time_s: float
    _e_p: float; _e_g: float; _e_t: float; _f_dt: float; _f_lo: float; _f_hi: float
    _f_a: float; _f_b: float; _f_cx: float; _f_cv: float; _f_bv: float; _max_clk: float
    _max_p: float
    _min_g: float; _launch_line: float; _fl_g: float; _fl_lo: float; _fl_hi: float
    _fl_clk: float; _fl_end: float; _land_lo: float; _land_hi: float; _land_end: float
    _tb_top: float; _tb_g0: float; _tb_g1: float; _tb_st: float; _tb_c0: float; _tb_c1: float
    _tb_th: float; _tp_g: float; _tp_top: float; _tp_th: float; _tp_p: float; _tp_t: float
    _tp_clk: float
    _n_g: float; _n_h: float; _n_k1: float; _n_k2: float; _n_lo: float; _n_hi: float
    _var_anchor: float
    count: int; rejected: int; retracted: int; phase: int; _has_b: int; _e_n: int
    _lvl: int; _burst_n: int; _tb_n: int; _tp_state: int; _t0_int: int; _t0_hi: int; _t0_lo: int

    if _SLOTS_COLUMN:
        __slots__ = _SLOTS_COLUMN

    def __init__(self, lat_deg, start_height_m=0, anchor_p_pa=None, ellipsoid=WGS84,
                 ice=False, dry_fallback=False, sigma_p_pa=10, sigma_t_k=0.2,
                 sigma_rh_pct=1, bias_p_pa=50, bias_t_k=0.2, bias_rh_pct=3,
                 max_rate_m_s=200, start_guard_m=3000, time_unit_s=1, smooth_s=20,
                 launch_gpm=20, burst_drop_gpm=50, burst_rate_gpm_s=3, burst_readings=3,
                 float_s=600, float_band_gpm=150, landing_s=60, landing_band_gpm=10,
                 tropopause_max_p_pa=50000, tropopause_layer_gpm=100, rh_tol_pct=3,
                 takeover_readings=3, track_sigma=True, on_event=None,
                 geoid_undulation_m=None, max_t_step_k=3, max_t_rate_k_s=1,
                 max_t_gradient_k_gpm=0.1, launch_rate_gpm_s=0.5):
        # What only the constructor or a rejection uses is imported where it is
        # used: fewer names in the module's dict (RAM on MicroPython).
        from .errors import check_lat, check_range, check_flag, pressure_hint
        from .potential import series
        # --- settings (checked here; RangeError names the bad one)
        self.lat_deg = check_lat(lat_deg)
        self.ellipsoid = check_ellipsoid(ellipsoid)
        self.start_height_m = check_range("start_height_m", start_height_m, -1000, 100000, "m",
                                          "height above mean sea level in metres")
        self.ice = check_flag("ice", ice)
        self.dry_fallback = check_flag("dry_fallback", dry_fallback)
        self.sigma_p_pa = check_range("sigma_p_pa", sigma_p_pa, 0, 10000, "Pa")
        self.sigma_t_k = check_range("sigma_t_k", sigma_t_k, 0, 50, "K")
        self.sigma_rh_pct = check_range("sigma_rh_pct", sigma_rh_pct, 0, 100, "%")
        self.bias_p_pa = check_range("bias_p_pa", bias_p_pa, 0, 10000, "Pa")
        self.bias_t_k = check_range("bias_t_k", bias_t_k, 0, 50, "K")
        self.bias_rh_pct = check_range("bias_rh_pct", bias_rh_pct, 0, 100, "%")
        self.max_rate_m_s = None if max_rate_m_s is None else \
            check_range("max_rate_m_s", max_rate_m_s, 1, 10000, "m/s")
        self.start_guard_m = None if start_guard_m is None else \
            check_range("start_guard_m", start_guard_m, 100, 100000, "m")
        self.time_unit_s = check_range("time_unit_s", time_unit_s, 1e-6, 1e6, "s",
                                       "seconds per unit of time_s (0.001 for milliseconds)")
        self.smooth_s = check_range("smooth_s", smooth_s, 1, 10000, "s")
        self.launch_gpm = check_range("launch_gpm", launch_gpm, 0, 10000, "gpm")
        self.burst_drop_gpm = check_range("burst_drop_gpm", burst_drop_gpm, 0, 100000, "gpm")
        self.burst_rate_gpm_s = check_range("burst_rate_gpm_s", burst_rate_gpm_s, 0, 1000, "gpm/s")
        self.burst_readings = _count_setting("burst_readings", burst_readings, 1, 100000)
        self.float_s = check_range("float_s", float_s, 1, 1000000, "s")
        self.float_band_gpm = check_range("float_band_gpm", float_band_gpm, 0, 100000, "gpm")
        self.landing_s = check_range("landing_s", landing_s, 0, 1000000, "s")
        self.landing_band_gpm = check_range("landing_band_gpm", landing_band_gpm, 0, 10000, "gpm")
        self.tropopause_max_p_pa = check_range("tropopause_max_p_pa", tropopause_max_p_pa, 0,
                                               120000, "Pa")
        self.tropopause_layer_gpm = check_range("tropopause_layer_gpm", tropopause_layer_gpm, 1,
                                                5000, "gpm")
        self.rh_tol_pct = check_range("rh_tol_pct", rh_tol_pct, 0, 3, "%")
        self.takeover_readings = _count_setting("takeover_readings", takeover_readings, 2, 100)
        self.track_sigma = check_flag("track_sigma", track_sigma)
        self.on_event = on_event
        self.geoid_undulation_m = None if geoid_undulation_m is None else \
            check_range("geoid_undulation_m", geoid_undulation_m, -150, 150, "m",
                        "geoid undulation N in metres (Earth: about -107..+86 m)")
        self.max_t_step_k = None if max_t_step_k is None else \
            check_range("max_t_step_k", max_t_step_k, 0, 100, "K")
        self.max_t_rate_k_s = check_range("max_t_rate_k_s", max_t_rate_k_s, 0, 100, "K/s")
        self.max_t_gradient_k_gpm = check_range("max_t_gradient_k_gpm", max_t_gradient_k_gpm, 0,
                                                10, "K/gpm")
        self.launch_rate_gpm_s = check_range("launch_rate_gpm_s", launch_rate_gpm_s, 0, 1000,
                                             "gpm/s")
        # --- derived settings (so that feed builds no float for them)
        # the geopotential series at this latitude, evaluated once (tinygeo.potential)
        self._pc = series(self.lat_deg, self.ellipsoid)
        self._a_m = self.ellipsoid.a_m
        self._g_start = gph_series(self.start_height_m, self._pc, self._a_m)
        self.anchor_p_pa = None
        self._anchor = _NAN
        if anchor_p_pa is not None:
            self._anchor = check_range("anchor_p_pa", anchor_p_pa, 0.1, P_MAX_PA, "Pa",
                                       pressure_hint)
            why = self._guard(self._anchor)
            if why:
                raise RangeError("anchor_p_pa=%s %s" % (quote(anchor_p_pa), why))
            self.anchor_p_pa = self._anchor
        rate = _NAN if self.max_rate_m_s is None else self.max_rate_m_s
        self._max_rate = rate
        self._c_dt = self._c_lim = self._c_neg = _NAN   # max_rate_m_s dt for the latest dt
        # time stamps -> s: skipped for 1 (no float built per reading)
        self._unit = None if self.time_unit_s == 1 else self.time_unit_s
        u = self.time_unit_s
        self._float_u = self.float_s / u          # float_s and landing_s in stamp units
        self._land_u = self.landing_s / u
        # (Rd/g0) sigma_p: the height noise of a reading is _kz Tv / p (noise_gph_m);
        # the rate check allows 4 sqrt(2) of it
        self._kz = 2 * HALF_RG * self.sigma_p_pa
        self._kn = NOISE_K * _SQRT2 * self._kz
        # the temperature step allowed without time or climb, with the noise
        if self.max_t_step_k is None:
            self._t_lim = self._t_lim_neg = _NAN
        else:
            self._t_lim = self.max_t_step_k + NOISE_K * _SQRT2 * self.sigma_t_k
            self._t_lim_neg = -self._t_lim
        self._spk2 = HALF_RG * HALF_RG * self.sigma_p_pa * self.sigma_p_pa   # (K/2 sigma_p)^2
        self._st2 = self.sigma_t_k * self.sigma_t_k
        # --- state: the records of the look-back (_h the latest accepted
        # reading, _b the one before it) and scratch records; counters; the
        # recovery memory; the event state
        self._h = _Rec()
        self._b = _Rec()
        self._n = _Rec()
        self._m = _Rec()
        self._k = _Rec()
        self._cr = _Rec()          # the latest reading of the run (recovery memory)
        self._run = 0              # readings in the run
        self._run_b = 0            # of which the latest ones in a row agree with _b
        self._why = None           # (reason, message number, arguments) of the latest contradiction
        self._run_why = None       # the same for the run's first reading
        self._run_f = 0            # its pressure factor when it is a unit change (_jump), or 0
        self.count = 0
        self.rejected = 0
        self.retracted = 0
        self._has_b = 0
        self._n_g = self._n_h = self._n_k1 = self._n_k2 = _NAN
        self._n_lo = self._n_hi = _NAN
        self._var_anchor = 0.0
        self._lv = [_NAN] * 48       # gph, height, t_k of the latest EV_LEVEL's levels
        self._lv_first = 0           # the index in MANDATORY_PA of the lowest of them
        self._reset_events()

    def _reset_events(self):
        # the event state of a column that has confirmed nothing yet
        for n in _ST_F:
            if not n.startswith("_n_") and n != "_var_anchor":
                setattr(self, n, _NAN)
        self.phase = PH_WAIT
        self._e_n = self._lvl = self._burst_n = self._tb_n = self._tp_state = 0
        self.levels_n = 0
        self._tb_st = 0.0

    # ------------------------------------------------------------------ feed
    def feed(self, p_pa, t_k, rh_pct=None, time_s=None, gps_m=None):
        """Add one reading; return the bits (EV_*) of the events it caused, 0 if none.

        p_pa: pressure, Pa, 0.1..120000; t_k: temperature, K, 150..350;
        rh_pct: relative humidity, %, -rh_tol_pct..100 + rh_tol_pct, or None;
        time_s: time stamp in units of time_unit_s (int or float), or None;
        gps_m: GPS height, m, -1000..100000, nan (no fix) or None.
        Raises ReadingError (``.reason``); see the module docstring ("Checks
        and recovery") for what a rejected reading changes.
        """
        n = self._n
        self._check(n, p_pa, t_k, rh_pct, time_s, gps_m)      # 1. the values on their own
        h = self._h
        if self.count < 3:                                     # 2. the first readings
            return self._early(h, n)
        ok = self._compute(h, n) == 0                          # 3. on top of the latest reading
        if ok and not self._run:
            # the "there and back" test, only on a step above its floor (it
            # needs one: rare)
            if n.big:
                bits = self._spike(h, n)
                if bits >= 0:
                    return bits
            self._sigma(h, n)
            return self._advance()
        return self._recover(n, ok)                            # 4. or: look-back, recovery

    def _early(self, h, n):
        # the first three readings: the start, then as feed, with the "there
        # and back" test on every step (and, with two readings held, its
        # first-reading test)
        if self.count == 0:
            self._compute(None, n)
            self._sigma(None, n)
            return self._advance()
        ok = self._compute(h, n) == 0
        if ok and not self._run:
            if self.count == 2:
                bits = self._spike(h, n)
                if bits >= 0:
                    return bits
            self._sigma(h, n)
            return self._advance()
        return self._recover(n, ok)

    # ------------------------------------------------------------ 1. check
    def _check(self, n, p_pa, t_k, rh_pct, time_s, gps_m):
        # every value on its own: a real number, in range; written into record n
        # a float goes straight to the range test (the common case: no call);
        # nan and inf fail it and are then refused as numbers
        p = p_pa if p_pa.__class__ is float else self._num(p_pa, "p_pa", "Pa")
        if not P_MIN_PA <= p <= P_MAX_PA:
            self._num(p, "p_pa", "Pa")
            from .errors import pressure_hint
            hint = pressure_hint(p)
            self._bad("pressure", 1, "p_pa", quote(p_pa), P_MIN_PA, P_MAX_PA, "Pa",
                      "; " + hint if hint else "")
        t = t_k if t_k.__class__ is float else self._num(t_k, "t_k", "K")
        if not T_MIN_K <= t <= T_MAX_K:
            self._num(t, "t_k", "K")
            from .errors import temperature_hint
            hint = temperature_hint(t)
            self._bad("temperature", 1, "t_k", quote(t_k), T_MIN_K, T_MAX_K, "K",
                      "; " + hint if hint else "")
        # rh_pct, time_s, gps_m likewise: a float in range is taken as it is
        # (no call); anything else goes through _num and the full tests
        rh = _NAN
        if rh_pct is not None:
            rh = rh_pct
            if rh.__class__ is not float or not 0 <= rh <= 100:
                rh = self._num(rh_pct, "rh_pct", "%")
                if rh < 0 or rh > 100:     # floats are built only out here (rare)
                    tol = self.rh_tol_pct
                    if rh < -tol or rh > 100 + tol:
                        self._bad("humidity", 2, quote(rh_pct), -tol, 100 + tol)
        if time_s is not None and (time_s.__class__ is not float
                                   or not _TS_NEG <= time_s <= _TS_POS):
            if isinstance(time_s, bool) or not isinstance(time_s, int):
                time_s = self._num(time_s, "time_s", "s")   # ints stay ints (see "Time")
            if not _TS_NEG <= time_s <= _TS_POS:
                self._bad("time", 7, quote(time_s))
        gps = gps_m
        if gps is not None and (gps.__class__ is not float or not GPS_MIN_M <= gps <= GPS_MAX_M
                                or self.geoid_undulation_m is not None):
            gps = self._num(gps_m, "gps_m", "m", True)
            if gps == gps:
                if self.geoid_undulation_m is not None:
                    try:
                        gps = msl_height(gps, self.geoid_undulation_m)
                    except RangeError as e:
                        self._bad("gps", 4, quote(gps_m), e)
                if not GPS_MIN_M <= gps <= GPS_MAX_M:
                    self._bad("gps", 5, quote(gps_m), GPS_MIN_M, GPS_MAX_M)
        n.p_pa = p
        n.t_k = t
        n.rh_pct = rh
        n.tsr = time_s
        n.gpsr = gps
        # (1 - eps) e_s/p per %RH at this reading (moisture.rh_q): with a
        # humidity, or for the held humidity's cap and sigma; computed once per
        # reading, whatever the look-back computes on top of it
        if rh == rh or not self.dry_fallback or self.track_sigma:
            n.q = rh_q(t, p, self.ice)

    def _num(self, x, name, unit, nan_ok=False):
        # a finite float (the rule of tinygeo.errors.real); anything else is rejected
        v = x if isinstance(x, float) else real(x)
        if v is None or v == INF or v == NINF or (v != v and not nan_ok):
            self._bad("number", 0, name, quote(x), unit)
        return v

    def _guard(self, p):
        # the start guard: "" if the standard pressure altitude of p lies within
        # start_guard_m of start_height_m, else what is wrong
        if self.start_guard_m is None:
            return ""
        pa = altitude_at(p)
        if abs(pa - self._g_start) <= self.start_guard_m:
            return ""
        from .errors import pressure_hint
        hint = pressure_hint(p)
        return ("is at pressure altitude %.0f gpm, %.0f gpm from start_height_m=%g (start_guard_m="
                "%g); %s" % (pa, pa - self._g_start, self.start_height_m, self.start_guard_m,
                             hint or "wrong unit or start height? (start_guard_m=None: no guard)"))

    # ------------------------------------------------------------ 2. compute
    def _compute(self, a, n):
        # Fill record n (which holds the reading: p_pa, t_k, rh_pct, tsr, gpsr)
        # with the state after it on top of record a (None: n is the first
        # reading). Returns 0 if n agrees with a, else the number of the message
        # saying why (its reason and arguments in self._why). Raises
        # ReadingError only for what no look-back can mend (vapour pressure
        # above the air pressure, a virtual temperature out of range, the start
        # guard). Writes nothing but n and self._why.
        p = n.p_pa
        t = n.t_k
        rh = n.rh_pct
        why = 0
        flags = 0
        # -- humidity -> virtual temperature (see "Humidity")
        if rh == rh:
            # tinygeo.virtual_temperature (its moisture.tv_rh, written out to
            # share q): Tv = T/(1 - r), r = (1 - eps) e/p = rh q, dTv/dRH = Tv q
            q = n.q
            r = rh * q
            if r >= ONE_M_EPS:
                self._bad("humidity", 6, quote(rh), t, p, boiling_error(r * p / ONE_M_EPS, p))
            tv = t / (1 - r)
            if rh >= _RH_SLOPE_MIN:
                slope = tv * q
            else:
                slope = 0.0 if a is None else a.slope
            n.h_t = t
            n.h_p = p
            n.h_rh = rh
            n.w = _NAN
            tvh = 0.0
        else:
            if a is None:
                slope = 0.0
                n.h_t = n.h_p = n.h_rh = n.w = _NAN
            else:
                slope = a.slope
                n.h_t = a.h_t
                n.h_p = a.h_p
                n.h_rh = a.h_rh
                n.w = a.w
            held = not self.dry_fallback and n.h_p == n.h_p
            ws = 0.0
            if held or self.track_sigma:
                # the saturation mixing ratio here: e_s/p = x = 100 q/(1 - eps)
                x = n.q * 100 / ONE_M_EPS
                ws = 1.0 if x >= 0.5 else EPSILON * x / (1 - x)
            if not held:
                w = 0.0
                flags = FL_DRY
            else:
                w = n.w
                if w != w:
                    # the mixing ratio of the latest reading that had a humidity,
                    # kg/kg (its r < 1 - eps was checked: e < p): held from now on
                    if n.h_rh <= 0:
                        w = 0.0
                    else:
                        e = n.h_rh * rh_q(n.h_t, n.h_p, self.ice) * n.h_p / ONE_M_EPS
                        w = EPSILON * e / (n.h_p - e)
                    n.w = w
                flags = FL_HELD_MIXING
                if w > ws:
                    w = ws
                    flags = FL_HELD_MIXING | FL_CAPPED
            tv = tv_w(t, w)            # tinygeo.virtual_temperature_from_mixing_ratio
            tvh = _HUM_K * t * ws if self.track_sigma else 0.0   # Tv sigma of the unknown humidity, K
        if not T_MIN_K <= tv <= T_MAX_K:
            self._bad("temperature", 9, tv, t, p, T_MIN_K, T_MAX_K)
        # -- the layer from a (Kahan-summed hypsometric thickness)
        if a is None:
            off = self._guard(p)
            if off:
                self._bad("pressure", 13, quote(p), off)
            p0 = self._anchor
            tv0 = tv
            s = self._g_start
            c = 0.0
        else:
            p0 = a.p_pa
            tv0 = a.tv_k
            s = a.gph_m
            c = a.c
        tm2 = tv0 + tv
        if p0 != p0 or p == p0:   # first reading without anchor, or a repeated pressure
            dz = half = 0.0
            g = s
            big = False
            if a is not None:
                flags |= FL_SAME_P
        else:
            # tinygeo.layer_thickness (arguments checked), as its two products
            half = half_k_ln(p0, p)      # (Rd/g0)/2 ln(p0/p): also dz/dTv of either end
            dz = half * tm2
            if p > p0:
                flags |= FL_DESCENT
            # classic Kahan step: c carries the part of the sum lost so far
            y = dz - c
            g = s + y
            c = (g - s) - y
            # a step beyond the "there and back" test's floor (less 1 gpm, so
            # that the rounding of gph differences never hides one: feed's
            # pre-filter)
            big = dz > _SPIKE_PRE or dz < -_SPIKE_PRE
        n.tv_k = tv
        n.gph_m = g
        n.c = c
        # -- geometric height from the node pair (a new node waits in n.nodes)
        d = g - self._n_g
        if self._n_lo <= g <= self._n_hi:
            n.nodes = None
            h = self._n_h + d * (self._n_k1 + d * self._n_k2)
        else:
            guess = _NAN
            if -_NODE_W2 <= d <= _NODE_W2:
                # just out of the window: the old quadratic is within a few mm
                guess = self._n_h + d * (self._n_k1 + d * self._n_k2)
            nd = self._nodes(g, guess)
            n.nodes = nd
            d = g - nd[0]
            h = nd[1] + d * (nd[2] + d * nd[3])
        n.height_m = h
        # -- time, and the checks against a (see "Checks and recovery")
        # (tr, g_t, h_tm: of the latest timed reading; rdh, rdt: of the latest
        # timed step; each field written once: a's value where n keeps it)
        tsr = n.tsr
        dt = _NAN
        if a is None:
            n.t0 = tsr
            tr = None
            n.rdh = n.rdt = _NAN
        else:
            n.t0 = a.t0 if a.t0 is not None else tsr
            tr = a.tr
        if tsr is None:
            flags |= FL_NO_TIME
            n.tr = tr
            n.rdh = n.rdt = _NAN
            if a is None:
                n.g_t = n.h_tm = _NAN
            else:
                n.g_t = a.g_t
                n.h_tm = a.h_tm
        else:
            if tr is not None:
                # the difference of two stamps as given: ints subtract exactly,
                # before anything becomes a float (see "Time")
                dt = tsr - tr
                if self._unit is not None:
                    dt = dt * self._unit
                if dt < 0:
                    why = 3
                    self._why = ("time", 3, quote(tsr), self._rel(tr, n))
            n.tr = tsr
            n.g_t = g
            n.h_tm = h
        n.dt = dt
        if a is not None:
            # temperature step (see max_t_step_k); the noise is in _t_lim
            dtk = t - a.t_k
            if (dtk > self._t_lim or dtk < self._t_lim_neg) and why == 0:
                allow = self._t_lim + self.max_t_gradient_k_gpm * abs(dz)
                if dt == dt:
                    allow += self.max_t_rate_k_s * dt
                if abs(dtk) > allow:
                    why = 10
                    self._why = ("temperature", 10, quote(t), dtk, a.t_k, allow)
            if dt == dt and a.h_tm == a.h_tm:
                dh = h - a.h_tm
                if dt <= 0:
                    # a repeated time stamp (a coarse clock, a float32 stamp):
                    # no rate check is possible for this step; the look-back
                    # still compares the next reading with this one
                    flags |= FL_SAME_TIME
                    n.rdh = a.rdh
                    n.rdt = a.rdt
                else:
                    # rate_m_s = dh/dt, built where it is read
                    n.rdh = dh
                    n.rdt = dt
                    if dt != self._c_dt:
                        # max_rate_m_s dt, kept while dt repeats
                        self._c_dt = dt
                        self._c_lim = self._max_rate * dt
                        self._c_neg = -self._c_lim
                    if (dh > self._c_lim or dh < self._c_neg) and why == 0:
                        # beyond max_rate_m_s: still passes within the noise
                        # (built only out here, rarely)
                        noise = self._kn * tv / p
                        if abs(dh) > self._c_lim + noise:
                            why = 12
                            self._why = ("rate", 12, quote(p), dh / dt, dt, self.max_rate_m_s,
                                         noise)
            elif tsr is not None:
                n.rdh = a.rdh
                n.rdt = a.rdt
        # -- GPS
        gps = n.gpsr
        if gps is None or gps != gps:
            if gps is not None:
                flags |= FL_NO_GPS
            n.gps_here = False
            if a is None:
                n.gps_m = n.gps_diff_m = _NAN
            else:
                n.gps_m = a.gps_m
                n.gps_diff_m = a.gps_diff_m
        else:
            n.gps_here = True
            n.gps_m = gps
            n.gps_diff_m = h - gps
        n.flags = flags
        # the layer's terms for the uncertainty step (_sigma: only for a state
        # that is kept, so the look-back's trial computations build none of it)
        n.slope = slope
        n.tvh = tvh
        n.half = half
        n.lay = tm2
        n.big = big
        return why

    def _sigma(self, a, n):
        # Streaming first-order propagation (module docstring, "Uncertainty")
        # for record n on top of record a (None: n is the first reading):
        # lay = Tv0 + Tv of n's layer, half = (Rd/g0)/2 ln(p0/p) = dz/dTv of
        # either end of it. Run when n is kept (accepted, retracting the latest
        # reading, or joining a run).
        if not self.track_sigma:
            return
        half = n.half
        slope = n.slope
        if a is None:
            n.var_done = n.var_p = n.sum_p = n.sum_rh = n.sum_hum = 0.0
            if self._anchor != self._anchor:
                # the first reading: no layer yet; its sensitivities are all 0 so far
                n.ct = n.tm2 = 0.0
                n.p_start = n.p_pa
            else:
                # anchored start: the anchor is exact, the first reading is both ends
                n.ct = half + half
                n.tm2 = n.lay
                n.p_start = self._anchor
            sr = slope * self.sigma_rh_pct
            n.s2 = self._st2 + sr * sr
            return
        # the final sensitivities of reading a: dz_n/dp = HALF_RG pco, dz_n/dTv = ct
        tm2 = n.lay
        pco = (tm2 - a.tm2) / a.p_pa
        ct = a.ct + half
        n.var_done = a.var_done + ct * ct * a.s2
        n.var_p = a.var_p + pco * pco       # times (K/2 sigma_p)^2 where it is read
        n.sum_p = a.sum_p + pco
        n.sum_rh = a.sum_rh + ct * a.slope
        n.sum_hum = a.sum_hum + ct * a.tvh if a.tvh else a.sum_hum
        n.ct = half
        n.tm2 = tm2
        n.p_start = a.p_start
        if slope != a.slope:
            sr = slope * self.sigma_rh_pct
            n.s2 = self._st2 + sr * sr
        else:
            n.s2 = a.s2

    def _rel(self, stamp, r):
        # a time stamp as seconds since the first one (record r's t0)
        if stamp is None or r.t0 is None:
            return _NAN
        d = stamp - r.t0
        return d * self.time_unit_s

    def _nodes(self, g, guess=_NAN):
        # exact geometric height h at g (tinygeo.geometric_height with the
        # series evaluated once for the column's latitude: potential.height_series;
        # from a guess within a few mm, one Newton step: potential.newton_step)
        # and the quadratic in gph through it and the gph of h + D and h + 2D
        # (potential.gph_series); see "Geometric height". Returns the tuple
        # (g, h, k1, k2, lo, hi) and writes nothing.
        if not GPH_MIN_M <= g <= GPH_MAX_M:
            return (g, _NAN, _NAN, _NAN, g, g)
        c = self._pc
        a = self._a_m
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

    # ------------------------------------------------------------ 3. commit
    def _advance(self):
        # n is accepted on top of the latest reading, which is now final: its
        # events, then the records move on (n the latest, the latest the one
        # before), nothing copied
        n = self._n
        bits = 0
        if self.count:
            bits = self._confirm(self._h)
            self._has_b = 1
        self._n = self._b
        self._b = self._h
        self._h = n
        # _accept(n, 1) (its common case written out: no new height node)
        # and _tell(bits), without calls
        if n.nodes is None and self.count < COUNT_MAX:
            self.count += 1
            self._run = self._run_b = 0
        else:
            self._accept(n, 1)
        if bits and self.on_event is not None:
            self.on_event(self, bits)
        return bits

    def _accept(self, n, counted):
        # bookkeeping of a new latest reading: its height node, the counter,
        # the recovery memory cleared
        if n.nodes is not None:
            self._n_g, self._n_h, self._n_k1, self._n_k2, self._n_lo, self._n_hi = n.nodes
            n.nodes = None
        if counted and self.count < COUNT_MAX:
            self.count += 1
        self._run = self._run_b = 0

    def _tell(self, bits):
        if bits and self.on_event is not None:
            self.on_event(self, bits)
        return bits

    # ------------------------------------------------------------ 4. recover
    def _recover(self, n, ok):
        # n contradicts the latest reading (ok False; self._why says how), or a
        # run of readings that contradicted it is under way (ok: n agrees with
        # the latest reading too; n holds the state on top of it).
        # Look-back: a reading that agrees with the reading before the latest
        # one and with the run's latest reading, right after a run reading that
        # also agreed with the one before, retracts the latest, unless it also
        # agrees with the latest and fits it better (_fit). Else n joins
        # the run if it agrees with the run's latest reading and contradicts
        # the latest reading (or the latest is the unconfirmed first reading,
        # or the run has two readings already); a reading that contradicts the
        # latest one and not the run starts a new run; takeover_readings of
        # them in a row are followed. A reading that agrees with the latest one
        # and is not taken by the run is accepted (the run was a glitch).
        why_h = self._why       # how n contradicts the latest reading (when not ok)
        m = self._m
        _copy(m, n)        # the reading, into the second scratch record
        agree_b = self._has_b and self._compute(self._b, m) == 0
        # does n agree with the run's latest reading? (computed on top of it)
        k = self._k
        _copy(k, n)
        cr = self._cr
        in_run = self._run and self._compute(cr, k) == 0
        if agree_b and self._run_b and in_run and not self._run_f and (
                not ok or self._fit(self._b, m) < self._fit(self._h, n)):
            # two readings in a row agree with each other and with the reading
            # before the latest one, the first contradicted the latest and the
            # second contradicts it too or fits the one before better: the
            # latest was the bad one; go on from the one before
            return self._replace(m)
        if in_run and (not ok or not self._has_b or self._run >= 2):
            # the run goes on: n agrees with it, and contradicts the latest
            # reading, or the latest is the first one (not confirmed yet), or
            # the run already has two readings that agree with each other
            self._sigma(cr, k)
            new = k
            self._run += 1
        elif ok:
            self._sigma(self._h, n)
            return self._advance()
        else:
            # a new run: on top of the latest reading, or, when nothing is
            # confirmed yet (the first reading may be the bad one), afresh
            # from the start height
            self._run_why = why_h
            self._run_f = self._jump(n, why_h)
            if self._has_b:
                self._sigma(self._h, n)
                new = n
            else:
                self._compute(None, k)
                self._sigma(None, k)
                new = k
            self._run = 1
            self._run_b = 0
        if agree_b:
            self._run_b += 1
        else:
            self._run_b = 0
        # new becomes the run's latest reading; its slot takes the old one
        self._cr = new
        if new is k:
            self._k = cr
        else:
            self._n = cr
        if self._run < self.takeover_readings:
            self._why = self._run_why
            self._refuse()
        f = self._run_f
        if f:
            # refused, with a message, for as long as it lasts (the run kept
            # one short of a takeover)
            self._run = self.takeover_readings - 1
            u = ("kPa passed as Pa (x1000)?" if 500 <= f <= 2000 else
                 "hPa or mbar passed as Pa (x100)?" if 50 <= f <= 200 else
                 "a unit changed, or the sensor failed?")
            self._why = ("pressure", 8, quote(new.p_pa), f, self._h.p_pa, u)
            self._refuse()
        # takeover: the run's latest reading becomes the latest, the one before
        # it (cr) the one before; the old pair becomes scratch
        old_h = self._h
        old_b = self._b
        self._h = new
        self._b = cr
        self._cr = old_h
        if self._n is cr:
            self._n = old_b
        else:
            self._k = old_b
        new.flags |= FL_TAKEOVER
        if self._has_b:
            # the run's readings join the column's (they were rejected when
            # they came and count in both)
            self.count = min(self.count + self._run, COUNT_MAX)
        else:
            # restart: the column forgets its first reading (never confirmed)
            # and starts from the run's first reading
            self._reset_events()
            self.count = self._run
            self._inc_rejected()
        bits = self._confirm(cr)
        self._has_b = 1
        self._accept(new, 0)
        return self._tell(bits)

    def _replace(self, m):
        # retraction: record m (computed on top of the reading before the
        # latest one) replaces the latest reading, which is taken off
        self._sigma(self._b, m)
        self._m = self._h
        self._h = m
        m.flags |= FL_REPLACED
        self._inc_rejected()
        if self.retracted < COUNT_MAX:
            self.retracted += 1
        self._accept(m, 0)
        return 0

    def _spike(self, h, n):
        # The "there and back" test (see "Checks and recovery"), on heights
        # only, no clock: with b the reading before the latest one h, and n
        # the new reading (computed on top of h), T = _SPIKE_GPM + 8 sqrt(2)
        # noise_gph_m (the larger noise of b and n). h is retracted when n
        # agrees with b within T and h lies beyond T from both, on one side;
        # b, when the column holds two readings (b the first), when n agrees
        # with h within T and b lies beyond T from both (restart from h).
        # Returns the feed's bits, or -1: no spike (or the replacement
        # contradicts its base), n goes on as usual.
        b = self._b
        zb = b.tv_k / b.p_pa
        zn = n.tv_k / n.p_pa
        tt = _SPIKE_GPM + _SPIKE_KN * self._kz * (zb if zb > zn else zn)
        gb = b.gph_m
        gh = h.gph_m
        gn = n.gph_m
        if self.count == 2 and -tt <= gn - gh <= tt and (
                (gb - gh > tt and gb - gn > tt) or (gb - gh < -tt and gb - gn < -tt)):
            return self._restart(h, n)
        if -tt <= gn - gb <= tt and (
                (gh - gb > tt and gh - gn > tt) or (gh - gb < -tt and gh - gn < -tt)):
            m = self._m
            _copy(m, n)
            if self._compute(b, m):
                return -1
            return self._replace(m)
        return -1

    def _restart(self, h, n):
        # the first reading b was the bad one: the column restarts from h
        # (placed at start_height_m, or from the anchor, as a first reading)
        # with n on top of it; b is retracted
        if self._guard(h.p_pa):
            return -1
        k = self._k
        _copy(k, h)
        self._compute(None, k)
        k.nodes = None          # n's own nodes (if any) are taken by _accept
        m = self._m
        _copy(m, n)
        if self._compute(k, m):
            return -1
        self._sigma(None, k)
        self._sigma(k, m)
        self._k = self._b
        self._m = h
        self._b = k
        self._h = m
        m.flags |= FL_REPLACED
        self._reset_events()
        self.count = 2
        self._inc_rejected()
        if self.retracted < COUNT_MAX:
            self.retracted += 1
        bits = self._confirm(k)
        self._accept(m, 0)
        return self._tell(bits)

    def _jump(self, r, why):
        # A run that contradicts the column by its rate, starting with reading
        # r at a pressure a factor beyond UNIT_FACTOR from the latest accepted
        # reading's: no flight gets there between two readings, a unit
        # changed (hPa or kPa passed as Pa). The factor (latest over r), or 0
        # (kept for the run: _run_f); why: how r contradicts the latest
        if not self._has_b or why is None or why[0] != "rate":
            return 0
        f = self._h.p_pa / r.p_pa
        if f > UNIT_FACTOR or f * UNIT_FACTOR < 1:
            return f
        return 0

    def _fit(self, a, r):
        # how well reading r (computed on top of record a) fits a: the largest
        # share of its allowance that the temperature step and the height
        # change use (<= 1 when r agrees with a); only on the recovery path
        f = 0.0
        dt = r.dt
        if self._t_lim == self._t_lim:
            allow = self._t_lim + self.max_t_gradient_k_gpm * abs(r.gph_m - a.gph_m)
            if dt == dt:
                allow += self.max_t_rate_k_s * dt
            dtk = abs(r.t_k - a.t_k)
            if allow > 0:
                f = dtk / allow
            elif dtk > 0:
                f = INF          # no step allowed (every allowance set to 0) and one taken
        if dt == dt and dt > 0 and a.h_tm == a.h_tm and self._max_rate == self._max_rate:
            q = abs(r.height_m - a.h_tm) / (self._max_rate * dt + self._kn * r.tv_k / r.p_pa)
            if q > f:
                f = q
        return f

    def _refuse(self):
        # raise ReadingError for the contradiction in self._why
        w = self._why
        self._why = None
        if w is None:     # not reached: every contradiction sets its reason
            w = ("rate", 13, "?", "contradicts the latest reading")
        self._bad(w[0], w[1], *w[2:])

    def _inc_rejected(self):
        if self.rejected < COUNT_MAX:
            self.rejected += 1

    def _bad(self, reason, i, *args):
        # count the rejection and raise ReadingError(message i % args, reason).
        # The messages are one text, "|"-separated: on MicroPython every string
        # constant with a space is an object in RAM for the module's lifetime,
        # one text is one object (its characters stay in flash with ROMFS or
        # frozen bytecode); cut only here, when a reading is rejected.
        msg = ("%s=%s is not a finite number; pass one in %s"          # 0 name, value, unit
               "|%s=%s outside %g..%g %s%s"                              # 1 name, value, lo, hi, unit, "; hint"
               "|rh_pct=%s outside %g..%g %%; percent, not a 0..1 fraction (None if unknown)"
               "|time_s=%s before the latest reading's %.3f s (since the first stamp); time must "
               "not decrease (clock reset? a run of readings that agree takes over)"   # 3
               "|gps_m=%s (ellipsoidal): %s"                             # 4
               "|gps_m=%s outside %g..%g m; above sea level; ellipsoidal? set geoid_undulation_m"
               "|rh_pct=%s at t_k=%r, p_pa=%r: %s"                       # 6
               "|time_s=%s outside -2**62..2**62 (units of time_unit_s); a time stamp from a "
               "clock or tick counter (seconds since the epoch are 1.8e9)"   # 7
               "|p_pa=%s: readings that agree with each other are a factor %.4g (latest over "
               "them) from the latest accepted %g Pa and contradict its rate: no flight moves that far between them; "
               "%s the column refuses them until the pressure agrees with it again"   # 8
               "|virtual temperature %.2f K (t_k=%r, p_pa=%r) outside %g..%g K; check the units"
               "|t_k=%s jumps %+.1f K from %.2f K, over the %.1f K allowed; glitch? "
               "(max_t_step_k=None turns this check off)"                           # 10
               "|"                                                       # 11
               "|p_pa=%s moves the column %.0f m/s over %.3g s, beyond max_rate_m_s=%s with "
               "%.0f m of noise allowed; glitch, or wrong unit/time"     # 12
               "|p_pa=%s %s")                                            # 13
        # the i-th message, found without splitting the whole text
        a = 0
        while i:
            a = msg.find("|", a) + 1
            i -= 1
        b = msg.find("|", a)
        self._inc_rejected()
        raise ReadingError((msg[a:] if b < 0 else msg[a:b]) % args, reason)

    # ------------------------------------------------------------ 5. events
    def _confirm(self, r):
        # record r is final: the height track, then the events it causes, on
        # the sequence of confirmed readings (its predecessor in _e_p, _e_g,
        # _e_t). The clock of events is r's time stamp as given, or without
        # time the count of confirmed readings (each one second).
        g = r.gph_m
        t = r.t_k
        p = r.p_pa
        clk = r.tsr
        if clk is None:
            clk = self._e_n
        bits = 0
        if self._e_n == 0:
            self.smooth_gph_m = g
            self._f_v = 0.0
            self.max_gph_m = self._min_g = g
            self._launch_line = _NAN
            self._max_clk = clk
            self._max_p = p
            self._tb_top = g + self.tropopause_layer_gpm
            lvl = 0
            while lvl < 16 and MANDATORY_PA[lvl] > p:
                lvl += 1
            self._lvl = lvl
            if lvl < 16 and MANDATORY_PA[lvl] == p:
                bits = self._levels(p, p, g, g, t, t)
            self._layer_point(r, g, t, clk)
        else:
            dt = r.dt
            if dt != dt:
                dt = 1 if r.tsr is None else 0
            # the common case of each step below is written out here (no
            # call); its method does the rest
            if dt > 0:
                if self._f_lo <= dt <= self._f_hi:
                    # track: one step of _track's filter with its gains kept
                    pred = self.smooth_gph_m + self._f_v
                    res = g - pred
                    self.smooth_gph_m = pred + self._f_a * res
                    self._f_v = self._f_v + self._f_b * res
                else:
                    self._track(g, dt)
            ph = self.phase
            if ph <= PH_FLOAT:
                if self._lvl < 16 and MANDATORY_PA[self._lvl] >= p:
                    bits = self._levels(self._e_p, p, self._e_g, g, self._e_t, t)
                if self._tp_state != 3:
                    if g >= self._tb_top and self._tb_n:
                        bits |= self._layer_point(r, g, t, clk)    # a layer ends here
                    else:
                        # layer point: _layer_point within a layer (r joins its sums)
                        if self._tb_n == 0:
                            self._tb_g0 = g
                            self._tb_c0 = clk
                        if self._tb_n < COUNT_MAX:
                            self._tb_n += 1
                        self._tb_st += t
                        self._tb_g1 = g
                        self._tb_c1 = clk
            hs = self.smooth_gph_m
            if ph == PH_ASCENT and hs > self.max_gph_m and self._fl_lo <= hs <= self._fl_hi \
                    and clk < self._fl_end:
                # phase: _phase on a new highest point of the ascent within the
                # float band before float_s (no event)
                self.max_gph_m = hs
                self._max_clk = clk
                self._max_p = p
                self._burst_n = 0
            elif ph == PH_FLOAT and self._f_v >= self._f_bv and self._fl_lo <= hs <= self._fl_hi \
                    and hs <= self.max_gph_m:
                # phase: _phase while floating within the band, not sinking
                # (burst test) nor above the highest point (no event)
                self._burst_n = 0
            elif ph != PH_LANDED:        # (landed: _phase has nothing more to do)
                bits |= self._phase(r, ph, g, p, clk)
        self._e_p = p
        self._e_g = g
        self._e_t = t
        if self._e_n < COUNT_MAX:
            self._e_n += 1
        return bits

    def _track(self, z, dt):
        # one step of the critically damped g-h filter (see "Events"); the rate
        # is kept per step (_f_v, gpm per _f_dt seconds: one float fewer per
        # reading), smooth_rate_gpm_s = _f_v / _f_dt. A step within 5 % of the
        # one the gains were made for keeps them (a clock's jitter costs no
        # exp and square roots per reading; the track's step is then off by
        # at most 5 % of one step's motion, which the next residual absorbs)
        if not self._f_lo <= dt <= self._f_hi:
            # the gains and noise ratios for this step length; the rate
            # rescaled to it
            if self._f_dt == self._f_dt:
                self._f_v = self._f_v * dt / self._f_dt
            th = math.exp(-dt / self.smooth_s)
            u = 1 - th
            v = 1 + th
            v3 = v * v * v
            self._f_a = 1 - th * th
            self._f_b = u * u
            self._f_cx = NOISE_K * math.sqrt(u * (1 + 4 * th + 5 * th * th) / v3)
            self._f_cv = NOISE_K * math.sqrt(2 * u * u * u / v3)      # per step
            self._f_bv = -self.burst_rate_gpm_s * dt                   # per step
            self._f_dt = dt
            self._f_lo = dt * 0.95
            self._f_hi = dt * 1.05
        pred = self.smooth_gph_m + self._f_v
        res = z - pred
        self.smooth_gph_m = pred + self._f_a * res
        self._f_v = self._f_v + self._f_b * res

    @property
    def smooth_rate_gpm_s(self):
        """The height track's rate, gpm/s (0 before it has two readings)."""
        if self._f_dt != self._f_dt:
            return self._f_v
        return self._f_v / self._f_dt

    def _sx(self, r):
        # 4 sigma of the track's height, gpm, from record r's height noise
        # (built only where a threshold is reset or tested, not per reading)
        k = self._f_cx
        if k != k:
            k = NOISE_K
        return k * (self._kz * r.tv_k / r.p_pa)

    def _phase(self, r, ph, g, p, clk):
        # launch, float, burst and landing on the track (see "Events"). Each
        # threshold is set when its reference point is (re)set, so a reading
        # that moves nothing builds no float here.
        hs = self.smooth_gph_m
        if ph == PH_WAIT:
            if hs < self._min_g or self._launch_line != self._launch_line:
                if hs < self._min_g:
                    self._min_g = hs
                self._launch_line = self._min_g + self.launch_gpm + self._sx(r)
            elif hs >= self._launch_line and (r.tsr is None or self._climbing(r)):
                self.phase = PH_ASCENT
                self.launch_time_s = self._clock_s(clk, r)
                self.max_gph_m = hs
                self._max_clk = clk
                self._max_p = p
                self._float_ref(r, hs, clk)
                return EV_LAUNCH
            return 0
        if ph <= PH_FLOAT:
            if hs > self.max_gph_m:
                # a new highest point: no descent below it yet
                self.max_gph_m = hs
                self._max_clk = clk
                self._max_p = p
                self._burst_n = 0
            elif self._f_v < self._f_bv and self._sinking(r, hs):
                # sinking beyond the noise, below the highest point (the cheap
                # rate test first: while climbing no float is built here)
                self._burst_n += 1
                if self._burst_n >= self.burst_readings:
                    self.phase = PH_DESCENT
                    self.burst_gph_m = self.max_gph_m
                    self.burst_time_s = self._clock_s(self._max_clk, r)
                    self.burst_p_pa = self._max_p
                    self._land_ref(r, g, clk)
                    return EV_BURST
                return 0
            else:
                self._burst_n = 0
            if hs > self._fl_hi or hs < self._fl_lo:
                if ph == PH_ASCENT:
                    self._float_ref(r, hs, clk)
                elif hs > self._fl_hi:
                    if r.tsr is None or self._climbing(r):
                        self.phase = PH_ASCENT      # a new ascent after the float
                        self._float_ref(r, hs, clk)
                    else:
                        # a slow rise (a wave's crest): the float's top, _fl_g,
                        # rises to it, its band with it
                        self._fl_hi = hs + (self._fl_hi - self._fl_g)
                        self._fl_g = hs
                # (below the band while floating: nothing; a descent is the
                # burst test's)
            elif ph == PH_ASCENT and clk >= self._fl_end:
                self.phase = PH_FLOAT
                self.float_gph_m = self._fl_g
                self.float_time_s = self._clock_s(self._fl_clk, r)
                return EV_FLOAT
            return 0
        if ph == PH_DESCENT:
            if g > self._land_hi or g < self._land_lo:
                self._land_ref(r, g, clk)
            elif clk >= self._land_end:
                self.phase = PH_LANDED
                self.landing_time_s = self._clock_s(clk, r)
                return EV_LANDED
        return 0

    def _sinking(self, r, hs):
        # the burst test beyond the noise: the track burst_drop_gpm + 4 sigma_x
        # below its highest point and sinking faster than burst_rate_gpm_s +
        # 4 sigma_v (sigma_v = cv/cx sigma_x of the filter's noise ratios)
        sx = self._sx(r)
        if not self._f_cx > 0:      # (no step yet, or one too short to move the track)
            return False
        return hs < self.max_gph_m - self.burst_drop_gpm - sx and \
            self._f_v < self._f_bv - self._f_cv * (sx / self._f_cx)

    def _climbing(self, r):
        # the track rises faster than launch_rate_gpm_s + 4 sigma_v (the
        # launch's and a new ascent's rate test, with time; False before the
        # track has a step, or with a step too short to move it: cx 0)
        if not self._f_cx > 0:
            return False
        return self._f_v > self.launch_rate_gpm_s * self._f_dt + \
            self._f_cv * (self._sx(r) / self._f_cx)

    def _clock_s(self, clk, r):
        # an event clock as seconds since the first time stamp (without time:
        # the count of confirmed readings)
        if r.tsr is None:
            return clk * 1.0
        return self._rel(clk, r)

    def _float_ref(self, r, hs, clk):
        # a new reference height of the float test and its band (see EV_FLOAT)
        band = self.float_band_gpm + self._sx(r)
        self._fl_g = hs
        self._fl_lo = hs - band
        self._fl_hi = hs + band
        self._fl_clk = clk
        self._fl_end = clk + (self.float_s if r.tsr is None else self._float_u)

    def _land_ref(self, r, g, clk):
        # a new reference height of the landing test and its band (see EV_LANDED)
        band = self.landing_band_gpm + NOISE_K * (self._kz * r.tv_k / r.p_pa)
        self._land_lo = g - band
        self._land_hi = g + band
        self._land_end = clk + (self.landing_s if r.tsr is None else self._land_u)

    def _levels(self, p0, p, g0, g, t0, t):
        # report every mandatory level in [p, p0) not reported yet (ascent only)
        # (level_* the highest of them; each one's gph, height and
        # temperature into _lv, read as the property levels: no list or tuple
        # built here)
        bits = 0
        lvl = self._lvl
        while lvl < 16 and MANDATORY_PA[lvl] >= p:
            if not bits:
                self.levels_n = 0
                self._lv_first = lvl
            lev = MANDATORY_PA[lvl]
            if p0 == p:
                f = 0.0
            else:
                f = lnr(p0, lev) / lnr(p0, p)
            self.level_p_pa = lev
            gl = g0 + f * (g - g0)
            self.level_gph_m = gl
            self.level_t_k = t0 + f * (t - t0)
            if self._n_lo <= gl <= self._n_hi and self._n_h == self._n_h:
                # one Newton step from the node quadratic (a few mm off)
                d = gl - self._n_g
                self.level_height_m = newton_step(gl, self._n_h + d * (self._n_k1 + d * self._n_k2),
                                                  self._pc, self._a_m)
            elif GPH_MIN_M <= gl <= GPH_MAX_M:
                self.level_height_m = height_series(gl, self._pc, self._a_m)
            else:
                self.level_height_m = _NAN
            i = 3 * self.levels_n
            lv = self._lv
            lv[i] = gl
            lv[i + 1] = self.level_height_m
            lv[i + 2] = self.level_t_k
            self.levels_n += 1
            lvl += 1
            self._lvl = lvl
            bits = EV_LEVEL
        return bits

    def _layer_point(self, r, g, t, clk):
        # the tropopause search's profile: the confirmed ascent readings
        # averaged over layers of tropopause_layer_gpm (see EV_TROPOPAUSE): the
        # layer's mean temperature at the middle of its readings' gph range
        bits = 0
        if g >= self._tb_top and self._tb_n:
            gm = (self._tb_g0 + self._tb_g1) / 2
            tm = self._tb_st / self._tb_n
            # the pressure at gm, from this reading's (hypsometric, with its Tv;
            # the layer is thin)
            pm = r.p_pa * math.exp((g - gm) / (2 * HALF_RG * r.tv_k))
            bits = self._tropopause(gm, tm, pm, r)
            top = self._tb_top + self.tropopause_layer_gpm
            if g >= top:
                top = g + self.tropopause_layer_gpm
            self._tb_top = top
            self._tb_n = 0
            self._tb_st = 0.0
        if self._tb_n == 0:
            self._tb_g0 = g
            self._tb_c0 = clk
        if self._tb_n < COUNT_MAX:
            self._tb_n += 1
        self._tb_st += t
        self._tb_g1 = g
        self._tb_c1 = clk
        return bits

    def _tropopause(self, g, t, p, r):
        # one new point of the averaged profile; O(1) search (see EV_TROPOPAUSE)
        th = t + WMO_LAPSE_K_GPM * g
        below = self._tb_th          # theta of the point before (nan: none)
        self._tb_th = th
        st = self._tp_state
        if st != 0:
            if g > self._tp_top:
                if st == 2 or th >= self._tp_th:
                    self._tp_state = 3
                    self.tropopause_p_pa = self._tp_p
                    self.tropopause_gph_m = self._tp_g
                    self.tropopause_t_k = self._tp_t
                    self.tropopause_time_s = self._clock_s(self._tp_clk, r)
                    return EV_TROPOPAUSE
            elif th >= self._tp_th:
                self._tp_state = 2
                return 0
        # no candidate, or it was just rejected by this point: this point is the
        # next one if the lapse rate decreases to 2 K/km here (theta falls to it)
        if p <= self.tropopause_max_p_pa and below > th:
            self._tp_state = 1
            self._tp_g = g
            self._tp_top = g + WMO_DEPTH_GPM
            self._tp_th = th
            self._tp_p = p
            self._tp_t = t
            # the middle of the layer's clock span
            c0 = self._tb_c0
            self._tp_clk = c0 + (self._tb_c1 - c0) / 2
        else:
            self._tp_state = 0
        return 0

    @property
    def levels(self):
        """The mandatory levels the latest EV_LEVEL reported, lowest first: a
        list of (p_pa, gph_m, height_m, t_k), built when read (level_* is the
        last of them); empty before any and after a restore."""
        lv = self._lv
        k = self._lv_first
        return [(MANDATORY_PA[k + j], lv[3 * j], lv[3 * j + 1], lv[3 * j + 2])
                for j in range(self.levels_n)]

    # ------------------------------------------------------------ the latest reading
    @property
    def p_pa(self):
        """Pressure of the latest accepted reading, Pa."""
        return self._h.p_pa

    @property
    def t_k(self):
        """Temperature of the latest accepted reading, K."""
        return self._h.t_k

    @property
    def tv_k(self):
        """Virtual temperature used for the latest accepted reading, K."""
        return self._h.tv_k

    @property
    def rh_pct(self):
        """Relative humidity of the latest accepted reading, % (nan: not given)."""
        return self._h.rh_pct

    @property
    def time_s(self):
        """Time of the latest accepted reading, s since the first stamp (nan: none)."""
        return self._rel(self._h.tsr, self._h)

    @property
    def time_origin(self):
        """The first time stamp, as given (None before any)."""
        return self._h.t0

    @property
    def gph_m(self):
        """Geopotential height of the latest accepted reading, gpm."""
        return self._h.gph_m

    @property
    def height_m(self):
        """Geometric height above mean sea level of the latest accepted reading, m."""
        return self._h.height_m

    @property
    def rate_m_s(self):
        """Raw vertical speed between the two latest timed readings, m/s."""
        r = self._h
        return r.rdh / r.rdt

    @property
    def flags(self):
        """FL_* bits of the latest accepted reading."""
        return self._h.flags

    @property
    def gps_m(self):
        """The latest GPS height given, m above mean sea level (nan: none)."""
        return self._h.gps_m

    @property
    def gps_diff_m(self):
        """Barometric height minus the GPS height at the latest reading with one, m."""
        return self._h.gps_diff_m

    @property
    def noise_gph_m(self):
        """Height noise of one reading at the latest accepted reading, gpm:
        (Rd/g0) Tv sigma_p_pa / p (nan before the first reading)."""
        r = self._h
        return self._kz * r.tv_k / r.p_pa

    # ------------------------------------------------------------ uncertainty
    @property
    def sigma_random_m(self):
        """Random part of the 1-sigma height uncertainty, m (gpm), nan before
        the first reading or with track_sigma=False."""
        if self.count == 0 or not self.track_sigma:
            return _NAN
        r = self._h
        x = r.tm2 / r.p_pa               # -dz/dp at the latest reading, over K/2
        return math.sqrt(r.var_done + r.ct * r.ct * r.s2 + (r.var_p + x * x) * self._spk2)

    @property
    def sigma_bias_m(self):
        """Systematic part of the 1-sigma height uncertainty, m (gpm)."""
        if self.count == 0 or not self.track_sigma:
            return _NAN
        return math.sqrt(self._bias2())

    def _bias2(self):
        # the systematic variance (see "Uncertainty")
        r = self._h
        # (Rd/g0) ln(p0/p) dT: the sum of dz/dTv over all readings telescopes
        bt = 2 * half_k_ln(r.p_start, r.p_pa) * self.bias_t_k
        bh = (r.sum_rh + r.ct * r.slope) * self.bias_rh_pct
        bp = HALF_RG * (r.sum_p - r.tm2 / r.p_pa) * self.bias_p_pa
        bw = r.sum_hum + r.ct * r.tvh
        return bt * bt + bh * bh + bp * bp + bw * bw + self._var_anchor

    @property
    def sigma_m(self):
        """Total 1-sigma height uncertainty, m (gpm): random and systematic
        parts added in squares."""
        # sigma_random_m's and _bias2's steps written out here, with the
        # common case of half_k_ln (p_start/p far from 1: layers.lnr's
        # math.log branch, which |d| >= LN_SWITCH takes, d = (q - 1)/(q + 1);
        # _LN_Q_HI and _LN_Q_LO lie beyond its ends): a table writer reads
        # this once per row
        if self.count == 0 or not self.track_sigma:
            return _NAN
        h = self._h
        p = h.p_pa
        tm2 = h.tm2
        ct = h.ct
        x = tm2 / p
        r = math.sqrt(h.var_done + ct * ct * h.s2 + (h.var_p + x * x) * self._spk2)
        ps = h.p_start
        q = ps / p
        if q > _LN_Q_HI:
            bt = HALF_RG * math.log(q)
        elif q < _LN_Q_LO:
            bt = HALF_RG * -math.log(p / ps)
        else:
            bt = half_k_ln(ps, p)
        bt = 2 * bt * self.bias_t_k
        bh = (h.sum_rh + ct * h.slope) * self.bias_rh_pct
        bp = HALF_RG * (h.sum_p - tm2 / p) * self.bias_p_pa
        bw = h.sum_hum + ct * h.tvh
        return math.sqrt(r * r + (bt * bt + bh * bh + bp * bp + bw * bw + self._var_anchor))

    # ------------------------------------------------------------ GPS
    def reanchor_gps(self, sigma_gps_m=10):
        """Move the column so that the latest reading sits at its GPS height;
        return the shift applied, m (the former -gps_diff_m).

        Needs a gps_m with the latest accepted reading (TinygeoError
        otherwise). Every live height moves by the same geopotential shift
        (both readings of the look-back, the track, the highest and lowest
        points, the landing reference, the tropopause search); events already
        reported keep their values. The uncertainty restarts at this reading
        with sigma_gps_m (m, 1-sigma, default 10 m, a typical GPS vertical
        error; common practice) as a systematic part. Never called by the
        column itself.
        """
        from .errors import TinygeoError, check_range
        h = self._h
        if self.count == 0 or not h.gps_here:
            raise TinygeoError("reanchor_gps(): the latest reading has no gps_m; feed a reading "
                               "with gps_m first")
        sg = check_range("sigma_gps_m", sigma_gps_m, 0, 10000, "m")
        target = gph_series(h.gps_m, self._pc, self._a_m)
        d = target - h.gph_m
        old_h = h.height_m
        nd = self._nodes(target)
        self._n_g, self._n_h, self._n_k1, self._n_k2, self._n_lo, self._n_hi = nd
        h.height_m = nd[1]
        shift = h.height_m - old_h
        b = self._b
        for r in (h, b):
            r.gph_m = r.gph_m + d
            r.g_t = r.g_t + d
            r.h_tm = r.h_tm + shift
            r.c = 0.0
        b.height_m = b.height_m + shift
        h.gps_diff_m = h.height_m - h.gps_m
        for name in ("smooth_gph_m", "max_gph_m", "_min_g", "_launch_line", "_fl_g", "_fl_lo",
                     "_fl_hi", "_land_lo", "_land_hi", "_e_g", "_tb_top", "_tb_g0", "_tb_g1",
                     "_tp_g", "_tp_top"):
            setattr(self, name, getattr(self, name) + d)
        self._tb_th = self._tb_th + WMO_LAPSE_K_GPM * d
        self._tp_th = self._tp_th + WMO_LAPSE_K_GPM * d
        # uncertainty restarts here: the reading is the new (noisy) start
        h.var_done = h.var_p = h.ct = h.tm2 = h.sum_rh = h.sum_p = h.sum_hum = 0.0
        h.p_start = h.p_pa
        self._var_anchor = sg * sg
        return shift

    # ------------------------------------------------------------ checkpoint
    @property
    def ellipsoid_code(self):
        """0 for WGS84, 1 for GRS80 (the checkpoint's code); of a copy of
        either too (copy.deepcopy, pickle: tinygeo.constants.check_ellipsoid)."""
        return 0 if check_ellipsoid(self.ellipsoid) is WGS84 else 1

    def to_bytes(self):
        """The whole column (settings and state) as a checkpoint blob, bytes
        (CHECKPOINT_BYTES long; tinygeo.checkpoint's frame).

        Time stamps are stored relative to the first one as doubles, the
        first one itself as a double and, when it is an int, exactly as two
        int32 halves (a float32 board restores int stamps exactly)."""
        from .checkpoint import pack
        t0 = self._h.t0
        self._t0_int = self._t0_hi = self._t0_lo = 0
        if isinstance(t0, int) and not isinstance(t0, bool) and -(1 << 62) < t0 < (1 << 62):
            lo = t0 & 0xFFFFFFFF
            self._t0_int = 1
            self._t0_hi = t0 >> 32
            self._t0_lo = lo - (1 << 32) if lo & 0x80000000 else lo
        f = []
        for n in _CFG_F:
            v = getattr(self, n)
            f.append(_NAN if v is None else v)
        for n in _ST_F:
            v = getattr(self, n)
            if n in _CLK_F and t0 is not None and v == v:
                v = v - t0
            f.append(v)
        f.append(_NAN if t0 is None else t0 * 1.0)
        ints = [getattr(self, n) * 1 for n in _CFG_I]
        for n in _ST_I:
            ints.append(getattr(self, n))
        for r in (self._h, self._b):
            for n in _REC_F:
                v = getattr(r, n)
                if v is None:
                    v = _NAN
                elif n in ("tsr", "tr") and t0 is not None:
                    v = v - t0
                f.append(v)
            for n in _REC_I:
                ints.append(getattr(r, n) * 1)
        return pack(_MAGIC, _VERSION, f, ints)

    @classmethod
    def from_bytes(cls, blob, on_event=None):
        """A Column restored from a to_bytes() blob; continues bit-identically,
        except after a checkpoint taken while a run of contradicting readings
        was pending (the recovery memory is not stored: the next reading may
        be treated differently; see "Checkpoint" for the numbers).

        Raises CheckpointError (nothing restored) for a blob that is not
        bytes, truncated, too long, of another version, corrupted (CRC-32
        mismatch) or holding impossible settings or state.
        """
        from .checkpoint import unpack, check_finite, check_values
        from .errors import CheckpointError, TinygeoError
        nf = len(_CFG_F) + len(_ST_F) + 1 + 2 * len(_REC_F)
        ni = len(_CFG_I) + len(_ST_I) + 2 * len(_REC_I)
        f, ints = unpack(blob, _MAGIC, _VERSION, nf, ni, "column")
        check_finite(f, "column")
        k = len(_CFG_F)
        (lat, start, anchor, sp, st, srh, bp, bt, brh, rate, guard, unit, smooth, launch, drop,
         brate, fl_s, fl_band, land_s, land_band, trop, trop_layer, rh_tol, geoid, t_step, t_rate,
         t_grad, l_rate) = f[:k]
        ell, ice, dry, burst_n, takeover, track = ints[:len(_CFG_I)]
        if ell not in (0, 1):
            raise CheckpointError("column checkpoint holds an unknown ellipsoid code %d" % ell)

        def opt(x):
            return None if x != x else x
        try:
            col = cls(lat, start, opt(anchor), (WGS84, GRS80)[ell], ice, dry, sp, st, srh, bp, bt,
                      brh, opt(rate), opt(guard), unit, smooth, launch, drop, brate, burst_n, fl_s,
                      fl_band, land_s, land_band, trop, trop_layer, rh_tol, takeover, track,
                      on_event, opt(geoid), opt(t_step), t_rate, t_grad, l_rate)
        except TinygeoError as e:
            raise CheckpointError("column checkpoint holds settings the column refuses: %s" % e)
        j = len(_CFG_I)
        for n in _ST_I:
            setattr(col, n, ints[j])
            j += 1
        # the first time stamp: exact from its int32 halves when it was an int
        t0 = f[k + len(_ST_F)]
        if t0 != t0:
            t0 = None
        elif col._t0_int:
            t0 = (col._t0_hi << 32) + (col._t0_lo & 0xFFFFFFFF)

        def back(v):
            # a stored time relative to t0, as the stamp it was
            if v != v:
                return None
            if t0 is None:
                return v
            if col._t0_int and v == int(v):
                return t0 + int(v)
            return t0 + v
        i = k
        for n in _ST_F:
            v = f[i]
            if n in _CLK_F and t0 is not None and v == v:
                v = back(v)
            setattr(col, n, v)
            i += 1
        i += 1
        for r in (col._h, col._b):
            for n in _REC_F:
                v = f[i]
                if n in ("tsr", "tr"):
                    v = back(v)
                setattr(r, n, v)
                i += 1
            for n in _REC_I:
                setattr(r, n, ints[j])
                j += 1
            r.t0 = t0
            r.gps_here = bool(r.gps_here)
        check_values(col, _RESTORE_COL, "column")
        # the track's gain window: unknown with _f_dt, else the one _track
        # makes for it (a wider one would keep one step's gains for any step)
        fd, lo, hi = col._f_dt, col._f_lo, col._f_hi
        if fd != fd:
            bad = lo == lo or hi == hi
        else:
            tol = WINDOW_TOL * fd
            bad = not (abs(lo - fd * 0.95) <= tol and abs(hi - fd * 1.05) <= tol)
        if bad:
            raise CheckpointError("column checkpoint holds the gain window %r..%r s for steps of %r "
                                  "s; not written by this tinygeo" % (lo, hi, fd))
        if col._has_b != (1 if col.count >= 2 else 0):
            # a column holds the reading before the latest one from its second on
            raise CheckpointError("column checkpoint holds _has_b=%d with count=%d; not written "
                                  "by this tinygeo" % (col._has_b, col.count))
        # ties: a step is positive, and the track's rate within 1e9 gpm/s
        fdt = col._f_dt
        if fdt == fdt and not (fdt > 0 and -1e9 * fdt <= col._f_v <= 1e9 * fdt) or \
                not col._h.rdt > 0 and col._h.rdt == col._h.rdt or \
                not col._b.rdt > 0 and col._b.rdt == col._b.rdt:
            raise CheckpointError("column checkpoint holds a step of 0 s or a track rate beyond "
                                  "1e9 gpm/s; not written by this tinygeo")
        if col.count:
            check_values(col._h, _RESTORE_REC, "column")
        if col._has_b:
            check_values(col._b, _RESTORE_REC, "column")
        return col

    def __repr__(self):
        return "Column(lat_deg=%r, count=%d, p_pa=%r, gph_m=%r, phase=%d)" % (
            self.lat_deg, self.count, self.p_pa, self.gph_m, self.phase)


def _copy(x, n):
    # the reading of record n into record x (the look-back's trial records)
    x.p_pa = n.p_pa
    x.t_k = n.t_k
    x.rh_pct = n.rh_pct
    x.tsr = n.tsr
    x.gpsr = n.gpsr
    x.q = n.q


def _count_setting(name, value, lo, hi):
    # an int setting (not a bool) within lo..hi
    if isinstance(value, bool) or not isinstance(value, int) or value < lo or value > hi:
        raise RangeError("%s=%s outside %d..%d readings; pass an int" % (name, quote(value), lo, hi))
    return value
