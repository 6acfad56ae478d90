"""tinygeo example logger for MicroPython: sensor -> Column -> live heights, events, checkpoints.

On a board: install the package (``mpremote mip install ports/micropython/package.json``),
copy this file with ``flightsim.py`` and ``logbook.py`` to the board's root
(``mpremote cp main.py flightsim.py logbook.py :``), and reset. On the host,
with the unix MicroPython runtime (or CPython), from the repository root::

    MICROPYPATH=. micropython ports/micropython/main.py
    MICROPYPATH=. micropython ports/micropython/main.py --step 5 --checkpoint /tmp/tg.ckpt

What it shows:

- the sensor is read only through the adapter interface in ``flightsim.py``
  (here the simulated flight; put a real driver class in its place);
- every reading goes to ``Column.feed``; a rejected reading raises
  ``ReadingError`` and leaves the column as it was, so the loop just counts
  it and goes on;
- events (launch, mandatory level crossed, tropopause, burst, landing) print
  a line from the column's ``on_event`` callback, called once per level when
  one reading crosses several; a status line prints for the first reading
  and then every ``PRINT_EVERY`` readings, at the reading before a multiple
  of ``PRINT_EVERY`` (``#59``, ``#119`` ...): with ``PRINT_EVERY`` equal to
  ``CHECKPOINT_EVERY`` the status line shows the state the checkpoint saves,
  and a resumed log does not print it again;
- every ``CHECKPOINT_EVERY`` readings the column state (``Column.to_bytes``)
  and the reading number go to a checkpoint; at start the newest good
  checkpoint is restored, so after a power cut the log goes on from there
  (see ``logbook.py`` for the two-slot scheme). The first line then says so:
  ``resuming from tinygeo.ckpt.1 at reading 1250, ... (delete tinygeo.ckpt.0
  and tinygeo.ckpt.1 to start over)``. By default the slot files are
  ``tinygeo.ckpt.0`` and ``.1`` in the current directory (the board's root
  on a device), so a second run on the host goes on from the first one's
  end: delete them, or give ``--checkpoint`` another path, for a new log.

- with ``--table PATH`` (``TABLE`` below) every accepted reading is also
  written as a row of tinygeo's table (tinygeo/record.py: the layout
  ``tinygeo compare`` reads), so a host can check the device's numbers with
  ``tinygeo compare PATH``. The rows are flushed before each checkpoint is
  written, and the checkpoint holds the number of rows; a run that ends
  writes the end record (``record.end_line``). A resumed log appends to the
  table: first the resume record (``record.resume_line``: the rows written
  after the checkpoint, for readings the logger now takes again, are void,
  and so is a row the power cut tore), then the rows from the checkpoint's
  reading on, and at the end the end record counting all the rows kept. A
  run stopped by a power cut (or ``--stop-after``) has no end record:
  ``tinygeo compare`` says it was cut short.

Settings are the constants below; on the host each can also be given as
``--name value`` (``--step``, ``--checkpoint``, ``--checkpoint-every``,
``--print-every``, ``--stop-after``, ``--pace-ms``, ``--table``; ``--help``
lists them).
``--stop-after N`` ends the run after N readings without a final checkpoint,
as a power cut would.
"""
import sys
import time

from tinygeo.column import Column
from tinygeo.errors import ReadingError
from tinygeo import record

from flightsim import SimulatedFlight, LAUNCH_HEIGHT_M
from logbook import Checkpoints, status_line, print_events, summary_line, resume_line, ENDED_LINE

LAT_DEG = 48.2                 # launch site latitude, deg (the invented flight's)
START_HEIGHT_M = LAUNCH_HEIGHT_M   # height of the first reading above MSL, m
STEP_S = 1.0                   # time between readings, s (sets the simulated flight)
CHECKPOINT = "tinygeo.ckpt"    # slot files tinygeo.ckpt.0 and tinygeo.ckpt.1
CHECKPOINT_EVERY = 60          # readings between checkpoints
PRINT_EVERY = 60               # readings between status lines
STOP_AFTER = 0                 # stop after this many readings, no final checkpoint (0 = never)
PACE_MS = 0                    # sleep between readings, ms (a real sensor paces the loop)
TABLE = ""                     # a file for the table rows of tinygeo/record.py ("" = none)


def options(argv):
    """Return the settings, with ``--name value`` pairs from ``argv`` applied;
    None after printing the usage for ``--help`` (or ``-h``)."""
    opts = {
        "step": STEP_S, "checkpoint": CHECKPOINT, "checkpoint-every": CHECKPOINT_EVERY,
        "print-every": PRINT_EVERY, "stop-after": STOP_AFTER, "pace-ms": PACE_MS,
        "table": TABLE,
    }
    if "--help" in argv or "-h" in argv:
        print("usage: main.py [--NAME VALUE]...  (a simulated flight through the column; the "
              "settings, with their defaults:)")
        for name in sorted(opts):
            print("  --%s %r" % (name, opts[name]))
        return None
    i = 0
    while i < len(argv):
        name = argv[i][2:] if argv[i].startswith("--") else ""
        if name not in opts or i + 1 >= len(argv):
            raise SystemExit("unknown or incomplete option %r; known: --%s VALUE (--help "
                             "lists them)" % (argv[i], " VALUE, --".join(sorted(opts))))
        default = opts[name]
        value = argv[i + 1]
        if isinstance(default, float):
            opts[name] = float(value)
        elif isinstance(default, str):
            opts[name] = value
        else:
            opts[name] = int(value)
        i += 2
    return opts


def sleep_ms(ms):
    if ms > 0:
        if hasattr(time, "sleep_ms"):
            time.sleep_ms(ms)
        else:
            time.sleep(ms * 0.001)


def run(opts):
    sensor = SimulatedFlight(opts["step"])

    def on_event(col, bits):
        # feed calls this after the column is updated; for a reading that
        # crosses several mandatory levels (sparse data) once per level
        print_events(sensor.index - 1, col, bits)

    book = Checkpoints(opts["checkpoint"])
    restored = book.load(on_event)
    if restored is None:
        column = Column(LAT_DEG, START_HEIGHT_M, on_event=on_event)
        print("start new log at reading 0")
    else:
        index, column = restored
        sensor.seek(index)
        print(resume_line(book, index, column))
    every = opts["checkpoint-every"]
    show = opts["print-every"]
    stop_after = opts["stop-after"]
    table = None
    rows = 0            # table rows written (kept: those of the readings taken once)
    if opts["table"]:
        table = open_table(opts["table"], column, restored is not None, sensor.index)
        rows = book.rows if restored is not None else 0
    taken = 0
    while sensor.read():
        index = sensor.index - 1
        taken += 1
        try:
            bits = column.feed(sensor.p_pa, sensor.t_k, sensor.rh_pct, sensor.time_s, sensor.gps_m)
            if table is not None:
                table.write(record.column_row(index, column, bits, sensor.rh_pct, sensor.gps_m) + "\n")
                rows += 1
        except ReadingError as e:
            print("#%d rejected %s: %s" % (index, e.reason, e))
        if show and (index == 0 or sensor.index % show == 0):
            print(status_line(index, column))
        if every and sensor.index % every == 0:
            if table is not None:
                table.flush()       # the rows before the checkpoint are on storage first
            if not book.save(sensor.index, column, rows) and book.note:
                print(book.note)
                book.note = ""
        if stop_after and taken >= stop_after:
            print("stopped after %d readings (as by a power cut)" % taken)
            if table is not None:
                table.close()       # no end record: the table is cut short
            return column
        sleep_ms(opts["pace-ms"])
    if taken == 0 and restored is not None:
        print(ENDED_LINE)
    if table is not None:
        table.flush()
    book.save(sensor.index, column, rows)
    if table is not None:
        table.write(record.end_line(rows, column) + "\n")
        table.close()
    print(summary_line(column))
    return column


def open_table(path, column, resumed, index):
    """Open the table file for the rows: a new log writes its head (magic,
    site line, header); a resumed one appends the resume record for reading
    ``index`` after a line end (the power cut may have torn the last row),
    and writes the head first if the file is missing or empty."""
    head = not resumed
    if resumed:
        try:
            f = open(path, "r")
            try:
                head = f.read(1) == ""
            finally:
                f.close()
        except OSError:
            head = True
    table = open(path, "w" if not resumed else "a")
    if head:
        table.write(record.MAGIC + "\n" + record.site_line(column) + "\n" + record.HEADER + "\n")
    if resumed:
        table.write("\n" + record.resume_line(index) + "\n")
    return table


if __name__ == "__main__":
    _opts = options(getattr(sys, "argv", [])[1:])
    if _opts is not None:
        run(_opts)
