"""tinygeo: heights from a live stream of pressure, temperature and humidity.

Float-only, dependency-free; runs unchanged on CPython and MicroPython.
Public names are re-exported here; each lives in a one-concept module.
"""
from .errors import (TinygeoError, RangeError, ModelRangeError, ReadingError,  # noqa: F401
                     CheckpointError)
from .constants import G0, WGS84, GRS80  # noqa: F401

__version__ = "0.1.0"
