"""Time per Column.feed under CPython and MicroPython, each as a ratio to a bare baseline.

Run from the repository root with the venv active::

    python bench/speed.py

One run prints both interpreters' figures: it first counts, under CPython,
how many ``math.log`` calls and float multiplications/divisions one ``feed``
executes on average over the simulated flight (opcode tracing of the core's
code plus a counting ``math.log``), then times ``feed`` under CPython and under
the MicroPython unix runtime (``micropython bench/speed.py --here --logs L
--mults M`` as a subprocess). In each interpreter the same run also times a
*baseline* loop that does exactly that many ``math.log`` calls and
multiplications per reading over the same input lists, and prints the ratio
feed / baseline, which stays comparable on a noisy or different machine.

Readings: the whole flight of ``ports/micropython/flightsim.py`` at 2 s steps
(ground wait, ascent, burst, descent, landing; the one failed reading is
dropped), with humidity, time and a GPS height every tenth reading, fed to a
fresh Column with event detection and an ``on_event`` callback. Each timing
is the best of 5 passes.

Options: ``--here`` (time only the running interpreter), ``--logs L`` and
``--mults M`` (baseline counts; default: count them, CPython only).
"""
import math
import sys

try:
    from time import perf_counter as _clock

    def _elapsed_s(t0):
        return _clock() - t0
except ImportError:  # MicroPython
    from time import ticks_us as _clock, ticks_diff

    def _elapsed_s(t0):
        return ticks_diff(_clock(), t0) * 1e-6

_HERE = __file__.rsplit("/", 1)[0] if "/" in __file__ else "."
_ROOT = _HERE.rsplit("/", 1)[0] if "/" in _HERE else (_HERE + "/..")
if _HERE == "bench":
    _ROOT = "."
sys.path.append(_ROOT)
sys.path.append(_ROOT + "/ports/micropython")

from tinygeo.column import Column             # noqa: E402
from flightsim import SimulatedFlight, LAUNCH_HEIGHT_M  # noqa: E402

LAT_DEG = 48.2
PASSES = 5
STEP_S = 2.0


def _on_event(column, bits):
    pass


def readings():
    """The flight as five lists (p, t, rh, time, gps), failed readings dropped."""
    s = SimulatedFlight(STEP_S)
    ps, ts, rhs, times, gpss = [], [], [], [], []
    while s.read():
        if s.t_k != s.t_k:
            continue
        ps.append(s.p_pa)
        ts.append(s.t_k)
        rhs.append(s.rh_pct)
        times.append(s.time_s)
        gpss.append(s.gps_m)
    return ps, ts, rhs, times, gpss


def time_feeds(data):
    ps, ts, rhs, times, gpss = data
    n = len(ps)
    best = 1e9
    for _ in range(PASSES):
        col = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event)
        feed = col.feed
        t0 = _clock()
        for i in range(n):
            feed(ps[i], ts[i], rhs[i], times[i], gpss[i])
        dt = _elapsed_s(t0)
        if dt < best:
            best = dt
    return best / n


def make_baseline(logs, mults):
    """Compile a loop doing ``logs`` math.log calls and ``mults`` float
    multiplications per reading, reading the same five lists as the feed loop."""
    body = ["def baseline(ps, ts, rhs, times, gpss):",
            "    n = len(ps)",
            "    for i in range(n):",
            "        p = ps[i]; t = ts[i]; rh = rhs[i]; tm = times[i]; g = gpss[i]"]
    for _ in range(logs):
        body.append("        x = math.log(p)")
    for _ in range(mults):
        body.append("        y = p * t")
    body.append("    return n")
    scope = {"math": math}
    exec("\n".join(body) + "\n", scope)
    return scope["baseline"]


def time_baseline(data, logs, mults):
    fn = make_baseline(logs, mults)
    n = len(data[0])
    best = 1e9
    for _ in range(PASSES):
        t0 = _clock()
        fn(*data)
        dt = _elapsed_s(t0)
        if dt < best:
            best = dt
    return best / n


def count_ops(data):
    """CPython only: mean math.log calls, multiplications+divisions, and all
    float-producing arithmetic (+ - * / **) per feed, by opcode tracing the
    tinygeo code (the loop itself is not counted)."""
    import dis

    binary_op = dis.opmap.get("BINARY_OP")
    if binary_op is None:
        raise SystemExit("opcode counting needs CPython 3.11+ (BINARY_OP)")
    names = dict((i, name) for i, (name, _) in enumerate(dis._nb_ops))
    mul = set(i for i, n in names.items() if n in ("NB_MULTIPLY", "NB_INPLACE_MULTIPLY",
                                                     "NB_TRUE_DIVIDE", "NB_INPLACE_TRUE_DIVIDE"))
    arith = set(i for i, n in names.items() if n in (
        "NB_MULTIPLY", "NB_INPLACE_MULTIPLY", "NB_TRUE_DIVIDE", "NB_INPLACE_TRUE_DIVIDE",
        "NB_ADD", "NB_INPLACE_ADD", "NB_SUBTRACT", "NB_INPLACE_SUBTRACT", "NB_POWER", "NB_INPLACE_POWER"))
    counts = {"mul": 0, "arith": 0, "log": 0, "exp": 0, "sqrt": 0, "pow": 0}

    def tracer(frame, event, arg):
        if "tinygeo" not in frame.f_code.co_filename:
            return None
        frame.f_trace_opcodes = True
        if event == "opcode":
            code = frame.f_code.co_code
            if code[frame.f_lasti] == binary_op:
                op = code[frame.f_lasti + 1]
                if op in mul:
                    counts["mul"] += 1
                if op in arith:
                    counts["arith"] += 1
        return tracer

    saved = {}
    for name in ("log", "exp", "sqrt", "pow"):
        saved[name] = getattr(math, name)

        def counting(*args, _f=saved[name], _n=name):
            counts[_n] += 1
            return _f(*args)
        setattr(math, name, counting)
    ps, ts, rhs, times, gpss = data
    col = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event)
    sys.settrace(tracer)
    try:
        for i in range(len(ps)):
            col.feed(ps[i], ts[i], rhs[i], times[i], gpss[i])
    finally:
        sys.settrace(None)
        for name, f in saved.items():
            setattr(math, name, f)
    n = float(len(ps))
    return dict((k, v / n) for k, v in counts.items())


def report(name, data, logs, mults):
    feed_s = time_feeds(data)
    base_s = time_baseline(data, logs, mults)
    print("%s: feed %.2f us, baseline (%d math.log + %d multiplications) %.2f us, ratio %.2f"
          % (name, feed_s * 1e6, logs, mults, base_s * 1e6, feed_s / base_s))


def _arg(argv, name, default):
    if name in argv:
        return int(argv[argv.index(name) + 1])
    return default


def main(argv):
    data = readings()
    impl = sys.implementation.name
    logs = _arg(argv, "--logs", -1)
    mults = _arg(argv, "--mults", -1)
    if logs < 0 or mults < 0:
        if impl != "cpython":
            raise SystemExit("give --logs L --mults M under %s (counting needs CPython)" % impl)
        c = count_ops(data)
        print("per feed, mean over %d readings (CPython opcode trace): math.log %.2f, math.exp %.2f, "
              "math.sqrt %.2f, math.pow %.2f, multiplications+divisions %.2f, all float arithmetic %.2f"
              % (len(data[0]), c["log"], c["exp"], c["sqrt"], c["pow"], c["mul"], c["arith"]))
        logs = int(c["log"] + 0.5)
        mults = int(c["mul"] + 0.5)
    report("%s %s" % (impl, sys.version.split()[0]), data, logs, mults)
    if "--here" in argv or impl != "cpython":
        return 0
    import os
    import subprocess
    exe = os.path.join(os.path.dirname(sys.executable), "micropython")
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    env = dict(os.environ, MICROPYPATH=root)
    p = subprocess.run([exe, os.path.join("bench", "speed.py"), "--here", "--logs", str(logs),
                        "--mults", str(mults)], capture_output=True, text=True, env=env, cwd=root)
    sys.stdout.write(p.stdout)
    if p.returncode != 0:
        sys.stdout.write(p.stderr)
        return p.returncode
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
