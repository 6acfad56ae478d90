"""Checkpoints and printed lines for the example loggers (main.py, code.py).

Checkpoints survive a power cut at any moment, on any device filesystem:
two slot files (``<path>.0`` and ``<path>.1``) are written in turn, so the
slot holding the newest good checkpoint is never the one being overwritten.
Each slot holds::

    b"TGL3"  index (uint32 LE)  rows (uint32 LE)  Column.to_bytes()  CRC-32 (uint32 LE)

``index`` is the number of the next reading the logger will take; ``rows``
the number of table rows the logger had written for the readings before it
(0 without a table), so that a resumed table's end record counts all of its
rows; the CRC-32 (tinygeo.checkpoint.crc32) covers everything before it, the
slot header included, so a torn write (header written, blob not) or a
corrupted index is never taken for a checkpoint. (Slots of the layout before
the row count, b"TGL2", are not read: the logger starts a new log.) A slot that is missing, torn or corrupted is
skipped (the column's own blob check raises ``CheckpointError`` too), and the
newest good one is restored. No rename is needed, which matters because
renaming over an existing file fails on FAT and is not atomic everywhere.

A write that fails (storage full, a transient bus error) is reported in
``note`` and retried at the next checkpoint, into the same slot: checkpointing
is never switched off, and the other slot keeps the newest good checkpoint
meanwhile. ``failures`` counts the failed writes.

Runs unchanged under CPython, MicroPython and CircuitPython.
"""
import struct

from tinygeo.column import Column, EV_LEVEL, EV_TROPOPAUSE, EV_BURST, EV_LANDED, EV_LAUNCH, EV_FLOAT
from tinygeo.checkpoint import crc32
from tinygeo.errors import CheckpointError

MAGIC = b"TGL3"
_HEADER_LEN = 4 + 4 + 4


class Checkpoints:
    """Save and restore (reading index, Column) pairs in two slot files."""

    def __init__(self, path):
        self.path = path
        self._next_slot = 0
        self.note = ""
        self.failures = 0         # failed writes so far (each retried at the next save)
        self.loaded_from = ""     # slot file of the checkpoint load() returned
        self.rows = 0             # the table rows saved with that checkpoint

    def slot_path(self, slot):
        return "%s.%d" % (self.path, slot)

    def _read_slot(self, slot, on_event):
        # Return (index, column, rows) from one slot, or None if it is unusable.
        try:
            f = open(self.slot_path(slot), "rb")
        except OSError:
            return None
        try:
            data = f.read()
        finally:
            f.close()
        n = len(data)
        if n < _HEADER_LEN + 4 or data[:4] != MAGIC:
            return None
        (crc,) = struct.unpack("<I", data[n - 4:])
        if crc != crc32(data[:n - 4]):
            return None
        index, rows = struct.unpack("<II", data[4:_HEADER_LEN])
        try:
            column = Column.from_bytes(data[_HEADER_LEN:n - 4], on_event)
        except CheckpointError:
            return None
        return index, column, rows

    def load(self, on_event=None):
        """Return ``(index, column)`` of the newest good checkpoint, or None;
        ``rows`` is then the row count saved with it.

        ``on_event`` is given to the restored column (a checkpoint cannot hold
        a function). The next save then goes to the other slot."""
        best = None
        best_slot = 1
        for slot in (0, 1):
            got = self._read_slot(slot, on_event)
            if got is not None and (best is None or got[0] > best[0]):
                best = got
                best_slot = slot
        self._next_slot = 1 - best_slot
        self.loaded_from = self.slot_path(best_slot) if best is not None else ""
        if best is None:
            return None
        self.rows = best[2]
        return best[0], best[1]

    def save(self, index, column, rows=0):
        """Write a checkpoint (``rows``: the table rows written for the
        readings before ``index``); return True, or False if the write failed
        (then ``note`` says why and the next save tries the same slot again)."""
        data = MAGIC + struct.pack("<II", index, rows) + column.to_bytes()
        data += struct.pack("<I", crc32(data))
        path = self.slot_path(self._next_slot)
        try:
            f = open(path, "wb")
            try:
                f.write(data)
            finally:
                f.close()
        except OSError as e:
            self.failures += 1
            self.note = "checkpoint not written to %s (%s); retried at the next one" % (path, e)
            return False
        self._next_slot = 1 - self._next_slot
        return True


def resume_line(book, index, column):
    """The line a logger prints when it goes on from a checkpoint: which file,
    which reading, and how to start a new log instead (both slot files hold
    the log, so deleting only the newest would resume from the older)."""
    return "resuming from %s at reading %d, %d accepted so far (delete %s and %s to start over)" % (
        book.loaded_from, index, column.count, book.slot_path(0), book.slot_path(1))


ENDED_LINE = "no new readings after the checkpoint: this log had ended"
"""Printed when a resumed log gets no reading (a finished simulated flight)."""


def status_line(index, column):
    """One line with the live heights of the latest accepted reading."""
    return ("#%d t %.1f s p %.2f Pa gph %.2f gpm h %.2f m rate %.2f gpm/s sigma %.2f m "
            "gps_diff %.2f m phase %d" % (
                index, column.time_s, column.p_pa, column.gph_m, column.height_m,
                column.smooth_rate_gpm_s, column.sigma_m, column.gps_diff_m, column.phase))


def print_events(index, column, bits):
    """Print one line per event bit set in ``bits`` (as given to on_event)."""
    if bits & EV_LAUNCH:
        print("#%d event launch at t %.1f s gph %.2f gpm" % (index, column.launch_time_s, column.gph_m))
    if bits & EV_LEVEL:
        print("#%d event level %.0f hPa at gph %.2f gpm h %.2f m" % (
            index, column.level_p_pa * 0.01, column.level_gph_m, column.level_height_m))
    if bits & EV_TROPOPAUSE:
        # the level itself (the event is confirmed 2 km above it)
        print("#%d event tropopause (confirmed) at p %.1f Pa gph %.2f gpm t %.2f K, t %.1f s" % (
            index, column.tropopause_p_pa, column.tropopause_gph_m, column.tropopause_t_k,
            column.tropopause_time_s))
    if bits & EV_FLOAT:
        print("#%d event float at gph %.2f gpm since t %.1f s" % (
            index, column.float_gph_m, column.float_time_s))
    if bits & EV_BURST:
        print("#%d event burst gph %.2f gpm at t %.1f s" % (
            index, column.burst_gph_m, column.burst_time_s))
    if bits & EV_LANDED:
        print("#%d event landed h %.2f m at t %.1f s" % (index, column.height_m,
                                                        column.landing_time_s))


def summary_line(column):
    """The closing line of a log."""
    return "summary accepted %d rejected %d max_gph %.2f gpm burst_gph %.2f gpm h %.2f m phase %d" % (
        column.count, column.rejected, column.max_gph_m, column.burst_gph_m,
        column.height_m, column.phase)
