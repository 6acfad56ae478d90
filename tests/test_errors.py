"""Argument checks: every rejection is a ValueError subclass whose message names
the argument, the value, the accepted range with unit, and a hint for the
likely mistake (common practice: Celsius for kelvin, hPa for Pa)."""
import math

import pytest

from tinygeo import errors
from tinygeo.errors import RangeError, TinygeoError


def test_hierarchy():
    for cls in (errors.RangeError, errors.ModelRangeError, errors.ReadingError, errors.CheckpointError):
        assert issubclass(cls, TinygeoError) and issubclass(cls, ValueError)


def test_celsius_hint():
    with pytest.raises(RangeError) as e:
        errors.check_t_k("t_k", 21.5)
    msg = str(e.value)
    assert "t_k=21.5" in msg and "150..350 K" in msg and "Celsius" in msg and "273.15" in msg


def test_hpa_hint():
    with pytest.raises(RangeError) as e:
        errors.check_p_pa("p_pa", 1013.25, 30000.0, 120000.0)  # e.g. a surface station
    msg = str(e.value)
    assert "p_pa=1013.25" in msg and "hPa" in msg and "100" in msg


@pytest.mark.parametrize("bad", [float("nan"), float("inf"), -math.inf, "abc", None, [1.0]])
def test_non_numbers(bad):
    with pytest.raises(RangeError) as e:
        errors.check_t_k("t_k", bad)
    assert "t_k=" in str(e.value) and "K" in str(e.value)


def test_ints_are_numbers_text_and_bools_are_not():
    # the one input rule (errors.real): int and float (and other real number
    # types on CPython) are numbers; text, bytes and bool are not, even where
    # float() would read them
    assert errors.check_t_k("t_k", 300) == 300.0
    for bad in ("2.5", "2_5", b"2.5", bytearray(b"2"), True, False, 1 + 0j):
        with pytest.raises(RangeError) as e:
            errors.check_range("x", bad, 0.0, 3.0, "m")
        assert "x=" in str(e.value) and "not a number" in str(e.value)


def test_huge_int_is_a_range_error_not_overflow():
    with pytest.raises(RangeError) as e:
        errors.check_range("x", 10 ** 400, 0.0, 3.0, "m")
    assert "not finite" in str(e.value)


def test_flags():
    assert errors.check_flag("ice", True) is True and errors.check_flag("ice", 0) is False
    for bad in ("False", "", None, 2, 0.5):
        with pytest.raises(RangeError) as e:
            errors.check_flag("ice", bad)
        assert "ice=" in str(e.value) and "True or False" in str(e.value)


def test_latitude():
    assert errors.check_lat(-90.0) == -90.0
    with pytest.raises(RangeError) as e:
        errors.check_lat(91.0)
    assert "lat_deg=91.0" in str(e.value) and "-90..90 deg" in str(e.value)


def test_humidity_tolerance_is_not_clamping():
    assert errors.check_rh(101.5) == 101.5          # within the sensor tolerance, returned unchanged
    with pytest.raises(RangeError) as e:
        errors.check_rh(150.0)
    assert "rh_pct=150.0" in str(e.value) and "%" in str(e.value)


def test_reading_error_reason():
    e = errors.ReadingError("t_k=21.5 outside 150..350 K", "temperature")
    assert e.reason == "temperature" and "21.5" in str(e)
