"""Host-side companion tools for tinygeo (CPython only).

Never imported by the core and left out of device manifests. Modules:

  cli        the ``tinygeo`` command line (replay, simulate, compare, plot)
  logread    reads a recorded CSV/TSV log of readings, maps its columns to
             quantities and units, and yields readings one line at a time
  table      the replay table: a plain tab-separated layout of tinygeo's own,
             written by the host replay (and by a logger on the device), read
             back by compare and plot
  replay     drives :class:`tinygeo.column.Column` over a log, streaming
  simulate   invents a seeded, reproducible balloon flight for firmware tests
  compare    checks a device's table against a host replay of its readings
  plot       draws a replayed profile with matplotlib (optional extra ``plot``)
"""
