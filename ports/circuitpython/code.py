"""tinygeo example logger for CircuitPython (``code.py`` on the CIRCUITPY drive).

The same loop as ``ports/micropython/main.py`` written the CircuitPython way:
settings come from ``settings.toml`` through ``os.getenv``, time is measured
with ``time.monotonic_ns()`` (CircuitPython has no ``time.ticks_ms``), and the
checkpoint goes to an SD card because CIRCUITPY is read-only to code while a
computer has it mounted over USB.

Drive layout (``python ports/circuitpython/build_lib.py`` builds it)::

    CIRCUITPY/code.py                 this file
    CIRCUITPY/lib/tinygeo/*.py|.mpy   the package modules
    CIRCUITPY/lib/flightsim.py        sensor adapter + simulated flight (demo)
    CIRCUITPY/lib/logbook.py          checkpoints and printed lines

Optional ``settings.toml`` entries (strings, as CircuitPython reads them)::

    TINYGEO_CHECKPOINT = "/sd/tinygeo.ckpt"   # "" switches checkpoints off
    TINYGEO_STEP_S = "1.0"                    # time between simulated readings, s
    TINYGEO_PACE_S = "0.05"                   # wall-clock wait between readings, s
    TINYGEO_CHECKPOINT_EVERY = "60"
    TINYGEO_PRINT_EVERY = "60"
    TINYGEO_STOP_AFTER = "0"                  # host tests: stop as by a power cut

Checkpoints: mount an SD card at ``/sd`` before this runs (``sdcardio`` +
``storage.mount``), or make CIRCUITPY writable to code with
``storage.remount("/", readonly=False)`` in ``boot.py`` (the computer then sees
the drive read-only) and set ``TINYGEO_CHECKPOINT = "/tinygeo.ckpt"``. If the
path cannot be written the logger prints one note and runs without
checkpoints.

Not run on CircuitPython here (no CircuitPython runtime exists for this
host); it is type-checked against CircuitPython's stubs and run under CPython
and the MicroPython unix runtime by tests/test_ports.py.
"""
import os
import time

from tinygeo.column import Column
from tinygeo.errors import ReadingError

from flightsim import SimulatedFlight, LAUNCH_HEIGHT_M
from logbook import Checkpoints, status_line, print_events, summary_line, resume_line, ENDED_LINE

LAT_DEG = 48.2                     # launch site latitude, deg (the invented flight's)
START_HEIGHT_M = LAUNCH_HEIGHT_M   # height of the first reading above MSL, m

# time.monotonic_ns() exists on CircuitPython (and CPython); the MicroPython unix
# runtime used for host tests has time.time_ns() instead. An int nanosecond
# count keeps full resolution: time.monotonic() returns a float that, with
# CircuitPython's reduced-precision floats, gets coarse after hours of uptime.
_clock_ns = getattr(time, "monotonic_ns", None) or getattr(time, "time_ns")


def setting(name, default):
    """``settings.toml`` value ``name`` converted to the type of ``default``."""
    value = os.getenv(name)
    if value is None:
        return default
    if isinstance(default, str):
        return str(value)
    if isinstance(default, float):
        return float(value)
    return int(value)


def run():
    step_s = setting("TINYGEO_STEP_S", 1.0)
    pace_s = setting("TINYGEO_PACE_S", 0.05)
    every = setting("TINYGEO_CHECKPOINT_EVERY", 60)
    show = setting("TINYGEO_PRINT_EVERY", 60)
    stop_after = setting("TINYGEO_STOP_AFTER", 0)
    path = setting("TINYGEO_CHECKPOINT", "/sd/tinygeo.ckpt")

    sensor = SimulatedFlight(step_s)

    def on_event(col, bits):
        # feed calls this after the column is updated; for a reading that
        # crosses several mandatory levels (sparse data) once per level
        print_events(sensor.index - 1, col, bits)

    book = Checkpoints(path)
    storage = path != ""          # TINYGEO_CHECKPOINT="" runs without checkpoints
    restored = book.load(on_event) if storage else None
    if restored is None:
        column = Column(LAT_DEG, START_HEIGHT_M, on_event=on_event)
        print("start new log at reading 0")
    else:
        index, column = restored
        sensor.seek(index)
        print(resume_line(book, index, column))

    taken = 0
    next_ns = _clock_ns()
    while sensor.read():
        index = sensor.index - 1
        taken += 1
        try:
            column.feed(sensor.p_pa, sensor.t_k, sensor.rh_pct, sensor.time_s, sensor.gps_m)
        except ReadingError as e:
            print("#%d rejected %s: %s" % (index, e.reason, e))
        if show and (index == 0 or sensor.index % show == 0):
            print(status_line(index, column))
        if storage and every and sensor.index % every == 0:
            if not book.save(sensor.index, column) and book.note:
                print(book.note)
                book.note = ""
        if stop_after and taken >= stop_after:
            print("stopped after %d readings (as by a power cut)" % taken)
            return column
        if pace_s > 0.0:
            next_ns += int(pace_s * 1e9)
            wait_ns = next_ns - _clock_ns()
            if wait_ns > 0:
                time.sleep(wait_ns * 1e-9)
    if taken == 0 and restored is not None:
        print(ENDED_LINE)
    if storage:
        book.save(sensor.index, column)
    print(summary_line(column))
    return column


run()
