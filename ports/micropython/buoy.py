"""tinygeo example logger for a moored buoy (MicroPython, also CPython):
sensor -> Station -> hourly report lines, QC lines, checkpoints.

On the host, from the repository root, with the invented day of
examples/buoy_day.csv as the "sensor" (replayed line by line)::

    MICROPYPATH=. micropython ports/micropython/buoy.py --log examples/buoy_day.csv
    MICROPYPATH=. micropython ports/micropython/buoy.py --log examples/buoy_day.csv \\
        --checkpoint /tmp/buoy.ckpt --stop-after 4000      # then run again: it resumes

On a board: install the package, copy this file to the board, and put your
sensor driver in place of ``LogSensor`` (a class with ``read()`` that sets
``p_pa``, ``t_k``, ``rh_pct``, ``time_s`` and returns False when there is
nothing more).

What it shows:

- every reading goes to ``Station.feed``; a rejected reading raises
  ``ReadingError`` and leaves the station as it was: the loop prints it and
  goes on;
- when an average completes on the full hour (``time_s`` a multiple of
  3600), a report line: station pressure, sea-level pressure, QNH, 3-hour
  tendency and its characteristic (WMO code table 0200, ``-`` when unknown),
  24-hour change (hPa), temperature, humidity, dew point (degC, %), QC flags
  and the readings in the average; when the QC flags of an average change,
  a ``qc`` line at any average;
- a clock set back by more than the station's clock step (max_gap_s +
  average_s; smaller steps are absorbed): its first readings are 'time'
  rejections, then the station restarts itself on the new clock (``EV_RESTART``, after
  ``takeover_readings`` readings in a row; the averages of the old clock
  cannot be placed on it) and the logger prints a ``restart`` line;
- checkpoints: every ``CHECKPOINT_EVERY`` readings and after each report,
  the reading index and ``Station.to_bytes()`` go to one of two slot files
  in turn (``<path>.0``, ``<path>.1``), so the newest good checkpoint is
  never the one being overwritten. A slot holds::

      b"TGBY"  index (uint32 LE)  blob length (uint32 LE)  blob  CRC-32 (uint32 LE)

  the CRC-32 (tinygeo.checkpoint.crc32) covering the header and the blob,
  so a torn or corrupted slot (header included) is skipped and the other one
  restored; the blob has its own frame and CRC as well. At start the newest
  good slot is restored and the first line says so. A write that fails is
  reported and retried at the next checkpoint, into the same slot.
- with ``--table PATH`` (``TABLE`` below) every completed average is also
  written as a row of tinygeo's station table (tinygeo/stationrecord.py: the layout
  ``tinygeo station`` writes and ``tinygeo plot`` draws), flushed, and a
  checkpoint follows each row, so a resumed log appends to its table
  without repeating rows (a power cut between a row and its checkpoint
  repeats that one row, with the same time_s and values). The end record
  closes the table when the log ends. Draw it on the host with
  ``tinygeo plot PATH -o day.png``.

NOT for aviation: QNH here is computed for the barometer's height; altimeter
settings for aircraft come from an aerodrome's certified instruments and its
met service's procedures.
"""
import struct
import sys

from tinygeo.station import Station, EV_AVERAGE, EV_FLAGS, EV_RESTART
from tinygeo.errors import ReadingError, CheckpointError
from tinygeo.checkpoint import crc32

LAT_DEG = 54.2                 # the buoy's latitude, deg (the invented day's)
HEIGHT_M = 3.5                 # barometer above the water line, m
AVERAGE_S = 600                # averages of 10 minutes
LOG = "buoy_day.csv"           # the replayed log (the "sensor" of this example)
CHECKPOINT = "buoy.ckpt"       # slot files buoy.ckpt.0 and buoy.ckpt.1
CHECKPOINT_EVERY = 600         # readings between checkpoints (and after each report)
STOP_AFTER = 0                 # stop after this many readings, no final checkpoint (0 = never)
TABLE = ""                     # a file for the station table of tinygeo/stationrecord.py ("" = none)

MAGIC = b"TGBY"
_HEAD = "<II"
_HEAD_LEN = 12


class LogSensor:
    """Replays a CSV log (time_s,pressure_hpa,temp_c,rh_pct; '#' comments and
    a header line) as a sensor: read() takes the next reading."""

    def __init__(self, path):
        self.f = open(path)
        self.index = 0             # readings taken so far
        self.p_pa = self.t_k = self.rh_pct = self.time_s = None

    def read(self):
        while True:
            line = self.f.readline()
            if not line:
                return False
            if line[0] == "#" or line.startswith("time"):
                continue
            w = line.strip().split(",")
            self.time_s = int(w[0])
            self.p_pa = float(w[1]) * 100.0
            self.t_k = float(w[2]) + 273.15
            self.rh_pct = float(w[3]) if w[3] else None
            self.index += 1
            return True

    def seek(self, index):
        while self.index < index and self.read():
            pass

    def close(self):
        self.f.close()


class Slots:
    """Two checkpoint slot files written in turn (header + blob under one CRC-32)."""

    def __init__(self, path):
        self.path = path
        self.next = 0
        self.loaded_from = ""
        self.failures = 0          # failed writes so far (each retried at the next save)

    def slot_path(self, k):
        return "%s.%d" % (self.path, k)

    def _read(self, k):
        # (index, station) from slot k, or None if it is missing, torn or corrupted
        try:
            f = open(self.slot_path(k), "rb")
        except OSError:
            return None
        try:
            data = f.read()
        finally:
            f.close()
        if len(data) < _HEAD_LEN + 4 or data[:4] != MAGIC:
            return None
        index, n = struct.unpack(_HEAD, data[4:_HEAD_LEN])
        if len(data) != _HEAD_LEN + n + 4:
            return None
        (crc,) = struct.unpack("<I", data[-4:])
        if crc32(data[:-4]) != crc:
            return None
        try:
            return index, Station.from_bytes(data[_HEAD_LEN:-4])
        except CheckpointError:
            return None

    def load(self):
        best = None
        best_k = 1
        for k in (0, 1):
            got = self._read(k)
            if got is not None and (best is None or got[0] > best[0]):
                best = got
                best_k = k
        self.next = 1 - best_k
        self.loaded_from = self.slot_path(best_k) if best is not None else ""
        return best

    def save(self, index, st):
        # a failed write (storage full, a bus error) is reported and retried
        # at the next checkpoint into the same slot; the other slot keeps the
        # newest good checkpoint meanwhile
        blob = st.to_bytes()
        data = MAGIC + struct.pack(_HEAD, index, len(blob)) + blob
        data += struct.pack("<I", crc32(data))
        try:
            f = open(self.slot_path(self.next), "wb")
            try:
                f.write(data)
            finally:
                f.close()
        except OSError as e:
            self.failures += 1
            print("checkpoint not written to %s (%s); retried at the next one"
                  % (self.slot_path(self.next), e))
            return
        self.next = 1 - self.next


def hpa(x):
    return "%.2f" % (x * 0.01)


def clock(ts):
    s = ts % 86400
    return "%02d:%02d" % (s // 3600, s % 3600 // 60)


def report_line(st):
    code = st.tendency_code
    return ("report %s p %s msl %s qnh %s t3h %s a %s d24 %s t %.2f rh %.1f td %.2f "
            "flags %d n %d" % (
                clock(st.time_s), hpa(st.p_pa), hpa(st.mslp_pa), hpa(st.qnh_pa),
                hpa(st.tendency_3h_pa), "-" if code is None else "%d" % code,
                hpa(st.change_24h_pa), st.t_k - 273.15, st.rh_pct, st.dew_point_k - 273.15,
                st.flags, st.average_readings))


def qc_line(st):
    return "qc %s flags %d gap_s %d" % (clock(st.time_s), st.flags, st.gap_s)


def new_station():
    return Station(HEIGHT_M, LAT_DEG, AVERAGE_S)


def options(argv):
    opts = {"log": LOG, "checkpoint": CHECKPOINT, "checkpoint-every": CHECKPOINT_EVERY,
            "stop-after": STOP_AFTER, "table": TABLE}
    i = 0
    while i < len(argv):
        name = argv[i][2:] if argv[i].startswith("--") else ""
        if name not in opts or i + 1 >= len(argv):
            raise SystemExit("unknown or incomplete option %r; known: --%s VALUE" % (
                argv[i], " VALUE, --".join(sorted(opts))))
        opts[name] = argv[i + 1] if isinstance(opts[name], str) else int(argv[i + 1])
        i += 2
    return opts


def table_rows(path):
    # the rows already in a table file (a resumed log appends to it)
    n = 0
    try:
        f = open(path)
    except OSError:
        return 0
    for line in f:
        if line[0] != "#" and not line.startswith("time_s"):
            n += 1
    f.close()
    return n


def run(opts):
    sensor = LogSensor(opts["log"])
    slots = Slots(opts["checkpoint"])
    got = slots.load()
    if got is None:
        st = new_station()
        print("start new log at reading 0")
    else:
        index, st = got
        sensor.seek(index)
        print("resuming from %s at reading %d, %d accepted so far (delete %s and %s to start "
              "over)" % (slots.loaded_from, index, st.count, slots.slot_path(0),
                         slots.slot_path(1)))
    every = opts["checkpoint-every"]
    stop_after = opts["stop-after"]
    taken = 0
    saved = -1
    table = None
    rows = 0
    if opts["table"]:
        from tinygeo import stationrecord     # loaded only when a table is written
        if got is None:
            table = open(opts["table"], "w")
            table.write(stationrecord.MAGIC + "\n" + stationrecord.station_line(st) + "\n" +
                        stationrecord.header(st) + "\n")
        else:
            rows = table_rows(opts["table"])
            table = open(opts["table"], "a")
    while sensor.read():
        taken += 1
        index = sensor.index - 1
        try:
            bits = st.feed(sensor.p_pa, sensor.t_k, sensor.rh_pct, sensor.time_s)
        except ReadingError as e:
            print("#%d rejected %s: %s" % (index, e.reason, e))
            bits = 0
        if bits & EV_RESTART:
            print("#%d restart at time_s %s: readings in a row contradicted the station "
                  "(clock set back?); averages start afresh" % (index, sensor.time_s))
        if bits & EV_AVERAGE:
            if bits & EV_FLAGS:
                print(qc_line(st))
            if st.time_s % 3600 == 0:
                print(report_line(st))
            if table is not None:
                table.write(stationrecord.row(st) + "\n")
                table.flush()
                rows += 1
            if table is not None or st.time_s % 3600 == 0:
                slots.save(sensor.index, st)
                saved = sensor.index
        if every and sensor.index % every == 0 and saved != sensor.index:
            slots.save(sensor.index, st)
        if stop_after and taken >= stop_after:
            print("stopped after %d readings (as by a power cut)" % taken)
            sensor.close()
            if table is not None:
                table.close()
            return st
    sensor.close()
    slots.save(sensor.index, st)
    if table is not None:
        table.write(stationrecord.end_line(rows, st) + "\n")
        table.close()
    print("summary accepted %d rejected %d averages %d missing %d" % (
        st.count, st.rejected, st.averages, st.missing))
    return st


if __name__ == "__main__":
    run(options(getattr(sys, "argv", [])[1:]))
