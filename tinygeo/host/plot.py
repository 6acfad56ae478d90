"""Draw a replayed profile, or a station table, to PNG, SVG or PDF with
matplotlib (optional extra ``plot``).

A station table (``# tinygeo station table 1``, from ``tinygeo station LOG
-o TABLE`` or a logger such as ports/micropython/buoy.py) is drawn by
:func:`draw_station`: sea-level pressure (and QNH), station pressure, the
3-hour tendency with its characteristic (code table 0200) at each full hour,
temperature and dew point against time, and a strip with one row per flag
marking the averages that carry it; gaps (missing averages) are shaded in
every panel, stuck-pressure averages in the pressure panels, and the
extremes of the summary (tinygeo.host.stationlog.Summary, computed from the
rows, so a device's table without summary records is drawn the same) are
marked. The rows are drawn as written: nothing is recomputed. The time axis
is in UTC when time_s counts from 1970 (the table says so, or its times lie
between 1980 and 2100 as seconds since 1970: a logger on a clock set to
UTC), with dates when the rows span more than one day; otherwise in hours
of the log's clock. Where time_s goes back (a restart on a clock set back,
or rows written again by a logger resumed without a resume record) the
lines break and the place is marked; ``tinygeo plot`` says so on stderr.

A replayed profile:

Four panels: height against time (barometric, and the mapped GPS height
beside it; the time axis in UTC when the log has ISO-8601 stamps), the
temperature and dew point against height, the vertical rate against time
(the raw rate between readings and the column's smoothed rate,
smooth_rate_gpm_s), and the 1-sigma height uncertainty against height. The
curves after the burst have colours of their own. The mandatory levels, the
tropopause, floats, the burst and the landing from the summary are marked.

The input is a raw log (replayed with the mapping options) or a table (its
inputs are fed to a column set up from its ``# site`` line again, so the
smoothed rate and the events are the column's). Memory stays bounded for any
length of log: points are kept with a stride that doubles (and the kept list
halves) whenever more than ``MAX_POINTS`` have been collected, so at most
MAX_POINTS points are held, evenly spread. matplotlib runs on its
non-interactive Agg canvas, without pyplot.
"""
import datetime
import os

from tinygeo.column import FL_NO_GPS
from tinygeo.host import table
from tinygeo.host import replay as rp
from tinygeo.host import stationlog
from tinygeo.host.logread import LogReader
from tinygeo.host.options import (EXIT_MISSING_EXTRA, EXIT_OK, InputError, OutputError,
                                  UsageError, check_paths, column_setup, mapping, new_column,
                                  open_text, replace_target, setup_from_site,
                                  temp_path_for)

MAX_POINTS = 4000
NAN = float("nan")
# time_s between these is taken for seconds since 1970-01-01T00:00:00Z in a
# station table that does not say where its clock starts (1980-01-01 and
# 2100-01-01; a clock counting from power-on would have run 10 years)
EPOCH_FROM_S = 315532800.0
EPOCH_TO_S = 4102444800.0
FORMATS = ("png", "svg", "pdf")


class Points:
    """Evenly thinned series of (time_s, height_km, t_c, td_c, rate, smooth
    rate, sigma, gps_km)."""

    def __init__(self, limit=MAX_POINTS):
        self.limit = limit
        self.stride = 1
        self.n = 0
        self.rows = []

    def add(self, row):
        if self.n % self.stride == 0:
            self.rows.append(row)
            if len(self.rows) > self.limit:
                self.rows = self.rows[::2]
                self.stride *= 2
        self.n += 1


class _Collect:
    """The sink of a replay: one point per accepted reading."""

    def __init__(self, col, pts):
        self.col = col
        self.pts = pts

    def __call__(self, reading, bits):
        _, p, t, rh, ts, gps = reading
        col = self.col
        self.pts.add((NAN if ts is None else ts, col.height_m / 1000.0, t - 273.15,
                      rp.dew_point_k(t, rh, col.ice) - 273.15, col.rate_m_s,
                      col.smooth_rate_gpm_s, col.sigma_m,
                      NAN if gps is None else gps / 1000.0))


def _from_log(a, lines, name, pts, stderr):
    reader = LogReader(lines, mapping(a), a.delimiter, name)
    setup = column_setup(a, reader)
    col = new_column(setup)
    reader.settle(setup.start_height_m, setup.start_given)
    summary = rp.Summary(col, setup.lat_deg)
    rp.run(reader, col, summary, lambda m: None, sink=_Collect(col, pts))
    if summary.accepted == 0:
        raise InputError("%s: no reading was accepted (%d rejected%s)" % (
            name, summary.rejected,
            "; first: " + summary.first_rejection if summary.first_rejection else ""))
    if summary.rejected:
        stderr.write("tinygeo plot: %d readings rejected (see 'tinygeo replay' for details)\n"
                     % summary.rejected)
    return setup, summary, reader.time_origin


class _TableReadings:
    """A table's rows as readings for replay.run (LogReader's interface)."""

    def __init__(self, dev):
        self.dev = dev
        self.columns = {}
        self.lineno = 0

    def __iter__(self):
        for row in self.dev:
            self.lineno = row.lineno
            gps = row.gps_m
            if gps != gps:
                gps = NAN if row.flags is not None and row.flags & FL_NO_GPS else None
            yield (row.line if row.line is not None else row.lineno, row.p_pa, row.t_k,
                   None if row.rh_pct != row.rh_pct else row.rh_pct,
                   None if row.time_s != row.time_s else row.time_s, gps)


def _from_table(a, lines, name, pts):
    dev = table.TableReader(lines, name)
    if "p_pa" not in dev.present or "t_k" not in dev.present:
        raise table.TableError("%s: the table has no p_pa or t_k column to feed a column with; "
                               "plot the raw log instead" % name)
    setup = setup_from_site(dev.site, a, {})
    col = new_column(setup)
    summary = rp.Summary(col, setup.lat_deg)
    rp.run(_TableReadings(dev), col, summary, lambda m: None, sink=_Collect(col, pts))
    return setup, summary, dev.time_origin


def _f(d, key):
    try:
        return float(d.get(key, "nan"))
    except ValueError:
        return NAN


def _origin(text):
    # the ISO-8601 time origin of a log as a UTC datetime, or None
    if not text:
        return None
    s = text.strip()
    if s[-1:] in ("Z", "z"):
        s = s[:-1] + "+00:00"
    try:
        dt = datetime.datetime.fromisoformat(s)
    except ValueError:
        return None
    if dt.tzinfo is None:
        dt = dt.replace(tzinfo=datetime.timezone.utc)
    return dt.astimezone(datetime.timezone.utc)


def draw(pts, setup, records, out_path, title, dpi, origin=None, fmt=None):
    """Render the figure to ``out_path`` in ``fmt`` (png, svg, pdf; default:
    the path's suffix). ``records`` are the summary records (what, dict);
    ``origin`` the UTC datetime of time_s = 0 (None: minutes since the first
    reading)."""
    from matplotlib.figure import Figure
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    rows = pts.rows
    summ = dict((w, d) for w, d in records)
    burst_t = _f(summ.get("burst", {}), "time_s")
    t_first = next((r[0] for r in rows if r[0] == r[0]), 0.0)
    if origin is not None:
        import matplotlib.dates as mdates

        def tx(s):
            return origin + datetime.timedelta(seconds=s) if s == s else None
        t_label = "time (UTC)"
    else:
        def tx(s):
            return (s - t_first) / 60.0
        t_label = "time since the first reading (min)"
    up = [r for r in rows if not (burst_t == burst_t and r[0] > burst_t)]
    down = [r for r in rows if burst_t == burst_t and r[0] > burst_t]
    fig = Figure(figsize=(11.0, 8.5))
    FigureCanvasAgg(fig)
    ax_ht, ax_tp, ax_rt, ax_sg = (fig.add_subplot(2, 2, i) for i in (1, 2, 3, 4))
    # after the burst: colours of their own, thinner and dashed over the
    # ascent, so that both stay visible where they overlap
    colours = {"up": ("tab:blue", "tab:red", "tab:green", "tab:purple", "tab:orange"),
               "down": ("tab:cyan", "darkred", "darkolivegreen", "0.25", "saddlebrown")}
    style = {"up": dict(ls="-", lw=1.6), "down": dict(ls=(0, (4, 2)), lw=0.9)}
    gps = [r for r in rows if r[7] == r[7]]
    if gps:
        ax_ht.plot([tx(r[0]) for r in gps], [r[7] for r in gps], ".", color="0.6", ms=1.0,
                   zorder=1, label="GPS height (as mapped)")
        ax_d = ax_ht.twinx()
        ax_d.plot([tx(r[0]) for r in gps], [1000.0 * (r[1] - r[7]) for r in gps], ".",
                  color="tab:orange", ms=0.8, alpha=0.35)
        # the twin axis's points get their entry in the height legend: the
        # cloud drawn is the difference, not the GPS height itself
        ax_ht.plot([], [], ".", color="tab:orange", ms=4.0,
                   label="barometric minus GPS (m, right scale)")
        ax_d.set_ylabel("barometric minus GPS (m)", color="tab:orange", fontsize=8)
        ax_d.tick_params(axis="y", labelsize=7, colors="tab:orange")
    for part, key, label in ((up, "up", "ascent"), (down, "down", "after burst")):
        if not part:
            continue
        c_h, c_t, c_td, c_r, c_s = colours[key]
        st = style[key]
        tt = [tx(r[0]) for r in part]
        ax_ht.plot(tt, [r[1] for r in part], color=c_h, zorder=3, label="barometric, " + label,
                   **st)
        ax_tp.plot([r[2] for r in part], [r[1] for r in part], color=c_t,
                   label="temperature, " + label, **st)
        ax_tp.plot([r[3] for r in part], [r[1] for r in part], color=c_td,
                   label="dew point, " + label, **st)
        ax_rt.plot(tt, [r[4] for r in part], color=c_r, lw=0.5, alpha=0.3,
                   label="raw rate, " + label)
        ax_rt.plot(tt, [r[5] for r in part], color=c_r, lw=1.5,
                   label="smoothed rate (smooth_rate_gpm_s), " + label)
        ax_sg.plot([r[6] for r in part], [r[1] for r in part], color=c_s, label=label, **st)
    ax_ht.set_xlabel(t_label)
    ax_ht.set_ylabel("height above mean sea level (km)")
    ax_ht.set_title("Height")
    ax_tp.set_xlabel("temperature and dew point (\u00b0C)")
    ax_tp.set_ylabel("height above mean sea level (km)")
    ax_tp.set_title("Temperature and dew point")
    ax_rt.axhline(0.0, color="0.6", lw=0.6)
    ax_rt.set_xlabel(t_label)
    ax_rt.set_ylabel("vertical rate (m/s, up positive)")
    ax_rt.set_title("Vertical rate")
    ax_sg.set_xlabel("height uncertainty, 1 sigma (m)")
    ax_sg.set_ylabel("height above mean sea level (km)")
    ax_sg.set_title("Uncertainty")
    if origin is not None:
        for ax in (ax_ht, ax_rt):
            ax.xaxis.set_major_formatter(mdates.DateFormatter("%H:%M", tz=datetime.timezone.utc))

    for what, d in records:
        hk = _f(d, "height_m") / 1000.0
        tm = _f(d, "time_s")
        if what == "level":
            if hk == hk:
                for ax in (ax_tp, ax_sg):
                    ax.axhline(hk, color="0.75", lw=0.6, ls="--")
                ax_tp.annotate("%s hPa" % d.get("p_hpa", "?"), xy=(1.0, hk),
                               xycoords=("axes fraction", "data"), xytext=(3, 0),
                               textcoords="offset points", va="center", fontsize=7, color="0.35")
        elif what == "tropopause" and hk == hk:
            for ax in (ax_ht, ax_tp, ax_sg):
                ax.axhline(hk, color="tab:cyan", lw=1.0, ls="-.",
                           label="tropopause %.1f km" % hk if ax is ax_tp else None)
        elif what == "float" and hk == hk and tm == tm:
            ax_ht.plot([tx(tm)], [hk], marker="D", ms=7, color="tab:olive", ls="none",
                       label="float %.1f km" % hk)
        elif what == "burst":
            if hk == hk and tm == tm:
                ax_ht.plot([tx(tm)], [hk], marker="*", ms=12, color="tab:red", ls="none",
                           label="burst %.1f km" % hk)
                ax_rt.axvline(tx(tm), color="tab:red", lw=0.8, ls="--", label="burst")
            if hk == hk:
                ax_tp.axhline(hk, color="tab:red", lw=0.8, ls="--", label="burst %.1f km" % hk)
        elif what == "landing" and hk == hk and tm == tm:
            # at the touchdown the summary estimates (time_s is when the
            # column decided, landing_s later)
            td = _f(d, "touchdown_time_s")
            ax_ht.plot([tx(td if td == td else tm)], [hk], marker="v", ms=8, color="tab:brown",
                       ls="none", label="touchdown" if td == td else "landing")
    for ax in (ax_ht, ax_tp, ax_rt, ax_sg):
        ax.grid(True, color="0.9", lw=0.5)
        handles, labels = ax.get_legend_handles_labels()
        if handles:
            ax.legend(fontsize=7, loc="best")
    fig.suptitle("%s  (latitude %.2f\u00b0, start height %.0f m)"
                 % (title, setup.lat_deg, setup.start_height_m), fontsize=11)
    fig.tight_layout(rect=(0.0, 0.0, 0.97, 0.96))
    fmt = fmt or out_path.rsplit(".", 1)[-1].lower()
    meta = {"svg": {"Date": None}, "pdf": {"CreationDate": None, "ModDate": None},
            "png": {"Software": None}}[fmt]
    fig.savefig(out_path, dpi=dpi, format=fmt, metadata=meta)


# --- station tables ---------------------------------------------------------------------
STATION_FLAG_LABELS = (("stuck_p", "stuck p"), ("stuck_t", "stuck T"), ("stuck_rh", "stuck RH"),
                       ("gap", "gap before"), ("few", "few readings"), ("takeover", "takeover"),
                       ("trend_gap", "no tendency"), ("no_t12", "no T 12 h ago"),
                       ("clock_held", "clock held"), ("clock_stuck", "clock stuck"),
                       ("mslp_odd", "MSLP beyond records"))


class StationData:
    """A station table read for drawing: ``pts`` (Points of (time_s, p_hpa,
    mslp_hpa, qnh_hpa, tend_hpa, code, t_c, td_c, flags)), ``flagged``
    (Points of (time_s, flags) of the averages with flags), ``gaps``
    (time_s pairs bounding missing averages, at most MAX_POINTS),
    ``summary`` (stationlog.Summary of every row), ``average_s``,
    ``height_m``, ``lat_deg`` (nan when the table does not say), ``epoch``
    (time_s counts from 1970-01-01T00:00:00Z), ``epoch_guessed`` (the
    table does not say so, its times look so), ``back`` (time_s pairs
    (before, after) where time goes back, at most MAX_POINTS), ``repeated``
    and ``backwards`` (rows whose time_s equals, or is before, the row
    before's), ``reader`` (the StationTableReader, read) and ``source``
    (the log named in the ``# input`` line, or None)."""

    def __init__(self, dev):
        words = dev.station
        self.average_s = _f(words, "average_s")
        self.height_m = _f(words, "height_m")
        self.lat_deg = _f(words, "lat_deg")
        self.epoch = dev.time_origin == stationlog.EPOCH
        self.epoch_guessed = False
        self.source = dev.input.get("source")      # the log 'tinygeo station' read
        self.summary = stationlog.Summary(self.epoch)
        self.pts = Points()
        self.flagged = Points()
        self.gaps = []
        self.back = []
        self.repeated = 0
        self.backwards = 0
        self.reader = dev
        avg = self.average_s if self.average_s == self.average_s else 0.0
        prev = None
        for r in dev:
            if prev is None and dev.time_origin is None:
                self.epoch = self.epoch_guessed = EPOCH_FROM_S <= r.time_s <= EPOCH_TO_S
                self.summary.epoch = self.epoch
            if prev is not None and r.time_s <= prev:
                if r.time_s == prev:
                    self.repeated += 1
                else:
                    self.backwards += 1
                if len(self.back) < MAX_POINTS:
                    self.back.append((prev, r.time_s))
            fl = r.flags or 0
            self.summary.average(r.time_s, r.mslp_pa, r.tend3h_pa, r.tend_code, fl)
            self.pts.add((r.time_s, r.p_pa / 100.0, r.mslp_pa / 100.0, r.qnh_pa / 100.0,
                          r.tend3h_pa / 100.0, r.tend_code, r.t_k - 273.15, r.td_k - 273.15, fl))
            if fl:
                self.flagged.add((r.time_s, fl))
            if prev is not None and avg and r.time_s - prev > 1.5 * avg and \
                    len(self.gaps) < MAX_POINTS:
                self.gaps.append((prev, r.time_s - avg))
            prev = r.time_s
        if dev.end is not None:
            try:
                self.summary.missing = int(dev.end.get("missing", "0"))
            except ValueError:
                pass


def draw_station(data, out_path, title, dpi, fmt=None):
    """Render a station table's figure (``data``: StationData) to
    ``out_path`` in ``fmt`` (png, svg, pdf; default: the path's suffix);
    returns the matplotlib Figure."""
    from matplotlib.figure import Figure
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    rows = data.pts.rows
    avg = data.average_s if data.average_s == data.average_s else 600.0
    if data.epoch:
        import matplotlib.dates as mdates
        utc = datetime.timezone.utc

        def tx(s):
            return datetime.datetime.fromtimestamp(s, utc)
        times = [r[0] for r in rows if r[0] == r[0]]
        days = bool(times) and tx(min(times)).date() != tx(max(times)).date()
        t_form = "%Y-%m-%d %H:%M" if days else "%H:%M"
        t_label = "date and time (UTC)" if days else "time (UTC)"
        if data.epoch_guessed:
            t_label += "; time_s taken as seconds since 1970-01-01T00:00:00Z"

        def when(s):
            return tx(s).strftime(t_form)
    else:
        def tx(s):
            return s / 3600.0
        t_label = "time_s / 3600 (hours on the log's clock)"

        def when(s):
            return "%.2f h" % (s / 3600.0)
    # a line breaks where averages are missing (their rows are not written)
    # and where time goes back (a restart, rows written twice)
    step = 1.5 * avg * data.pts.stride
    xs, cols = [], [[] for _ in range(8)]
    prev = None
    for r in rows:
        if prev is not None and r[0] <= prev:
            xs.append(xs[-1])
            for c in cols:
                c.append(NAN)
        elif prev is not None and r[0] - prev > step:
            xs.append(tx(prev + avg))
            for c in cols:
                c.append(NAN)
        xs.append(tx(r[0]))
        for i, c in enumerate(cols):
            v = r[i + 1]
            c.append(NAN if v is None else v)
        prev = r[0]
    p, msl, qnh, tend, _, t_c, td_c, _ = cols

    fig = Figure(figsize=(11.0, 10.5))
    FigureCanvasAgg(fig)
    gs = fig.add_gridspec(5, 1, height_ratios=(3.0, 2.0, 2.2, 2.0, 1.3))
    ax_m = fig.add_subplot(gs[0])
    ax_p = fig.add_subplot(gs[1], sharex=ax_m)
    ax_t = fig.add_subplot(gs[2], sharex=ax_m)
    ax_c = fig.add_subplot(gs[3], sharex=ax_m)
    ax_f = fig.add_subplot(gs[4], sharex=ax_m)
    axes = (ax_m, ax_p, ax_t, ax_c, ax_f)
    for a0, a1 in data.gaps:
        for ax in axes:
            ax.axvspan(tx(a0), tx(a1), color="0.85", lw=0, zorder=0,
                       label="missing averages" if ax is ax_m and (a0, a1) == data.gaps[0]
                       else None)
    for k, (t0, t1) in enumerate(data.back):
        for ax in axes:
            ax.axvline(tx(t1), color="tab:orange", lw=1.0, ls=(0, (2, 2)), zorder=1,
                       label="time goes back (from %s): restart or rows written twice"
                       % when(t0) if ax is ax_m and k == 0 else None)
    for ts, fl in data.flagged.rows:
        if fl & 1:
            for ax in (ax_m, ax_p):
                ax.axvspan(tx(ts - avg), tx(ts), color="tab:red", alpha=0.12, lw=0, zorder=0)
    ax_m.plot(xs, msl, color="tab:blue", lw=1.6, label="sea-level pressure (mslp_pa)")
    ax_m.plot(xs, qnh, color="tab:cyan", lw=0.9, ls=(0, (4, 2)), label="QNH (qnh_pa)")
    s = data.summary
    if s.highest is not None:
        ax_m.plot([tx(s.highest[1])], [s.highest[0] / 100.0], marker="^", ms=9, color="tab:red",
                  ls="none", label="highest %.1f hPa at %s" % (s.highest[0] / 100.0,
                                                             when(s.highest[1])))
        ax_m.plot([tx(s.lowest[1])], [s.lowest[0] / 100.0], marker="v", ms=9, color="navy",
                  ls="none", label="lowest %.1f hPa at %s" % (s.lowest[0] / 100.0,
                                                            when(s.lowest[1])))
    ax_m.set_ylabel("hPa")
    ax_m.set_title("Sea-level pressure and QNH (shaded red: stuck pressure taken out)",
                   fontsize=10)
    ax_p.plot(xs, p, color="tab:green", lw=1.4, label="station pressure (p_pa)")
    ax_p.set_ylabel("hPa")
    ax_p.set_title("Station pressure, mean of each average", fontsize=10)
    ax_t.axhline(0.0, color="0.5", lw=0.6)
    ax_t.plot(xs, tend, color="tab:purple", lw=1.4, marker=".", ms=3,
              label="3-hour tendency (tend3h_pa)")
    lo, hi = _finite_range(tend)
    pad = max(0.08 * (hi - lo), 0.3)
    for r in rows:
        if r[5] is not None and r[4] == r[4] and abs(r[0] % 3600.0) < 0.5:
            ax_t.annotate("%d" % r[5], xy=(tx(r[0]), r[4]), xytext=(0, 5 if r[4] >= 0 else -11),
                          textcoords="offset points", ha="center", fontsize=7, color="0.2")
    if s.fall is not None:
        ax_t.plot([tx(s.fall[1])], [s.fall[0] / 100.0], marker="v", ms=8, color="navy",
                  ls="none", label="largest fall %.1f hPa, 3 h to %s" % (s.fall[0] / 100.0,
                                                                     when(s.fall[1])))
    if lo == lo:
        ax_t.set_ylim(lo - pad - 0.6, hi + pad + 0.6)
    ax_t.set_ylabel("hPa in 3 h")
    ax_t.set_title("3-hour tendency; digits: its characteristic (WMO code table 0200) at each "
                   "full hour", fontsize=10)
    ax_c.plot(xs, t_c, color="tab:red", lw=1.4, label="temperature (t_k)")
    ax_c.plot(xs, td_c, color="tab:olive", lw=1.2, label="dew point (td_k)")
    ax_c.set_ylabel("\u00b0C")
    ax_c.set_title("Temperature and dew point", fontsize=10)
    present = [(w, lab) for w, lab in STATION_FLAG_LABELS if s.flags.get(w)]
    bits = dict((w, b) for b, w in stationlog.FLAG_WORDS)
    for i, (w, lab) in enumerate(present):
        b = bits[w]
        ts = [tx(t) for t, fl in data.flagged.rows if fl & b]
        ax_f.plot(ts, [i] * len(ts), "|", ms=9, mew=1.6,
                  color="tab:red" if w.startswith("stuck") else "0.3")
    ax_f.set_yticks(range(len(present)))
    ax_f.set_yticklabels([lab for _, lab in present], fontsize=7)
    ax_f.set_ylim(-0.8, max(len(present), 1) - 0.2)
    if not present:
        ax_f.text(0.5, 0.4, "no average carries a flag", transform=ax_f.transAxes,
                  ha="center", fontsize=8, color="0.4")
    ax_f.set_title("QC flags of the averages", fontsize=10)
    ax_f.set_xlabel(t_label)
    for ax in axes:
        ax.grid(True, color="0.9", lw=0.5)
        if ax is not ax_f:
            ax.tick_params(labelbottom=False)
        handles, labels = ax.get_legend_handles_labels()
        if handles:
            ax.legend(fontsize=7, loc="best")
    if data.epoch:
        ax_f.xaxis.set_major_formatter(mdates.DateFormatter(t_form.replace(" ", "\n"),
                                                            tz=datetime.timezone.utc))
    else:
        ax_f.ticklabel_format(axis="x", style="plain", useOffset=False)
    fig.suptitle("%s  (barometer at %.1f m, latitude %.2f\u00b0, averages of "
                 "%g s)" % (title, data.height_m, data.lat_deg, avg), fontsize=11)
    fig.tight_layout(rect=(0.0, 0.0, 1.0, 0.97))
    fmt = fmt or out_path.rsplit(".", 1)[-1].lower()
    meta = {"svg": {"Date": None}, "pdf": {"CreationDate": None, "ModDate": None},
            "png": {"Software": None}}[fmt]
    fig.savefig(out_path, dpi=dpi, format=fmt, metadata=meta)
    return fig


def _station_notes(data, name, stderr):
    # what tinygeo plot says about a station table's rows on stderr
    rd = data.reader
    if rd.voided or rd.torn:
        stderr.write("tinygeo plot: note: %s: %s voided by %s (written again after a power "
                     "cut) and %s left out\n"
                     % (name, _count(rd.voided, "row"), _count(rd.resumes, "resume record"),
                        _count(rd.torn, "torn row")))
    if rd.torn_resumes:
        stderr.write("tinygeo plot: note: %s: %s torn by a power cut while %s written (the "
                     "first at table line %d: no final word 'whole'), ignored: %s no row\n"
                     % (name, _count(rd.torn_resumes, "resume record"),
                        "it was" if rd.torn_resumes == 1 else "they were", rd.first_torn_resume,
                        "it voids" if rd.torn_resumes == 1 else "they void"))
    if rd.lost:
        stderr.write("tinygeo plot: note: %s: %s lost: the resume record at table line %d "
                     "counts more rows before it than the table holds\n"
                     % (name, _count(rd.lost, "row"), rd.first_lost))
    if data.repeated or data.backwards:
        t0, t1 = rd.back_times
        stderr.write("tinygeo plot: note: %s: %d rows repeat the time_s of the row before and %d "
                     "go back in time (first at table line %d: %s after %s): rows written again "
                     "by a logger resumed without a resume record, or a clock set back (a "
                     "restart); the lines break there and the place is marked\n"
                     % (name, data.repeated, data.backwards, rd.first_backwards,
                        _stamp(t1, data.epoch), _stamp(t0, data.epoch)))


def _count(n, word):
    # "1 row", "2 rows"
    return "%d %s%s" % (n, word, "" if n == 1 else "s")


def _stamp(time_s, epoch):
    text = "time_s=%.0f" % time_s if time_s == int(time_s) else "time_s=%.3f" % time_s
    if epoch:
        u = stationlog.utc_text(time_s)
        if u is not None:
            text += " (%s)" % u
    return text


def _finite_range(values):
    v = [x for x in values if x == x]
    if not v:
        return NAN, NAN
    return min(v), max(v)


class _Prepend:
    """A stream whose first readline() returns an already read line."""

    def __init__(self, first, stream):
        self.first = first
        self.stream = stream

    def readline(self, limit=-1):
        if self.first is not None:
            line, self.first = self.first, None
            return line
        return self.stream.readline()

    def check(self, text, lineno):
        self.stream.check(text, lineno)


def run(a, stdin, stdout, stderr):
    """The ``plot`` command; returns the exit status."""
    out = a.out
    fmt = out.rsplit(".", 1)[-1].lower() if "." in os.path.basename(out) else ""
    if fmt not in FORMATS:
        raise UsageError("-o %s: give a file name ending in .png, .svg or .pdf" % out)
    if not 20 <= a.dpi <= 600:
        raise UsageError("--dpi %d outside 20..600" % a.dpi)
    check_paths([("input", a.input)], [("-o", out)], stdin)
    try:
        import matplotlib  # noqa: F401
    except ImportError:
        stderr.write("tinygeo: error: plot needs matplotlib, which is not installed; "
                     "install it with: pip install 'tinygeo[plot]'  (or: pip install matplotlib)\n")
        return EXIT_MISSING_EXTRA
    lines, name, close = open_text(a.input, stdin)
    station = None
    try:
        first = lines.readline()
        pts = Points()
        src = _Prepend(first, lines)
        if first.strip() == table.STATION_MAGIC:
            station = StationData(table.StationTableReader(src, name))
            pts = station.pts
            _station_notes(station, name, stderr)
        elif first.strip() in (table.MAGIC, table.OLD_MAGIC):
            setup, summary, origin = _from_table(a, src, name, pts)
        else:
            setup, summary, origin = _from_log(a, src, name, pts, stderr)
    finally:
        close()
    if not pts.rows:
        raise table.TableError("%s: no rows to plot" % name)
    if station is not None:
        def render(path):
            draw_station(station, path, a.title or station.source or name, a.dpi, fmt)
    else:
        records = []
        for line in summary.lines():
            words = line[len(table.SUMMARY_PREFIX):].split()
            records.append((words[0], table.parse_pairs(words[1:])))

        def render(path):
            draw(pts, setup, records, path, a.title or name, a.dpi, _origin(origin), fmt)
    tmp = None
    try:
        if os.path.exists(out) and not os.path.isfile(out):
            render(out)
        else:
            target = replace_target(out)
            tmp = temp_path_for(target)
            render(tmp)
            os.replace(tmp, target)
            tmp = None
    except OSError as e:
        raise OutputError("cannot write %s: %s" % (out, e.strerror or e))
    finally:
        if tmp is not None:
            try:
                os.unlink(tmp)
            except OSError:
                pass
    stderr.write("tinygeo plot: %s written (%d points of %d)\n" % (out, len(pts.rows), pts.n))
    return EXIT_OK
