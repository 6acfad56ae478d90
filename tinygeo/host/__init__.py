"""Host-side companion tools for tinygeo (CPython only).

Never imported by the core and left out of device manifests. Modules, in the
order they may import each other (one way; DEVELOPERS.md, "Imports run one
way"; tests/test_structure.py):

  table      reads the record format of tinygeo/record.py back (the table a
             device or a host replay writes), one row at a time
  options    what every command shares: exit codes, errors, inputs read as
             UTF-8 with a line limit, outputs written under a temporary name,
             the column mapping options and the column set-up
  logread    reads a recorded CSV/TSV log of readings, maps its columns to
             quantities and units (confirmed by the values), one line at a time
  simulate   invents a seeded, reproducible balloon flight for firmware tests
  replay     drives :class:`tinygeo.column.Column` over a log, streaming, and
             writes the table and its summary
  stationlog drives :class:`tinygeo.station.Station` over a station or buoy
             log, streaming, and writes the station table and its summary
  compare    checks a device's table against a host replay of its readings
  plot       draws a replayed profile, or a station table, with matplotlib
             (optional extra ``plot``)
  cli        the ``tinygeo`` command line: argparse and dispatch only
"""
