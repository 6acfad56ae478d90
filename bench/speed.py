"""Time per Column.feed under CPython and MicroPython, each as a ratio to a bare baseline.

Run from the repository root with the venv active::

    python bench/speed.py

One run prints both interpreters' figures: it first counts, under CPython,
how many calls of each ``math`` function (``log``, ``exp``, ...) and how many
float multiplications/divisions one ``feed`` executes on average over the
simulated flight (opcode tracing of the core's code plus counting wrappers
around every ``math`` function), then times ``feed`` under CPython and under
the MicroPython unix runtime (``micropython bench/speed.py --here --calls
exp=1 --mults M`` as a subprocess). In each interpreter the same run also
times a *baseline* loop that does exactly those math calls (rounded to whole
calls) and that many multiplications per reading over the same input lists,
and prints the ratio feed / baseline, which stays comparable on a noisy or
different machine.

Readings: the whole flight of ``ports/micropython/flightsim.py`` at 5 s steps
(ground wait, ascent, burst, descent, landing; the one failed reading is
dropped), with humidity, time and a GPS height every tenth reading, fed to a
fresh Column with event detection and an ``on_event`` callback. Timing: the
flight is cut into blocks of 40 readings, each block timed with feed and then
with the baseline in each of 9 passes; a figure is the sum of each block's
fastest pass (so both loops are timed in equally short spans and a burst of
load on the machine does not favour one of them).

Options: ``--here`` (time only the running interpreter), ``--calls
log=L,exp=E`` and ``--mults M`` (baseline counts; default: count them, CPython
only).
"""
import math
import sys
from array import array

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
PASSES = 9
CHUNK = 40          # readings per timed block
_NAN = float("nan")
STEP_S = 5.0


def _on_event(column, bits):
    pass


def readings():
    """The flight as five arrays of doubles (p, t, rh, time, gps; nan where a
    humidity or GPS height is missing), failed readings dropped.

    Arrays, not lists of floats: their values sit in one block each, while a
    list's float objects would be scattered through MicroPython's heap between
    the simulator's garbage and leave no large free block (a Column could not
    even be created afterwards on the default 2 MB heap)."""
    s = SimulatedFlight(STEP_S)
    n = 0
    while s.read():
        if s.t_k == s.t_k:
            n += 1
    cols = [array("d", [0.0] * n) for _ in range(5)]
    ps, ts, rhs, times, gpss = cols
    s = SimulatedFlight(STEP_S)
    i = 0
    while s.read():
        if s.t_k != s.t_k:
            continue
        ps[i] = s.p_pa
        ts[i] = s.t_k
        rhs[i] = _NAN if s.rh_pct is None else s.rh_pct
        times[i] = s.time_s
        gpss[i] = _NAN if s.gps_m is None else s.gps_m
        i += 1
    return ps, ts, rhs, times, gpss


def make_baseline(calls, mults):
    """Compile a loop doing, per reading, the math calls in ``calls`` (a list
    of (name, count), e.g. [("exp", 1)]) and ``mults`` float multiplications,
    reading the same five arrays as the feed loop, for readings lo..hi-1."""
    body = ["def baseline(ps, ts, rhs, times, gpss, lo, hi):",
            "    for i in range(lo, hi):",
            "        p = ps[i]; t = ts[i]; rh = rhs[i]; tm = times[i]; g = gpss[i]",
            "        rh = None if rh != rh else rh; g = None if g != g else g",
            "        x = t * 0.001"]
    for name, count in calls:
        for _ in range(count):
            body.append("        y = math.%s(x)" % name)
    for _ in range(mults):
        body.append("        y = p * t")
    body.append("    return hi - lo")
    scope = {"math": math}
    exec("\n".join(body) + "\n", scope)
    return scope["baseline"]


def time_both(data, calls, mults):
    """Seconds per reading of feed and of the baseline.

    The flight is cut into blocks of CHUNK readings; in each pass every block
    is timed with feed (a fresh Column per pass, so block k always does the
    same work) and then with the baseline. The figure is the sum over blocks
    of each block's fastest pass, divided by the readings: both loops are
    timed in equally short spans, so a burst of load on the machine does not
    hit one and spare the other."""
    ps, ts, rhs, times, gpss = data
    fn = make_baseline(calls, mults)
    n = len(ps)
    nb = (n + CHUNK - 1) // CHUNK
    fmin = [1e9] * nb
    bmin = [1e9] * nb
    for _ in range(PASSES):
        col = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event)
        feed = col.feed
        for b in range(nb):
            lo = b * CHUNK
            hi = min(n, lo + CHUNK)
            t0 = _clock()
            for i in range(lo, hi):
                rh = rhs[i]
                g = gpss[i]
                feed(ps[i], ts[i], None if rh != rh else rh, times[i], None if g != g else g)
            dt = _elapsed_s(t0)
            if dt < fmin[b]:
                fmin[b] = dt
            t0 = _clock()
            fn(ps, ts, rhs, times, gpss, lo, hi)
            dt = _elapsed_s(t0)
            if dt < bmin[b]:
                bmin[b] = dt
    return sum(fmin) / n, sum(bmin) / n


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
    counts = {"mul": 0, "arith": 0}
    calls = {}

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
    for name in dir(math):
        f = getattr(math, name)
        if name.startswith("_") or not callable(f):
            continue
        saved[name] = f
        calls[name] = 0

        def counting(*args, _f=f, _n=name):
            calls[_n] += 1
            return _f(*args)
        setattr(math, name, counting)
    ps, ts, rhs, times, gpss = data
    col = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event)
    sys.settrace(tracer)
    try:
        for i in range(len(ps)):
            rh = rhs[i]
            g = gpss[i]
            col.feed(ps[i], ts[i], None if rh != rh else rh, times[i], None if g != g else g)
    finally:
        sys.settrace(None)
        for name, f in saved.items():
            setattr(math, name, f)
    n = float(len(ps))
    used = sorted((k, v / n) for k, v in calls.items() if v)
    return counts["mul"] / n, counts["arith"] / n, used


def report(name, data, calls, mults):
    feed_s, base_s = time_both(data, calls, mults)
    what = " + ".join("%d math.%s" % (c, n) for n, c in calls) or "no math calls"
    print("%s: feed %.2f us, baseline (%s + %d multiplications) %.3f us, ratio feed/baseline %.2f"
          % (name, feed_s * 1e6, what, mults, base_s * 1e6, feed_s / base_s))


def _parse_calls(text):
    calls = []
    for item in text.split(","):
        if item:
            name, count = item.split("=")
            calls.append((name, int(count)))
    return calls


def main(argv):
    data = readings()
    impl = sys.implementation.name
    if "--calls" in argv and "--mults" in argv:
        calls = _parse_calls(argv[argv.index("--calls") + 1])
        mults = int(argv[argv.index("--mults") + 1])
    else:
        if impl != "cpython":
            raise SystemExit("give --calls NAME=N,... --mults M under %s (counting needs CPython)" % impl)
        mul, arith, used = count_ops(data)
        print("per feed, mean over %d readings (CPython opcode trace of tinygeo code): %s; "
              "multiplications+divisions %.2f; all binary float arithmetic (+ - * / **) %.2f"
              % (len(data[0]), ", ".join("math.%s %.3f" % u for u in used) or "no math calls", mul, arith))
        calls = [(n, int(c + 0.5)) for n, c in used if int(c + 0.5) > 0]
        mults = int(mul + 0.5)
    report("%s %s" % (impl, ".".join(str(v) for v in sys.implementation.version[:3])), data, calls, mults)
    if "--here" in argv or impl != "cpython":
        return 0
    import os
    import subprocess
    exe = os.path.join(os.path.dirname(sys.executable), "micropython")
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    env = dict(os.environ, MICROPYPATH=root)
    arg_calls = ",".join("%s=%d" % c for c in calls)
    p = subprocess.run([exe, os.path.join("bench", "speed.py"), "--here", "--calls", arg_calls,
                        "--mults", str(mults)], capture_output=True, text=True, env=env, cwd=root)
    sys.stdout.write(p.stdout)
    if p.returncode != 0:
        sys.stdout.write(p.stderr)
        return p.returncode
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
