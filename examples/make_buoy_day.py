"""Write examples/buoy_day.csv: an INVENTED day on a moored buoy (not a real
buoy, not real weather), for tinygeo.Station, the buoy logger example
(ports/micropython/buoy.py) and the station section of the README.

    python examples/make_buoy_day.py            rewrite examples/buoy_day.csv
    python examples/make_buoy_day.py --check    exit 1 if the file is stale

The scenario (UTC, seconds since midnight):
- the buoy: barometer 3.5 m above the water line, at 54.2 N;
- the weather: a low passes. The sea-level pressure falls from 1012 hPa
  at midnight to about 988 hPa at 14:30 and recovers to about 1002 hPa by
  midnight; the warm sector brings 13.5 degC and 97 % humidity, the cold
  front at 15:30 drops the temperature by 4 K and the humidity to 72 %;
- the waves: significant height 1 m, growing to 4.5 m at 15:00 with the low
  (six sinusoids of 5.5 to 12 s, fixed phases); the barometer rides them and
  reads rho g z less when lifted z metres (about 12 Pa/m), plus gusts at the
  inlet (noise of 1.5 to 6 Pa growing with the sea state);
- the sampling: the logger wakes every 10 minutes and reads the sensors at
  1 Hz for one minute (seconds 480..539 of each 10 minutes), a common
  power-saving scheme; pressure to 0.01 hPa, temperature to 0.01 degC,
  humidity to 0.1 %;
- the faults: the barometer is stuck from 09:00 to 10:00 (it repeats its
  last reading), one burst is lost at 19:30 (no readings for that 10
  minutes), and a few spikes: pressure +6.4 hPa at 05:18:20, -9.9 hPa at
  12:38:05, +3.3 hPa at 21:48:30, temperature +9 K at 17:08:44, humidity
  0.0 % at 22:28:10.

The sea-level pressure of the scenario is reduced to the barometer with the
hypsometric equation (g0, Rd of the U.S. Standard Atmosphere 1976 and the
virtual temperature of the air, Wallace and Hobbs 2006 eq. 3.16 with the
WMO-No. 8 Magnus form); this script uses no tinygeo code, so the file is a
truth to compare tinygeo with (tests/test_station.py does).
"""
import math
import os
import random
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "buoy_day.csv")

LAT_DEG = 54.2
HEIGHT_M = 3.5
SEED = 11
G0 = 9.80665
RD = 8.31432 / 0.0289644
EPS = 0.621981
WAVES = ((5.5, 0.8, 0.4), (6.7, 1.0, 2.2), (7.9, 1.0, 4.1), (9.2, 0.8, 1.0), (10.6, 0.6, 5.3),
         (12.0, 0.4, 3.0))      # (period s, relative amplitude, phase rad)
STUCK = (9 * 3600, 10 * 3600)
LOST_BURST = 19 * 3600 + 1800
P_SPIKES = {5 * 3600 + 1100: 640.0, 12 * 3600 + 2285: -990.0, 21 * 3600 + 2910: 330.0}
T_SPIKE = (17 * 3600 + 524, 9.0)
RH_SPIKE = 22 * 3600 + 1690


def mslp_pa(t):
    """The scenario's sea-level pressure, Pa."""
    h = t / 3600.0
    return 101200.0 - 900.0 * h / 24.0 - 1900.0 * math.exp(-0.5 * ((h - 14.5) / 3.5) ** 2)


def air(t):
    """The scenario's air temperature (K) and relative humidity (%)."""
    h = t / 3600.0
    front = 1.0 / (1.0 + math.exp(-(h - 15.5) / 0.15))        # 0 before, 1 after the front
    warm = 11.5 + 2.0 * math.exp(-0.5 * ((h - 13.0) / 3.0) ** 2)
    t_c = warm * (1 - front) + (9.5 - 0.1 * (h - 15.5)) * front
    rh = (88.0 + 9.0 * math.exp(-0.5 * ((h - 13.5) / 2.5) ** 2)) * (1 - front) + 72.0 * front
    return t_c + 273.15, rh


def hs_m(t):
    """Significant wave height, m."""
    h = t / 3600.0
    return 1.0 + 3.5 * math.exp(-0.5 * ((h - 15.0) / 4.0) ** 2)


def station_pa(t, tk, rh):
    """The scenario's pressure at the barometer's mean height, Pa: the
    sea-level pressure lifted HEIGHT_M with the hypsometric equation."""
    tc = tk - 273.15
    e = rh / 100.0 * 611.2 * math.exp(17.62 * tc / (243.12 + tc))
    p0 = mslp_pa(t)
    tv = tk / (1 - e / p0 * (1 - EPS))
    return p0 * math.exp(-G0 * HEIGHT_M / (RD * tv))


def heave_m(t):
    """The barometer's height above its mean, m (std = Hs/4)."""
    norm = math.sqrt(sum(a * a for _, a, _ in WAVES) / 2.0)
    s = sum(a * math.sin(2 * math.pi * t / per + ph) for per, a, ph in WAVES)
    return hs_m(t) / 4.0 * s / norm


def rows():
    """(time_s, pressure hPa text, temperature degC text, rh % text) of every reading."""
    rng = random.Random(SEED)
    stuck_text = None
    for slot in range(144):
        start = slot * 600 + 480
        if start - 480 == LOST_BURST:
            continue
        for ts in range(start, start + 60):
            tk, rh = air(ts)
            p = station_pa(ts, tk, rh)
            rho = p / (RD * tk)
            p -= rho * G0 * heave_m(ts)
            p += rng.gauss(0.0, 1.0 + 1.2 * hs_m(ts))          # gusts at the inlet, sensor noise
            tk += rng.gauss(0.0, 0.02)
            rh += rng.gauss(0.0, 0.3)
            p += P_SPIKES.get(ts, 0.0)
            if ts == T_SPIKE[0]:
                tk += T_SPIKE[1]
            if ts == RH_SPIKE:
                rh = 0.0
            p_text = "%.2f" % (p / 100.0)
            if STUCK[0] <= ts < STUCK[1]:
                if stuck_text is None:
                    stuck_text = p_text
                p_text = stuck_text
            yield ts, p_text, "%.2f" % (tk - 273.15), "%.1f" % min(rh, 100.0)


def text():
    out = [
        "# invented buoy day made by examples/make_buoy_day.py (not a real buoy, not real "
        "weather); seed=%d" % SEED,
        "# lat_deg=%g height_m=%g start_height_m=%g" % (LAT_DEG, HEIGHT_M, HEIGHT_M),
        "# barometer %g m above the water line; 1 Hz for one minute every 10 minutes; "
        "time_s = seconds since 00:00 UTC" % HEIGHT_M,
        "time_s,pressure_hpa,temp_c,rh_pct",
    ]
    for r in rows():
        out.append("%d,%s,%s,%s" % r)
    return "\n".join(out) + "\n"


def main(argv):
    t = text()
    if "--check" in argv:
        try:
            with open(OUT) as f:
                same = f.read() == t
        except OSError:
            same = False
        if not same:
            print("stale: %s (run python examples/make_buoy_day.py)" % OUT)
            return 1
        return 0
    with open(OUT, "w") as f:
        f.write(t)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
