"""The station table: tinygeo's own plain-text table of the averages of a
tinygeo.station.Station, written the same way by a device (ports/micropython/
buoy.py) and by ``tinygeo station`` on a host, and read by
tinygeo/host/table.py and ``tinygeo plot``. Same conventions as the column's
table (tinygeo.record: UTF-8, TAB-separated, ``#`` comments, ``nan``, an end
record), its own magic line and columns, one row per completed average::

    # tinygeo station table 1
    # station height_m=3.5 lat_deg=54.2 average_s=600 ...
    time_s  p_pa  mslp_pa  qnh_pa  tend3h_pa  tend_code  chg24h_pa  t_k  rh_pct  td_k  flags  readings
    600.000 101144.31 ...

* ``# station`` (``station_line``) holds the station's settings as
  ``key=value`` words (KEYS; nan for a setting that is None, 1/0
  for True/False).
* ``time_s``: the end of the average, in the clock of the time stamps fed
  (Station.time_s), s; ``p_pa``, ``mslp_pa``, ``qnh_pa``: mean station
  pressure, sea-level pressure, QNH, Pa; ``tend3h_pa``: the 3-hour tendency,
  Pa; ``tend_code``: its characteristic (WMO code table 0200, 0..8; ``-``
  when unknown); ``chg24h_pa``: the 24-hour change, Pa; ``t_k``, ``rh_pct``,
  ``td_k``: mean temperature, humidity, dew point; ``flags``: the station's
  FL_* bits; ``readings``: the accepted readings that fell in the average;
  ``iso_gph_m``: the geopotential height of the standard isobaric surface
  (gpm), a column of its own only when the station has one (iso_p_pa set,
  or a station at 800 m and above). ``nan``: not known.
* ``#: end`` (``end_line``) after the rows: rows written and the
  station's counters.
* ``#: resume rows=N whole`` (``resume_line``): a logger that went on from a
  checkpoint taken when it had written N rows writes the rows after those
  again, so the rows it wrote after them before the power cut are void: a
  reader keeps the first N rows before the record (rows voided by earlier
  resume records not counted) and drops the rest, an earlier end record,
  and a row torn by the cut (the last line before the record that is not a
  whole row). The table has no reading numbers (the column table's
  ``line``), so the logger counts its rows and keeps the count in its
  checkpoint (ports/micropython/buoy.py does). The last word, ``whole``
  (``RESUME_WHOLE``), tells a record written to the end from one torn by a
  power cut while it was written (``#: resume rows=9`` left from
  ``rows=99``): a record whose last word is not ``whole`` is torn, and the
  readers ignore it (count it and say so; it voids no row; the next start
  writes a whole one). A record that ends in ``whole`` but does not hold
  exactly one ``rows=N`` of ASCII digits before it is unreadable: a reader
  refuses the table. A whole record whose N is more than the rows before
  it means rows were lost (a reader says so). A last line without a line
  end in a table without an end record was cut by a power cut: dropped as
  torn, even when its fields read (a cut inside the last number). Records
  written before the word existed are ignored as torn.

This module only writes and runs on a board (``%`` formatting only); it
imports nothing, so a buoy logger does not load the column's table module
and a flight logger does not load this one. The host's reader
(tinygeo/host/table.py) imports the layout from here.
"""
END_PREFIX = "#: end "
"""The end record's prefix, the same as tinygeo.record.END_PREFIX (tested)."""
RESUME_PREFIX = "#: resume "
"""The resume record's prefix, the same as tinygeo.record.RESUME_PREFIX (tested)."""
RESUME_WHOLE = "whole"
"""The resume record's last word, the same as tinygeo.record.RESUME_WHOLE (tested)."""

_NAN = float("nan")

MAGIC = "# tinygeo station table 1"
"""First line of a station table (name and version of the layout)."""
PREFIX = "# station "
COLUMNS = ("time_s", "p_pa", "mslp_pa", "qnh_pa", "tend3h_pa", "tend_code", "chg24h_pa",
           "t_k", "rh_pct", "td_k", "flags", "readings")
ISO = "iso_gph_m"
"""The column added after COLUMNS when the station has an isobaric surface."""
FORMAT = "%.3f\t%.2f\t%.2f\t%.2f\t%.2f\t%s\t%.2f\t%.3f\t%.2f\t%.3f\t%d\t%d"
# the Station settings a station line carries, in this order
KEYS = ("height_m", "lat_deg", "average_s", "ice", "min_readings", "stuck_readings",
        "max_p_step_pa", "max_p_rate_pa_s", "max_t_step_k", "max_t_rate_k_s",
        "max_rh_step_pct", "max_rh_rate_pct_s", "guard_m", "steady_pa", "max_gap_s",
        "mean12", "iso_p_pa", "takeover_readings")


def header(st):
    """The header line of a station table for the tinygeo.station.Station
    ``st`` (``iso_gph_m`` last when the station has an isobaric surface)."""
    out = "\t".join(COLUMNS)
    if st.iso_p_pa is not None:
        out += "\t" + ISO
    return out


def station_line(st):
    """The ``# station`` line: ``key=value`` words of KEYS."""
    out = PREFIX[:-1]
    for k in KEYS:
        v = getattr(st, k)
        if v is None:
            v = _NAN
        elif v is True or v is False:
            v = 1 if v else 0
        out += " %s=%r" % (k, v)
    return out


def row(st):
    """The row of the average a Station has just completed (after a feed
    that returned EV_AVERAGE), no newline."""
    code = st.tendency_code
    out = FORMAT % (st.time_s, st.p_pa, st.mslp_pa, st.qnh_pa, st.tendency_3h_pa,
                            "-" if code is None else "%d" % code, st.change_24h_pa, st.t_k,
                            st.rh_pct, st.dew_point_k, st.flags, st.average_readings)
    if st.iso_p_pa is not None:
        out += "\t%.2f" % st.iso_gph_m
    return out


def end_line(rows, st):
    """The end record of a station table: ``rows`` written, and the station's
    counters. Example: ``#: end rows=142 count=8575 rejected=5 averages=142
    missing=1``."""
    return "%srows=%d count=%d rejected=%d averages=%d missing=%d" % (
        END_PREFIX, rows, st.count, st.rejected, st.averages, st.missing)


def resume_line(rows):
    """The resume record of a logger that goes on from a checkpoint taken
    when it had written ``rows`` rows to this table: the rows after those,
    written before a power cut, are void (see the module docstring). A cut
    may have torn the last row, so write it on a line of its own after a
    line end: ``"\\n" + resume_line(n) + "\\n"`` (readers skip the blank
    line). The last word, ``whole``, tells the readers the record was
    written to the end. Example: ``resume_line(142) == '#: resume rows=142
    whole'``."""
    return "%srows=%d %s" % (RESUME_PREFIX, rows, RESUME_WHOLE)
