"""One input rule for every public function of the package (issue: the pure
functions accepted "4_5", b"45", True and ice="False" while Column.feed
refused them; normal_gravity(10**400) raised OverflowError and
normal_gravity(45, 0, "WGS84") AttributeError).

Rule (tinygeo.errors.real / as_finite / check_flag and
tinygeo.constants.check_ellipsoid): a number argument is an int (not a bool)
or a float (or another real number type on CPython, e.g. numpy.float32);
text, bytes, bool and huge ints give a RangeError naming the argument; a flag
is True/False (or 0/1); an ellipsoid is tinygeo.WGS84 or tinygeo.GRS80.
Consistency checks of the checking code (no accuracy reference is involved).
"""
import numpy
import pytest

import tinygeo
from tinygeo.errors import TinygeoError

# a valid call of every public function (numbers only), the number
# arguments' names, and the flag/ellipsoid keywords it takes
CALLS = [
    ("normal_gravity", (45.0, 1000.0), ("ellipsoid",)),
    ("somigliana_gravity", (45.0,), ("ellipsoid",)),
    ("geopotential", (1000.0, 45.0), ("ellipsoid",)),
    ("geopotential_height", (1000.0, 45.0), ("ellipsoid",)),
    ("geometric_height", (1000.0, 45.0), ("ellipsoid",)),
    ("msl_height", (1000.0, 40.0), ()),
    ("saturation_vapour_pressure", (280.0,), ("ice",)),
    ("enhancement_factor", (90000.0,), ()),
    ("vapour_pressure", (280.0, 90000.0, 50.0), ("ice",)),
    ("vapour_pressure_from_dew_point", (270.0, 90000.0), ("ice",)),
    ("dew_point", (500.0, 90000.0), ("ice",)),
    ("mixing_ratio", (500.0, 90000.0), ()),
    ("specific_humidity", (500.0, 90000.0), ()),
    ("virtual_temperature", (280.0, 90000.0, 50.0), ("ice",)),
    ("virtual_temperature_from_mixing_ratio", (280.0, 0.005), ()),
    ("ln_ratio", (90000.0, 80000.0), ()),
    ("layer_thickness", (90000.0, 80000.0, 280.0, 275.0), ()),
    ("layer_thickness_lapse", (90000.0, 80000.0, 280.0, 0.0065), ()),
    ("pressure_across_layer", (90000.0, 900.0, 280.0), ()),
    ("layer_mean_tv", (90000.0, 80000.0, 950.0), ()),
    ("standard_temperature", (1000.0,), ()),
    ("standard_pressure", (1000.0,), ()),
    ("pressure_altitude", (90000.0,), ()),
    ("sea_level_pressure", (95000.0, 285.0, 500.0), ("ice",)),
    ("qfe", (95000.0, 2.0, 285.0), ("ice",)),
    ("qnh", (95000.0, 500.0), ()),
    ("indicated_altitude", (95000.0, 101325.0), ()),
]

NOT_NUMBERS = ["45", "4_5", b"45", bytearray(b"45"), True, False, None, 1j, [1.0]]


@pytest.mark.parametrize("name,args,keywords", CALLS, ids=[c[0] for c in CALLS])
def test_every_number_argument(name, args, keywords):
    f = getattr(tinygeo, name)
    f(*args)                                   # the valid call works
    f(*[numpy.float32(a) for a in args])       # numpy numbers are real numbers
    for i in range(len(args)):
        for bad in NOT_NUMBERS + [10 ** 400, -10 ** 400]:
            a = list(args)
            a[i] = bad
            with pytest.raises(TinygeoError) as e:
                f(*a)
            msg = str(e.value)
            assert "=" in msg and ("not a number" in msg or "not finite" in msg), (name, i, bad, msg)


@pytest.mark.parametrize("name,args,keywords", [c for c in CALLS if c[2]], ids=[c[0] for c in CALLS if c[2]])
def test_flags_and_ellipsoids(name, args, keywords):
    f = getattr(tinygeo, name)
    for kw in keywords:
        if kw == "ice":
            assert f(*args, ice=True) == f(*args, ice=1)
            for bad in ("False", "", None, 2):
                with pytest.raises(TinygeoError) as e:
                    f(*args, ice=bad)
                assert "ice=" in str(e.value)
        else:
            assert f(*args, ellipsoid=tinygeo.GRS80) != f(*args)
            for bad in ("WGS84", None, 0, object()):
                with pytest.raises(TinygeoError) as e:
                    f(*args, ellipsoid=bad)
                assert "ellipsoid=" in str(e.value) and "WGS84" in str(e.value)


def test_ellipsoid_copies_map_to_the_original_and_impostors_are_refused():
    import copy
    from tinygeo.constants import Ellipsoid, WGS84, check_ellipsoid
    assert check_ellipsoid(copy.deepcopy(WGS84)) is WGS84
    fake = copy.copy(WGS84)
    fake.a_m = 6378000.0          # named "WGS84" but not WGS 84
    with pytest.raises(TinygeoError):
        check_ellipsoid(fake)
    assert isinstance(fake, Ellipsoid)


def test_dew_point_of_a_vanishing_vapour_pressure():
    # 5e-324 Pa / 611.2 Pa underflows to 0: a clear error, not "math domain error"
    with pytest.raises(tinygeo.ModelRangeError) as e:
        tinygeo.dew_point(5e-324, 90000.0)
    assert "e_pa=5e-324 Pa outside 150..350 K" in str(e.value)
