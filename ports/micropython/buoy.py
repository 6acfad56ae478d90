"""tinygeo example logger for a moored buoy (MicroPython, also CPython):
sensor -> Station -> hourly report lines, QC lines, checkpoints.

On the host, from the repository root, with the invented day of
examples/buoy_day.csv as the "sensor" (replayed line by line)::

    MICROPYPATH=. micropython ports/micropython/buoy.py --log examples/buoy_day.csv \\
        --checkpoint /tmp/buoy.ckpt
    MICROPYPATH=. micropython ports/micropython/buoy.py --log examples/buoy_day.csv \\
        --checkpoint /tmp/buoy.ckpt --stop-after 4000      # then run again: it resumes

A run goes on from its newest checkpoint (``<path>.0``, ``<path>.1``; the
default path ``buoy.ckpt`` is in the working directory): delete both files
to start over. ``--height M`` (the barometer's height above mean sea level:
on a sea buoy above the water line; on a lake or river the water's
elevation above sea level plus the mast) and ``--lat DEG`` set the station
(defaults: the invented day's); ``--help`` prints the options (HELP).

A resumed run keeps the station of its checkpoint: given a ``--height`` or
``--lat`` other than the checkpoint's, it refuses (exit status 1) and says
how to start over, rather than go on with settings it was not given. The
checkpoint also keeps a CRC-32 of the log line of the last reading fed: a
run resumed on a log whose line at that reading differs (another log) is
refused the same way. The log's time column must hold numeric seconds; a
log whose first time is text (ISO 8601, ``2026-10-12T00:00:00``) is
refused with one message (``tinygeo station`` on a host reads such logs).

On a board: install the package, copy this file to the board, and put your
sensor driver in place of ``LogSensor`` (a class with ``read()`` that sets
``p_pa``, ``t_k``, ``rh_pct``, ``time_s`` and returns False when there is
nothing more).

What it shows:

- every reading goes to ``Station.feed``; a rejected reading raises
  ``ReadingError`` and leaves the station as it was: the loop prints it and
  goes on (a log line with an empty or unreadable pressure, temperature or
  time is fed as nan or no time, and rejected so);
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
  the reading index, the rows written to the table and
  ``Station.to_bytes()`` go to one of two slot files
  in turn (``<path>.0``, ``<path>.1``), so the newest good checkpoint is
  never the one being overwritten. A slot holds::

      b"TGB3"  index (uint32 LE)  rows (uint32 LE)  mark (uint32 LE)  blob length (uint32 LE)
               blob  CRC-32 (uint32 LE)

  ``mark``: the CRC-32 of the log line of the last reading fed (0 before
  the first), checked on resume. Slots written before the mark was kept
  (``b"TGB2"``, without it) are still read, unchecked, and so are those
  written before the rows were kept (``b"TGBY"``; the rows are counted in
  the table)
  the CRC-32 (tinygeo.checkpoint.crc32) covering the header and the blob,
  so a torn or corrupted slot (header included) is skipped and the other one
  restored; the blob has its own frame and CRC as well. At start the newest
  good slot is restored and the first line says so. A write that fails is
  reported and retried at the next checkpoint, into the same slot.
- with ``--table PATH`` (``TABLE`` below) every completed average is also
  written as a row of tinygeo's station table (tinygeo/stationrecord.py: the layout
  ``tinygeo station`` writes and ``tinygeo plot`` draws), flushed, and a
  checkpoint follows each row. A resumed log appends to its table a resume
  record (stationrecord.resume_line: the rows written when the checkpoint
  was taken) before its rows, so that a row written after the checkpoint,
  before a power cut, and written again now is dropped by the readers; a
  table file that is missing or empty gets its magic line and header
  first. The end record closes the table when the log ends. Draw it on the
  host with ``tinygeo plot PATH -o day.png``.

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

MAGIC = b"TGB3"
_HEAD = "<IIII"
_HEAD_LEN = 20
MAGIC2 = b"TGB2"                   # slots without the mark (index, rows, blob length)
_HEAD2_LEN = 16
OLD_MAGIC = b"TGBY"                # slots without the rows (index, blob length)
_OLD_HEAD_LEN = 12
_NAN = float("nan")


def _number(w, i, unit):
    # field i of a log line times unit, nan when it is missing or unreadable
    # (the station rejects it as it rejects any bad reading)
    try:
        return float(w[i]) * unit
    except (IndexError, ValueError):
        return _NAN


HELP = """usage: buoy.py [--OPTION VALUE ...]
  --log PATH           the log replayed as the sensor (time_s,pressure_hpa,temp_c,rh_pct;
                       time_s numeric seconds, not ISO text)
  --checkpoint PATH    slot files PATH.0 and PATH.1; a run resumes from the newest
                       (delete both to start over)
  --table PATH         also write the station table (tinygeo plot draws it)
  --height M           the barometer's height, m, above mean sea level (a sea buoy: above
                       the water line; a lake or river: the water's elevation above sea
                       level plus the mast)
  --lat DEG            latitude, degrees
  --checkpoint-every N readings between checkpoints
  --stop-after N       stop after N readings, as by a power cut (0: never)
A resumed run keeps its checkpoint's station: a --height or --lat other than the
checkpoint's, or a log other than the one it was taken on, is refused (exit status 1)
with the files to delete to start over."""


class LogSensor:
    """Replays a CSV log (time_s,pressure_hpa,temp_c,rh_pct; '#' comments and
    a header line) as a sensor: read() takes the next reading. ``mark``:
    the CRC-32 of the last line read (0 before the first), which identifies
    the log at a checkpoint; ``time_text``: the time field of the last
    line read, as text."""

    def __init__(self, path):
        self.f = open(path)
        self.index = 0             # readings taken so far
        self.mark = 0
        self.time_text = ""
        self.p_pa = self.t_k = self.rh_pct = self.time_s = None

    def read(self):
        while True:
            line = self.f.readline()
            if not line:
                return False
            if line[0] == "#" or line.startswith("time"):
                continue
            self.mark = crc32(line.strip().encode())
            w = line.strip().split(",")
            self.time_text = w[0].strip()
            try:
                self.time_s = int(w[0])
            except ValueError:
                self.time_s = None     # no time: the station refuses the reading
            self.p_pa = _number(w, 1, 100.0)
            self.t_k = _number(w, 2, 1.0) + 273.15
            self.rh_pct = _number(w, 3, 1.0) if len(w) > 3 and w[3].strip() else None
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
        # (index, station, rows, mark) from slot k, or None if it is missing,
        # torn or corrupted (rows, mark None: an old slot without them)
        try:
            f = open(self.slot_path(k), "rb")
        except OSError:
            return None
        try:
            data = f.read()
        finally:
            f.close()
        mark = None
        if data[:4] == MAGIC and len(data) >= _HEAD_LEN + 4:
            index, rows, mark, n = struct.unpack(_HEAD, data[4:_HEAD_LEN])
            head = _HEAD_LEN
        elif data[:4] == MAGIC2 and len(data) >= _HEAD2_LEN + 4:
            index, rows, n = struct.unpack("<III", data[4:_HEAD2_LEN])
            head = _HEAD2_LEN
        elif data[:4] == OLD_MAGIC and len(data) >= _OLD_HEAD_LEN + 4:
            index, n = struct.unpack("<II", data[4:_OLD_HEAD_LEN])
            rows = None
            head = _OLD_HEAD_LEN
        else:
            return None
        if len(data) != head + n + 4:
            return None
        (crc,) = struct.unpack("<I", data[-4:])
        if crc32(data[:-4]) != crc:
            return None
        try:
            return index, Station.from_bytes(data[head:-4]), rows, mark
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

    def save(self, index, st, rows=0, mark=0):
        # index: readings taken; rows: rows written to the table; mark: the
        # CRC-32 of the log line of the last reading fed. A failed
        # write (storage full, a bus error) is reported and retried at the
        # next checkpoint into the same slot; the other slot keeps the
        # newest good checkpoint meanwhile
        blob = st.to_bytes()
        data = MAGIC + struct.pack(_HEAD, index, rows, mark, len(blob)) + blob
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


def new_station(opts):
    try:
        return Station(opts["height"], opts["lat"], AVERAGE_S)
    except ValueError as e:
        raise SystemExit("station not set up: %s (--height M, --lat DEG)" % e)


def options(argv):
    # the options as a dict; "given": the names given on the command line
    opts = {"log": LOG, "checkpoint": CHECKPOINT, "checkpoint-every": CHECKPOINT_EVERY,
            "stop-after": STOP_AFTER, "table": TABLE, "height": HEIGHT_M, "lat": LAT_DEG}
    given = []
    i = 0
    while i < len(argv):
        if argv[i] in ("--help", "-h"):
            print(HELP)
            raise SystemExit(0)
        name = argv[i][2:] if argv[i].startswith("--") else ""
        if name not in opts or i + 1 >= len(argv):
            raise SystemExit("unknown or incomplete option %r; known: --%s VALUE" % (
                argv[i], " VALUE, --".join(sorted(opts))))
        v = opts[name]
        try:
            opts[name] = argv[i + 1] if isinstance(v, str) else (
                float(argv[i + 1]) if isinstance(v, float) else int(argv[i + 1]))
        except ValueError:
            raise SystemExit("--%s %r: give a number" % (name, argv[i + 1]))
        given.append(name)
        i += 2
    opts["given"] = given
    return opts


def table_rows(path):
    # the rows in a table file, resume records honoured (for a slot that does
    # not keep them); -1 when the file is missing, empty or has no header
    n = -1
    try:
        f = open(path)
    except OSError:
        return -1
    from tinygeo import stationrecord
    for line in f:
        if n < 0:
            if line.startswith("time_s"):
                n = 0
            continue
        if line.startswith(stationrecord.RESUME_PREFIX):
            # a whole record only ('rows=N whole'); a torn one voids nothing
            w = line[len(stationrecord.RESUME_PREFIX):].split()
            if len(w) == 2 and w[1] == stationrecord.RESUME_WHOLE and w[0][:5] == "rows=" \
                    and w[0][5:] and not [c for c in w[0][5:] if c not in "0123456789"]:
                n = min(n, int(w[0][5:]))
        elif line.strip() and line[0] != "#":
            n += 1
    f.close()
    return n


def _clock_text(text):
    # True for a time written as date or clock text (2026-10-12T00:00:00,
    # 12:00): digits with '-' after the first character, or ':'
    return bool(text) and text[0] in "0123456789" and ("-" in text[1:] or ":" in text)


def run(opts):
    sensor = LogSensor(opts["log"])
    slots = Slots(opts["checkpoint"])
    got = slots.load()
    kept = None                    # the rows of the checkpoint (None: not known)
    if got is None:
        st = new_station(opts)
        print("start new log at reading 0")
    else:
        index, st, kept, mark = got
        over = "delete %s and %s to start over" % (slots.slot_path(0), slots.slot_path(1))
        for name, mine in (("height", st.height_m), ("lat", st.lat_deg)):
            if name in opts.get("given", ()) and opts[name] != mine:
                sensor.close()
                raise SystemExit("--%s %r: the checkpoint %s holds a station with --%s %r, and "
                                 "a resumed log keeps its station: leave out --%s to go on, or "
                                 "%s with the new one" % (name, opts[name], slots.loaded_from,
                                                          name, mine, name, over))
        sensor.seek(index)
        if sensor.index < index or (mark is not None and sensor.mark != mark):
            sensor.close()
            raise SystemExit("%s: not the log the checkpoint %s was taken on (%s at reading %d):"
                             " give that log to go on, or %s" % (
                                 opts["log"], slots.loaded_from, "it ends before" if
                                 sensor.index < index else "another line at", index - 1, over))
        print("resuming from %s at reading %d, %d accepted so far (%s)"
              % (slots.loaded_from, index, st.count, over))
    every = opts["checkpoint-every"]
    stop_after = opts["stop-after"]
    taken = 0
    saved = -1
    table = None
    rows = 0 if kept is None else kept
    if opts["table"]:
        from tinygeo import stationrecord     # loaded only when a table is written
        path = opts["table"]
        have = -1 if got is None else table_rows(path)
        if have < 0:
            # a new log, or a resumed one whose table is missing or empty:
            # the magic line and header first
            rows = 0
            table = open(path, "w")
            table.write(stationrecord.MAGIC + "\n" + stationrecord.station_line(st) + "\n" +
                        stationrecord.header(st) + "\n")
        else:
            # the rows written after the checkpoint are written again: the
            # resume record voids them (on a line of its own: the last row
            # may be torn)
            rows = have if kept is None else kept
            table = open(path, "a")
            table.write("\n" + stationrecord.resume_line(rows) + "\n")
        table.flush()
    while sensor.read():
        taken += 1
        index = sensor.index - 1
        if index == 0 and sensor.time_s is None and _clock_text(sensor.time_text):
            sensor.close()
            raise SystemExit("%s: the time column holds %r: buoy.py needs numeric seconds "
                             "(0, 1, 2, ...), not date and time text; convert the column, or "
                             "on a host run 'tinygeo station %s', which reads such times"
                             % (opts["log"], sensor.time_text, opts["log"]))
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
                slots.save(sensor.index, st, rows, sensor.mark)
                saved = sensor.index
        if every and sensor.index % every == 0 and saved != sensor.index:
            slots.save(sensor.index, st, rows, sensor.mark)
        if stop_after and taken >= stop_after:
            print("stopped after %d readings (as by a power cut)" % taken)
            sensor.close()
            if table is not None:
                table.close()
            return st
    sensor.close()
    slots.save(sensor.index, st, rows, sensor.mark)
    if table is not None:
        table.write(stationrecord.end_line(rows, st) + "\n")
        table.close()
    print("summary accepted %d rejected %d averages %d missing %d" % (
        st.count, st.rejected, st.averages, st.missing))
    return st


if __name__ == "__main__":
    run(options(getattr(sys, "argv", [])[1:]))
