"""Draw a replayed profile to PNG or SVG with matplotlib (optional extra ``plot``).

Four panels: height against time; temperature and dew point against height;
vertical rate against time; 1-sigma height uncertainty against height. The
mandatory levels, the tropopause and the burst from the summary are marked.

Memory stays bounded for any length of log: points are kept with a stride
that doubles (and the kept list halves) whenever more than ``MAX_POINTS``
have been collected, so at most MAX_POINTS points are held, evenly spread.
matplotlib runs on its non-interactive Agg canvas, without pyplot.
"""
from tinygeo.host import table
from tinygeo.host import replay as rp

MAX_POINTS = 4000
NAN = float("nan")


class Points:
    """Evenly thinned series (t_min, h_km, t_c, td_c, rate, sigma, after_burst)."""

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


def _from_table(f, name, pts):
    reader = table.TableReader(f, name)
    down = False
    for r in reader:
        down = down or bool(r.event_bits & table.EV_BURST)
        pts.add(_point(r.time_s, r.height_m, r.t_k, r.td_k, r.rate_m_s, r.sigma_m, down))
    return reader.site, reader.summary


def _point(time_s, height_m, t_k, td_k, rate, sigma, after_burst):
    return (time_s / 60.0, height_m / 1000.0, t_k - 273.15, td_k - 273.15, rate, sigma,
            after_burst)


def _from_log(a, f, name, pts, stderr):
    from tinygeo.host import cli, logread
    reader = logread.LogReader(f, cli._mapping(a), a.delimiter, name)
    lat, h0, opts, site = cli.column_setup(a, reader)
    col = cli.new_column(lat, h0, opts)
    summary = rp.Summary()
    down = False
    for reading, bits in rp.readings(reader, col, summary, lambda m: None):
        _, p, t, rh, ts, gps = reading
        down = down or bool(bits & table.EV_BURST)
        pts.add(_point(NAN if ts is None else ts, col.height_m, t, rp.dew_point_k(t, p, rh),
                       col.rate_m_s, col.sigma_m, down))
    if summary.accepted == 0:
        raise logread.InputError("%s: no reading was accepted (%d rejected%s)" % (
            name, summary.rejected,
            "; first: " + summary.first_rejection if summary.first_rejection else ""))
    if summary.rejected:
        stderr.write("tinygeo plot: %d readings rejected (see 'tinygeo replay' for details)\n"
                     % summary.rejected)
    rp.finish(summary, col)
    records = []
    for line in summary.lines(lat):
        words = line[len(table.SUMMARY_PREFIX):].split()
        records.append((words[0], table.parse_pairs(words[1:])))
    return dict((k, table.fmt_value(v)) for k, v in site), records


def _f(d, key):
    try:
        return float(d.get(key, "nan"))
    except ValueError:
        return NAN


def draw(pts, site, records, out_path, title, dpi):
    """Render the figure to ``out_path`` (format from its suffix)."""
    from matplotlib.figure import Figure
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    rows = pts.rows
    t = [r[0] for r in rows]
    h = [r[1] for r in rows]
    fig = Figure(figsize=(11.0, 8.5))
    FigureCanvasAgg(fig)
    ax_ht, ax_tp, ax_rt, ax_sg = (fig.add_subplot(2, 2, i) for i in (1, 2, 3, 4))
    up = [r for r in rows if not r[6]]
    down = [r for r in rows if r[6]]

    ax_ht.plot(t, h, color="tab:blue", lw=1.2)
    ax_ht.set_xlabel("time since first reading (min)")
    ax_ht.set_ylabel("height above mean sea level (km)")
    ax_ht.set_title("Height")

    for part, style, label in ((up, "-", "ascent"), (down, ":", "after burst")):
        if part:
            ax_tp.plot([r[2] for r in part], [r[1] for r in part], style, color="tab:red",
                       lw=1.2, label="temperature, " + label)
            ax_tp.plot([r[3] for r in part], [r[1] for r in part], style, color="tab:green",
                       lw=1.0, label="dew point, " + label)
    ax_tp.set_xlabel("temperature and dew point (\u00b0C)")
    ax_tp.set_ylabel("height above mean sea level (km)")
    ax_tp.set_title("Temperature and dew point")

    ax_rt.plot(t, [r[4] for r in rows], color="tab:purple", lw=0.8)
    ax_rt.axhline(0.0, color="0.6", lw=0.6)
    ax_rt.set_xlabel("time since first reading (min)")
    ax_rt.set_ylabel("vertical rate (m/s, up positive)")
    ax_rt.set_title("Vertical rate")

    ax_sg.plot([r[5] for r in up], [r[1] for r in up], color="tab:orange", lw=1.0, label="ascent")
    if down:
        ax_sg.plot([r[5] for r in down], [r[1] for r in down], ":", color="tab:orange", lw=1.0,
                   label="after burst")
    ax_sg.set_xlabel("height uncertainty, 1 sigma (m)")
    ax_sg.set_ylabel("height above mean sea level (km)")
    ax_sg.set_title("Uncertainty")

    for what, d in records:
        if what == "level":
            hk = _f(d, "height_m") / 1000.0
            if hk == hk:
                for ax in (ax_tp, ax_sg):
                    ax.axhline(hk, color="0.75", lw=0.6, ls="--")
                ax_tp.annotate("%s hPa" % d.get("p_hpa", "?"), xy=(1.0, hk),
                               xycoords=("axes fraction", "data"), xytext=(3, 0),
                               textcoords="offset points", va="center", fontsize=7, color="0.35")
        elif what == "tropopause":
            hk = _f(d, "height_m") / 1000.0
            if hk == hk:
                for ax in (ax_ht, ax_tp, ax_sg):
                    ax.axhline(hk, color="tab:cyan", lw=1.0, ls="-.",
                               label="tropopause %.1f km" % hk if ax is ax_tp else None)
        elif what == "burst":
            hk = _f(d, "height_m") / 1000.0
            tm = _f(d, "time_s") / 60.0
            if hk == hk and tm == tm:
                ax_ht.plot([tm], [hk], marker="*", ms=12, color="tab:red", ls="none",
                           label="burst %.1f km" % hk)
                ax_rt.axvline(tm, color="tab:red", lw=0.8, ls="--", label="burst")
            if hk == hk:
                ax_tp.axhline(hk, color="tab:red", lw=0.8, ls="--", label="burst %.1f km" % hk)
        elif what == "landing":
            tm = _f(d, "time_s") / 60.0
            hk = _f(d, "height_m") / 1000.0
            if tm == tm and hk == hk:
                ax_ht.plot([tm], [hk], marker="v", ms=8, color="tab:brown", ls="none",
                           label="landing")
    for ax in (ax_ht, ax_tp, ax_rt, ax_sg):
        ax.grid(True, color="0.9", lw=0.5)
        handles, labels = ax.get_legend_handles_labels()
        if handles:
            ax.legend(fontsize=7, loc="best")
    lat = _f(site, "lat_deg")
    h0 = _f(site, "start_height_m")
    fig.suptitle("%s  (latitude %.2f\u00b0, start height %.0f m)" % (title, lat, h0), fontsize=11)
    fig.tight_layout(rect=(0.0, 0.0, 0.97, 0.96))
    fmt = out_path.rsplit(".", 1)[-1].lower()
    meta = {"Date": None} if fmt == "svg" else {"Software": None}
    fig.savefig(out_path, dpi=dpi, format=fmt, metadata=meta)


class _Prepend:
    """A stream whose first readline() returns an already read line."""

    def __init__(self, first, stream):
        self.first = first
        self.stream = stream

    def readline(self):
        if self.first is not None:
            line, self.first = self.first, None
            return line
        return self.stream.readline()


def run(a, stdin, stdout, stderr):
    """The ``plot`` command; returns the exit status."""
    from tinygeo.host import cli
    out = a.out
    if not (out.lower().endswith(".png") or out.lower().endswith(".svg")):
        raise cli.UsageError("-o %s: give a file name ending in .png or .svg" % out)
    if not 20 <= a.dpi <= 600:
        raise cli.UsageError("--dpi %d outside 20..600" % a.dpi)
    try:
        import matplotlib  # noqa: F401
    except ImportError:
        stderr.write("tinygeo: error: plot needs matplotlib, which is not installed; "
                     "install it with: pip install 'tinygeo[plot]'  (or: pip install matplotlib)\n")
        return cli.EXIT_MISSING_EXTRA
    f, name, close = cli._open_text(a.input, stdin)
    try:
        first = f.readline()
        pts = Points()
        src = _Prepend(first, f)
        if first.strip() == table.MAGIC:
            site, records = _from_table(src, name, pts)
        else:
            site, records = _from_log(a, src, name, pts, stderr)
    finally:
        if close:
            f.close()
    if not pts.rows:
        raise table.TableError("%s: no rows to plot" % name)
    try:
        draw(pts, site, records, out, a.title or name, a.dpi)
    except OSError as e:
        raise cli.UsageError("cannot write %s: %s" % (out, e.strerror or e))
    stderr.write("tinygeo plot: %s written (%d points of %d)\n" % (out, len(pts.rows), pts.n))
    return 0
