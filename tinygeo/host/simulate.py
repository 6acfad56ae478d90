"""Invent a balloon flight as a log that ``tinygeo replay`` reads.

For firmware tests only: the data are made up. Everything random comes from
one ``random.Random(seed)``, drawn in a fixed order, so a seed always gives
the same bytes.

The invented atmosphere
    Temperature: U.S. Standard Atmosphere 1976 (tinygeo.standard) at the
    geopotential height plus a seeded perturbation (an offset and three
    sinusoids in height, a few kelvin). Relative humidity: a made-up profile
    falling from the surface value to a few percent at 11 km, with one moist
    layer and a sinusoidal wobble. Pressure: the hydrostatic equation
    d(ln p)/d(gph) = -g0 / (Rd Tv) (U.S. Standard Atmosphere 1976, eq. 33a
    written for geopotential height; Rd and g0 from tinygeo.constants)
    integrated upwards from the site by the trapezoid rule in 5 gpm steps,
    with the virtual temperature of tinygeo.moisture (WMO-No. 8 / exact form),
    starting from the standard pressure at the site times a seeded factor
    within +-1 %. Geometric and geopotential heights are related by
    tinygeo.potential (normal gravity field of the chosen latitude).

The invented flight
    On the ground for ``wait_s``; then up at ``ascent_m_s`` (with a slow
    +-8 % wobble) to ``burst_m``; then down under a parachute whose rate is
    ``descent_m_s`` at sea-level density and grows as sqrt(rho0/rho) (drag
    balance: weight = 1/2 rho v^2 Cd A with constant Cd A -- common practice);
    then ``ground_s`` more on the ground at the site's height.

The invented sensor
    Calibration offsets drawn once per flight (Gaussian, 1-sigma ``bias_*``),
    Gaussian noise per reading (``sigma_*``), quantisation (``*_step``), whole lines
    dropped (``dropout``), empty humidity / GPS fields, spikes (a pressure
    off by 3-15 % or a temperature off by 8-25 K, probability ``spikes``),
    and clock jitter (Gaussian, ``jitter_s``) on the written time. No faults
    in the first 10 readings, so the column starts on good data.

The truth file (CSV after one ``#`` comment line that gives the seed and the
calibration offsets drawn) has, for every written line, the line number in the log, the
true time, pressure, temperature, humidity, geopotential and geometric height,
the flight phase and which spike (if any) that line carries.
"""
import datetime
import math
import random

from tinygeo import moisture, potential, standard
from tinygeo.constants import G0, RD
from tinygeo.host.options import Outputs, UsageError, check_paths

RHO0 = 101325.0 / (RD * 288.15)   # sea-level standard density, kg/m^3 [USSA76 Table I]
STEP_GPM = 5.0                    # integration step of the pressure table, gpm


class Params:
    """Simulation settings; every attribute can be given to the constructor."""

    defaults = (
        ("seed", 1), ("lat_deg", 47.3), ("site_m", 420.0), ("ascent_m_s", 5.0),
        ("burst_m", 24000.0), ("descent_m_s", 5.5), ("interval_s", 2.0),
        ("wait_s", 60.0), ("ground_s", 120.0), ("rh_surface_pct", 70.0),
        ("perturb_k", 2.0), ("sigma_p_pa", 3.0), ("sigma_t_k", 0.15),
        ("sigma_rh_pct", 1.5), ("bias_p_pa", 20.0), ("bias_t_k", 0.1),
        ("bias_rh_pct", 2.0), ("sigma_gps_m", 4.0), ("p_step_pa", 1.0),
        ("t_step_k", 0.01), ("rh_step_pct", 0.1), ("dropout", 0.002),
        ("rh_dropout", 0.005), ("gps_dropout", 0.01), ("spikes", 0.002),
        ("jitter_s", 0.02), ("gps", True), ("dew_point", False),
        ("iso_start", None), ("delimiter", ","))

    def __init__(self, **kw):
        for k, v in self.defaults:
            setattr(self, k, kw.pop(k, v))
        if kw:
            raise TypeError("unknown simulation setting(s): %s" % ", ".join(sorted(kw)))


def check(params):
    """Raise ValueError with a clear message when a setting cannot work."""
    p = params
    if not -89.0 <= p.lat_deg <= 89.0:
        raise ValueError("--lat %g outside -89..89 degrees" % p.lat_deg)
    if not -400.0 <= p.site_m <= 5000.0:
        raise ValueError("--elevation %g outside -400..5000 m" % p.site_m)
    if not p.site_m + 500.0 <= p.burst_m <= 45000.0:
        raise ValueError("--burst %g must lie between the site + 500 m (%g) and 45000 m"
                         % (p.burst_m, p.site_m + 500.0))
    for name, lo, hi in (("ascent_m_s", 0.5, 20.0), ("descent_m_s", 1.0, 30.0),
                         ("interval_s", 0.05, 60.0), ("wait_s", 0.0, 36000.0),
                         ("ground_s", 0.0, 36000.0), ("rh_surface_pct", 0.0, 100.0),
                         ("perturb_k", 0.0, 15.0), ("sigma_p_pa", 0.0, 500.0),
                         ("sigma_t_k", 0.0, 5.0), ("sigma_rh_pct", 0.0, 20.0),
                         ("bias_p_pa", 0.0, 500.0), ("bias_t_k", 0.0, 5.0),
                         ("bias_rh_pct", 0.0, 20.0), ("sigma_gps_m", 0.0, 100.0), ("p_step_pa", 0.0, 100.0),
                         ("t_step_k", 0.0, 1.0), ("rh_step_pct", 0.0, 5.0),
                         ("dropout", 0.0, 0.5), ("rh_dropout", 0.0, 1.0),
                         ("gps_dropout", 0.0, 1.0), ("spikes", 0.0, 0.2)):
        v = getattr(p, name)
        if not (lo <= v <= hi):
            raise ValueError("%s=%g outside %g..%g" % (name, v, lo, hi))
    if not 0.0 <= p.jitter_s <= 0.2 * p.interval_s:
        raise ValueError("jitter_s=%g outside 0..%g s (a fifth of the interval, so time "
                         "stays in order)" % (p.jitter_s, 0.2 * p.interval_s))
    if p.iso_start is not None:
        _parse_start(p.iso_start)


def _parse_start(text):
    s = text.strip()
    if s.endswith("Z") or s.endswith("z"):
        s = s[:-1] + "+00:00"
    try:
        dt = datetime.datetime.fromisoformat(s)
    except ValueError:
        raise ValueError("--start %r is not an ISO-8601 time such as 2026-05-04T09:30:00Z" % text)
    if dt.tzinfo is None:
        dt = dt.replace(tzinfo=datetime.timezone.utc)
    return dt.astimezone(datetime.timezone.utc)


class Atmosphere:
    """The invented atmosphere of one seed (temperature, humidity, pressure
    against geopotential height)."""

    def __init__(self, params, rng):
        p = params
        self.lat_deg = p.lat_deg
        self.t_offset = rng.uniform(-1.0, 1.0) * p.perturb_k
        self.waves = [(rng.uniform(0.3, 1.0) * p.perturb_k * 0.5, lam,
                       rng.uniform(0.0, 2.0 * math.pi)) for lam in (1700.0, 4300.0, 9100.0)]
        self.rh0 = p.rh_surface_pct
        self.moist_base = rng.uniform(1500.0, 5000.0)
        self.moist_top = self.moist_base + rng.uniform(400.0, 1200.0)
        self.rh_phase = rng.uniform(0.0, 2.0 * math.pi)
        self.gph0 = potential.geopotential_height(p.site_m, p.lat_deg)
        top = potential.geopotential_height(p.burst_m, p.lat_deg) + 200.0
        n = int((top - self.gph0) / STEP_GPM) + 2
        ps = standard.standard_pressure(self.gph0) * (1.0 + rng.uniform(-0.01, 0.01))
        # hydrostatic table: ln p at gph0 + k STEP_GPM (bounded by the burst height)
        lnp = [math.log(ps)]
        tv_prev = self._tv(self.gph0, ps)
        c = G0 * STEP_GPM / RD
        for k in range(1, n):
            g = self.gph0 + k * STEP_GPM
            guess = math.exp(lnp[-1] - c / tv_prev)
            tv = self._tv(g, guess)
            lnp.append(lnp[-1] - c * 0.5 * (1.0 / tv_prev + 1.0 / tv))
            tv_prev = tv
        self.lnp = lnp

    def t_k(self, gph_m):
        t = standard.standard_temperature(gph_m) + self.t_offset * max(0.0, 1.0 - gph_m / 15000.0)
        for a, lam, ph in self.waves:
            t += a * math.sin(2.0 * math.pi * gph_m / lam + ph)
        return t

    def rh_pct(self, gph_m):
        if self.moist_base <= gph_m <= self.moist_top:
            return 96.0
        if gph_m < 11000.0:
            rh = self.rh0 * (1.0 - 0.85 * gph_m / 11000.0)
        else:
            rh = self.rh0 * 0.15 * math.exp(-(gph_m - 11000.0) / 4000.0)
        rh += 8.0 * math.sin(2.0 * math.pi * gph_m / 2500.0 + self.rh_phase)
        return min(100.0, max(1.0, rh))

    def _tv(self, gph_m, p_pa):
        return moisture.virtual_temperature(self.t_k(gph_m), p_pa, self.rh_pct(gph_m))

    def p_pa(self, gph_m):
        x = (gph_m - self.gph0) / STEP_GPM
        k = int(math.floor(x))
        k = max(0, min(k, len(self.lnp) - 2))
        f = x - k
        return math.exp(self.lnp[k] * (1.0 - f) + self.lnp[k + 1] * f)

    def density(self, gph_m):
        p = self.p_pa(gph_m)
        return p / (RD * self._tv(gph_m, p))


def _quantise(x, step):
    return x if step <= 0.0 else round(x / step) * step


def simulate(params, out, truth=None):
    """Write the invented log to ``out`` (and the truth to ``truth``); return
    the number of readings written."""
    check(params)
    p = params
    rng = random.Random(p.seed)
    atm = Atmosphere(p, rng)
    d = p.delimiter
    start = _parse_start(p.iso_start) if p.iso_start else None
    out.write("# invented flight made by 'tinygeo simulate' (not a real sounding); seed=%d\n" % p.seed)
    out.write("# lat_deg=%s start_height_m=%s\n" % (_g(p.lat_deg), _g(p.site_m)))
    # the random error of a reading announced to the replay: noise and
    # quantisation (uniform over one step: variance step^2/12, common practice)
    out.write("# sensor sigma_p_pa=%s sigma_t_k=%s sigma_rh_pct=%s bias_p_pa=%s bias_t_k=%s "
              "bias_rh_pct=%s\n" % (_g(_rss(p.sigma_p_pa, p.p_step_pa)),
                                   _g(_rss(p.sigma_t_k, p.t_step_k)),
                                   _g(_rss(p.sigma_rh_pct, p.rh_step_pct)),
                                   _g(p.bias_p_pa), _g(p.bias_t_k), _g(p.bias_rh_pct)))
    # calibration offsets of this sensor, the same for the whole flight
    off_p = rng.gauss(0.0, 1.0) * p.bias_p_pa
    off_t = rng.gauss(0.0, 1.0) * p.bias_t_k
    off_rh = rng.gauss(0.0, 1.0) * p.bias_rh_pct
    if truth is not None:
        truth.write("# true values of the invented flight in the log with seed=%d; calibration "
                    "offsets of its sensor: p_pa=%.3f t_k=%.4f rh_pct=%.3f\n"
                    % (p.seed, off_p, off_t, off_rh))
        truth.write("line,time_s,p_pa,t_k,rh_pct,gph_m,height_m,phase,spike\n")
    cols = ["utc" if start else "time_s", "pressure_hpa", "temp_c",
            "dewpoint_c" if p.dew_point else "rh_pct"]
    if p.gps:
        cols.append("gps_m")
    out.write(d.join(cols) + "\n")
    line = 5

    z = p.site_m
    phase = "wait"
    wobble = rng.uniform(0.0, 2.0 * math.pi)
    landed_t = None
    written = 0
    i = 0
    while True:
        t = i * p.interval_s
        gph = potential.geopotential_height(z, p.lat_deg)
        pt = atm.p_pa(gph)
        tt = atm.t_k(gph)
        rht = atm.rh_pct(gph)
        # draw every random number every time, so the stream stays aligned
        u_drop, u_rh, u_gps, u_spike, u_kind, u_size = (rng.random() for _ in range(6))
        n_p, n_t, n_rh, n_gps, n_clock = (rng.gauss(0.0, 1.0) for _ in range(5))
        faults = i >= 10
        if not (faults and u_drop < p.dropout):
            spike = "-"
            pm = pt + off_p + n_p * p.sigma_p_pa
            tm = tt + off_t + n_t * p.sigma_t_k
            if faults and u_spike < p.spikes:
                if u_kind < 0.5:
                    spike = "pressure"
                    pm *= 1.0 + (0.03 + 0.12 * u_size) * (1.0 if u_kind < 0.25 else -1.0)
                else:
                    spike = "temperature"
                    tm += (8.0 + 17.0 * u_size) * (1.0 if u_kind < 0.75 else -1.0)
            pm = _quantise(pm, p.p_step_pa)
            tm = _quantise(tm - 273.15, p.t_step_k)
            rhm = min(100.0, max(0.0, rht + off_rh + n_rh * p.sigma_rh_pct))
            rhm = _quantise(rhm, p.rh_step_pct)
            ts = t + n_clock * p.jitter_s
            fields = [_time_text(ts, start), "%.2f" % (pm / 100.0), "%.2f" % tm]
            if faults and u_rh < p.rh_dropout:
                fields.append("")
            elif p.dew_point:
                fields.append(_dew_point_c(tm + 273.15, pm, rhm))
            else:
                fields.append("%.1f" % rhm)
            if p.gps:
                if faults and u_gps < p.gps_dropout:
                    fields.append("")
                else:
                    fields.append("%.1f" % (z + n_gps * p.sigma_gps_m))
            out.write(d.join(fields) + "\n")
            if truth is not None:
                truth.write("%d,%.3f,%.3f,%.4f,%.3f,%.4f,%.4f,%s,%s\n"
                            % (line, t, pt, tt, rht, gph, z, phase, spike))
            line += 1
            written += 1
        # move on to the next sample
        dt = p.interval_s
        t_next = t + dt
        if phase == "wait":
            if t_next >= p.wait_s:
                phase = "ascent"
        elif phase == "ascent":
            w = p.ascent_m_s * (1.0 + 0.08 * math.sin(2.0 * math.pi * t / 600.0 + wobble))
            z += w * dt
            if z >= p.burst_m:
                z = p.burst_m
                phase = "descent"
        elif phase == "descent":
            v = p.descent_m_s * math.sqrt(RHO0 / atm.density(gph))
            z -= v * dt
            if z <= p.site_m:
                z = p.site_m
                phase = "landed"
                landed_t = t_next
        elif t_next > landed_t + p.ground_s:
            break
        i += 1
    return written


def _rss(sigma, step):
    return math.sqrt(sigma * sigma + step * step / 12.0)


def _g(x):
    return ("%.6f" % x).rstrip("0").rstrip(".")


def _time_text(ts, start):
    if start is None:
        return "%.2f" % ts
    dt = start + datetime.timedelta(seconds=round(ts, 3))
    return dt.strftime("%Y-%m-%dT%H:%M:%S.") + "%03dZ" % (dt.microsecond // 1000)


def _dew_point_c(t_k, p_pa, rh_pct):
    if rh_pct <= 0.0:
        return ""
    e = moisture.vapour_pressure(t_k, p_pa, rh_pct)
    return "%.2f" % (moisture.dew_point(e, p_pa) - 273.15)


def command(a, stdin, stdout, stderr):
    """The ``simulate`` command (``a``: its parsed options); returns the exit status."""
    p = Params(
        seed=a.seed, lat_deg=a.lat, site_m=a.elevation, ascent_m_s=a.ascent_rate, burst_m=a.burst,
        descent_m_s=a.descent_rate, interval_s=a.interval, wait_s=a.wait, ground_s=a.ground,
        rh_surface_pct=a.rh_surface, perturb_k=a.perturb, sigma_p_pa=a.sigma_p, sigma_t_k=a.sigma_t,
        sigma_rh_pct=a.sigma_rh, bias_p_pa=a.bias_p, bias_t_k=a.bias_t, bias_rh_pct=a.bias_rh,
        sigma_gps_m=a.sigma_gps, dropout=a.dropout, spikes=a.spikes,
        jitter_s=a.jitter, gps=not a.no_gps, dew_point=a.dew_point, iso_start=a.start,
        delimiter="\t" if a.tsv else ",")
    if a.clean:
        for k in ("sigma_p_pa", "sigma_t_k", "sigma_rh_pct", "bias_p_pa", "bias_t_k", "bias_rh_pct",
                  "sigma_gps_m", "dropout", "spikes", "jitter_s"):
            setattr(p, k, 0.0)
        p.rh_dropout = p.gps_dropout = 0.0
    try:
        check(p)
    except ValueError as e:
        raise UsageError("simulate: %s" % e)
    check_paths([], [("-o", a.out), ("--truth", a.truth)])
    with Outputs(stdout) as outs:
        out = outs.open(a.out)
        truth = outs.open(a.truth) if a.truth else None
        n = simulate(p, out, truth)
        outs.commit()
    if a.out:
        stderr.write("tinygeo simulate: %d readings written to %s\n" % (n, a.out))
    return 0
