"""Errors raised by tinygeo, and the argument checks that raise them.

Every error is a ``ValueError`` subclass so that ``except ValueError`` catches
it, and its message names the argument, the value received, the accepted range
with its unit, and (where a likely mistake is known) what to do about it, e.g.::

    t_k=21.5 outside 150..350 K; Celsius passed? add 273.15

Checks run before any state is touched, so a rejected call changes nothing.
This module imports nothing, so it runs unchanged under MicroPython.
"""


class TinygeoError(ValueError):
    """Base class of every error tinygeo raises (a ``ValueError``)."""


class RangeError(TinygeoError):
    """An argument is not a finite number, or lies outside its accepted range."""


class ModelRangeError(TinygeoError):
    """A value lies outside the range a published model is defined for.

    Example: a pressure altitude above the top of the standard atmosphere
    (84 852 m geopotential, 0.3734 Pa)."""


class ReadingError(TinygeoError):
    """A streamed reading was rejected; the running state is unchanged.

    ``reason`` is a short fixed word (``'pressure'``, ``'temperature'``,
    ``'humidity'``, ``'time'``, ``'rate'``, ``'gps'``, ``'number'``) that a
    logger can count or store without parsing the message."""

    def __init__(self, message, reason="reading"):
        super().__init__(message)
        self.reason = reason


class CheckpointError(TinygeoError):
    """A checkpoint blob is truncated, corrupted, of another version, or not
    a tinygeo checkpoint at all. Nothing is restored from it."""


def quote(value):
    """``value`` as quoted in a message: its repr, cut to 40 characters."""
    try:
        return repr(value)[:40]
    except Exception:  # pragma: no cover - repr of exotic objects
        return "<unprintable>"


INF = float("inf")
NINF = -INF


def real(value):
    """``value`` as a float if it is a real number, else None.

    The one input rule of every public function and of ``Column.feed``: an
    int (not a bool) or a float, or on CPython any other real number type
    that converts with float() (numpy floats, Fraction, Decimal). Text
    (``"45"``, ``"4_5"``), bytes, bool and complex are NOT numbers here,
    even where float() would read them. An int too large for a float
    (``10**400``) gives inf, so it fails the finiteness test of the caller
    (on MicroPython float() of a huge int already gives inf). A nan or inf
    passes through; callers test finiteness."""
    if isinstance(value, float):
        return value
    if isinstance(value, (bool, str, bytes, bytearray)):
        return None
    try:
        return float(value)
    except OverflowError:
        return INF
    except (TypeError, ValueError):
        return None


def as_finite(name, value, unit, error=RangeError):
    """Return ``value`` as a float, or raise ``error`` if it is not a finite
    real number (see ``real`` for what counts as a number).

    ``name`` and ``unit`` are used in the message only."""
    x = real(value)
    if x is None or x != x or x == INF or x == NINF:   # comparisons allocate nothing
        raise error("%s=%s is not %s; pass a finite number in %s"
                    % (name, quote(value), "a number" if x is None else "finite", unit))
    return x


def check_flag(name, value):
    """Return ``value`` as a bool if it is True or False or a number equal to
    1 or 0 (the shared vector files write flags as 0 and 1); otherwise raise
    RangeError (so ``ice="False"``, a non-empty string, is not taken as True)."""
    if value is True or value is False:
        return value
    if isinstance(value, (int, float)) and (value == 0 or value == 1):
        return value == 1
    raise RangeError("%s=%s is not a flag; pass True or False" % (name, quote(value)))


def check_range(name, value, lo, hi, unit, hint=None, error=RangeError):
    """Return ``value`` as a float if ``lo <= value <= hi``; otherwise raise ``error``.

    The message is ``"<name>=<value> outside <lo>..<hi> <unit>"`` followed by
    ``"; <hint>"`` when a hint is given. ``hint`` is a string, or a function
    of the rejected float that returns a string or None (called only when
    the value is rejected; it must not raise)."""
    x = as_finite(name, value, unit, error)
    if x < lo or x > hi:
        if callable(hint):
            hint = hint(x)
        msg = "%s=%s outside %g..%g %s" % (name, quote(value), lo, hi, unit)
        if hint:
            msg += "; " + hint
        raise error(msg)
    return x


def temperature_hint(t):
    """A hint for a temperature in kelvin that was rejected, or None."""
    if -150 <= t <= 160:
        return "Celsius passed? add 273.15 (Fahrenheit: add 459.67, divide by 1.8)"
    return None


def pressure_hint(p):
    """A hint for a pressure in pascal that was rejected, or None."""
    if p <= 0:
        return "pressure must be positive"
    if p <= 1200:
        h = "hPa or mbar passed? multiply by 100"
        if 25 <= p <= 32.5:
            return "inHg passed? multiply by 3386.39; " + h
        if 50 <= p <= 110:
            return "kPa passed? multiply by 1000; " + h
        return h
    if 120000 <= p <= 1200000:
        return "check the unit: pascal expected"
    return None


def check_t_k(name, value, lo=150, hi=350, error=RangeError):
    """Check a temperature in kelvin (default range 150..350 K)."""
    return check_range(name, value, lo, hi, "K", temperature_hint, error)


def check_p_pa(name, value, lo, hi, error=RangeError):
    """Check a pressure in pascal within ``lo..hi`` Pa."""
    return check_range(name, value, lo, hi, "Pa", pressure_hint, error)


def check_lat(value, name="lat_deg"):
    """Check a geodetic latitude in degrees (-90..90)."""
    return check_range(name, value, -90, 90, "deg", "geodetic latitude, north positive")


def check_rh(value, name="rh_pct", tol=3, error=RangeError):
    """Check a relative humidity in percent (0..100, accepting ``tol`` % beyond
    either end as sensor noise; the value is returned unchanged, not clamped)."""
    return check_range(name, value, -tol, 100 + tol, "%", "relative humidity is in percent", error)
