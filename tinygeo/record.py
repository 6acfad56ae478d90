"""The record format: tinygeo's own plain-text table of per-reading results,
written the same way by a device (MicroPython, or the C twin in
ports/c/record.c) and by ``tinygeo replay`` on a host, and read by
``tinygeo compare`` and ``tinygeo plot``.

This module only writes; it runs on a board (``%`` formatting only, no
``str.format``, nothing but the event bits' values from tinygeo.column, which
it does not import: a logger that writes records loads this module and the
column, nothing more). The host's reader (tinygeo/host/table.py) imports the
layout from here, so the two cannot drift apart.

Layout (UTF-8 text, one record per line, fields separated by one TAB)::

    # tinygeo table 1
    # site lat_deg=47.3 start_height_m=420 ...
    line  time_s  p_pa  t_k  rh_pct  td_k  gps_m  gph_m  height_m  rate_m_s  sigma_m  flags  events
    12    0.000   96512.00  ...

* Lines starting with ``#`` are comments. The first one names the layout and
  its version (``MAGIC``; tables written before it was renamed start with
  ``# tinygeo replay table 1``, the same layout, still read). ``# site`` holds
  the column set-up as ``key=value`` words (``site_line``), so a reader can
  rebuild the same column; a host replay adds ``# input`` and, after the
  rows, ``#:`` summary records.
* The first line that is not a comment is the header (``HEADER``).
* ``line``: the number of the reading (the log line in a replay; on a device
  the running number of the reading offered to the column, rejected ones
  included). Only accepted readings get a row.
* Inputs as fed to the column: ``time_s`` (s), ``p_pa`` (Pa), ``t_k`` (K),
  ``rh_pct`` (%), ``gps_m`` (m above MSL); ``td_k`` the dew point (K) where the
  writer computed it. ``nan`` means "not given" or "not computed".
* Column outputs: ``gph_m`` geopotential height (gpm), ``height_m``
  geometric height above MSL (m), ``rate_m_s`` vertical rate (m/s, up
  positive), ``sigma_m`` 1-sigma height uncertainty (m), ``flags`` (the
  column's flag bits as a decimal integer), ``events``: ``-`` when none,
  otherwise words joined by ``+`` in the order of ``EVENT_WORDS``; a level is
  ``level<hPa>`` (e.g. ``level850``, one word per level, lowest first).
  Events come one reading late (the column confirms a reading when the next
  one is accepted) and some are decided later still: the word marks the row
  where the column decided, not where it happened. ``tropopause_confirmed``
  is written 2 km above the tropopause, where the WMO definition is
  confirmed; the level itself is the column's tropopause_* attributes (a
  host replay names it in its summary). Tables written before this word
  have ``tropopause`` in its place.
* After the rows, ``#: end`` (``end_line``) says that the table is complete:
  the rows written and the column's counters. A reader that finds no end
  record knows the table was cut short.
* ``#: resume line=N whole`` (``resume_line``): a logger that went on from a
  checkpoint taken before reading N takes readings N, N+1, ... again, so
  the rows it wrote for them before the power cut are void: a reader drops
  every earlier row whose ``line`` is N or more (and an earlier end
  record), and a row torn by the cut (the last line before the marker that
  is not a whole row). Rows with lines below N must be on storage when the
  checkpoint is written (flush the table first), so the rows kept are those
  of an uninterrupted run; the end record's ``rows`` counts them.
  The last word, ``whole`` (``RESUME_WHOLE``), tells a record written to
  the end from one torn by a power cut while it was written (``#: resume
  line=3`` left from ``line=3000``): a record whose last word is not
  ``whole`` is torn, and a reader ignores it (counts it, and says so; it
  voids no row; the next start of the logger writes a whole one). A record
  that ends in ``whole`` but does not hold exactly one ``line=N`` of ASCII
  digits before it is unreadable: a reader refuses the table. A last line
  without a line end in a table without an end record was cut by a power
  cut: dropped as torn, even when its fields read. Records written before
  the word existed have no ``whole`` and are ignored as torn (their rows
  taken twice show as rows whose line goes back).
* Fixed decimals (``FORMAT``) make the output byte-identical for the same
  input on one interpreter; MicroPython may round the last printed digit
  differently, so readers compare numbers, not text.

The station table has its own module, tinygeo.stationrecord (same
conventions).
"""

MAGIC = "# tinygeo table 1"
"""First line of a table (name and version of the layout)."""
SITE_PREFIX = "# site "
END_PREFIX = "#: end "
"""Start of the end record (``end_line``)."""
RESUME_PREFIX = "#: resume "
"""Start of the resume record (``resume_line``)."""
RESUME_WHOLE = "whole"
"""Last word of a resume record written to the end (``resume_line``)."""

COLUMNS = ("line", "time_s", "p_pa", "t_k", "rh_pct", "td_k", "gps_m",
           "gph_m", "height_m", "rate_m_s", "sigma_m", "flags", "events")
HEADER = "\t".join(COLUMNS)
FORMAT = "%d\t%.3f\t%.2f\t%.3f\t%.2f\t%.3f\t%.2f\t%.3f\t%.3f\t%.3f\t%.3f\t%d\t%s"

# The column's event bits (tinygeo.column EV_*) with their words, in the
# order the words are written; the level word carries the pressure.
# tests/test_record.py checks the bits against tinygeo.column.
EVENT_WORDS = ((16, "launch"), (1, "level"), (2, "tropopause_confirmed"), (4, "burst"),
               (8, "landed"), (32, "float"))
EV_LEVEL = 1

_NAN = float("nan")


def events_text(bits, level_p_pa):
    """The ``events`` field for event ``bits``: '-' when none.

    ``level_p_pa``: the mandatory level crossed, Pa, or a list/tuple of them
    (lowest first) when one reading crossed several; used when the level bit
    is set. Example: ``events_text(1 | 4, 85000.0) == 'level850+burst'``."""
    if not bits:
        return "-"
    out = ""
    for bit, word in EVENT_WORDS:
        if bits & bit:
            if bit == EV_LEVEL:
                levels = level_p_pa if isinstance(level_p_pa, (list, tuple)) else (level_p_pa,)
                for p in levels:
                    out += "+level%d" % int(p / 100.0 + 0.5)
            else:
                out += "+" + word
    return out[1:]


def row(line, time_s, p_pa, t_k, rh_pct, td_k, gps_m, gph_m, height_m, rate_m_s, sigma_m,
        flags, events):
    """One table row (no newline). ``events`` is the text of events_text;
    pass nan for a value not given or not computed (None is written nan)."""
    return FORMAT % (line, _f(time_s), _f(p_pa), _f(t_k), _f(rh_pct), _f(td_k), _f(gps_m),
                     _f(gph_m), _f(height_m), _f(rate_m_s), _f(sigma_m), flags, events)


def _f(x):
    return _NAN if x is None else x


def column_row(line, col, bits, rh_pct=None, gps_m=None, td_k=None):
    """The row of the reading a tinygeo.column.Column has just accepted.

    ``line``: the reading's number; ``col``: the column after its feed;
    ``bits``: what feed returned; ``rh_pct``, ``gps_m``: the values given
    with the reading (None: not given); ``td_k``: a dew point if the writer
    computed one. Time, pressure and temperature are the column's latest
    reading (time_s as the column holds it)."""
    return row(line, col.time_s, col.p_pa, col.t_k, rh_pct, td_k, gps_m, col.gph_m, col.height_m,
               col.rate_m_s, col.sigma_m, col.flags, events_text(bits, col.level_p_pa))


# the column settings a site line carries (what a reader needs to rebuild
# the same column), in this order
SITE_KEYS = ("lat_deg", "start_height_m", "anchor_p_pa", "sigma_p_pa", "sigma_t_k", "sigma_rh_pct",
             "bias_p_pa", "bias_t_k", "bias_rh_pct", "max_rate_m_s", "time_unit_s", "ice",
             "dry_fallback")


def site_line(col):
    """The ``# site`` line describing a column's set-up: ``key=value`` words
    of SITE_KEYS (nan for a setting that is None, 1/0 for True/False)."""
    out = SITE_PREFIX[:-1]
    for k in SITE_KEYS:
        v = getattr(col, k)
        if v is None:
            v = _NAN
        elif v is True or v is False:
            v = 1 if v else 0
        out += " %s=%r" % (k, v)
    return out


def end_line(rows, col):
    """The end record, written after the last row: ``rows`` the number of rows
    written, and the column's counters (readings accepted, rejected,
    retracted). Example: ``#: end rows=3566 count=3566 rejected=4 retracted=0``."""
    return "%srows=%d count=%d rejected=%d retracted=%d" % (
        END_PREFIX, rows, col.count, col.rejected, col.retracted)


def resume_line(line):
    """The resume record of a logger that goes on from a checkpoint taken
    before reading ``line`` (the number of the next reading it takes): rows
    written earlier with a line of ``line`` or more are void (see the module
    docstring). A power cut may have torn the last row, so write it on a line
    of its own after a line end: ``"\\n" + resume_line(n) + "\\n"`` (readers
    skip the blank line). The last word, ``whole``, tells the readers the
    record was written to the end. Example: ``resume_line(3000) == '#: resume
    line=3000 whole'``."""
    return "%sline=%d %s" % (RESUME_PREFIX, line, RESUME_WHOLE)
