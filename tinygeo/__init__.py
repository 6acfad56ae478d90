"""tinygeo: heights from a live stream of pressure, temperature and humidity.

Float-only, dependency-free; runs unchanged on CPython and MicroPython.
Public names are available here; each lives in a one-concept module:

- gravity:      normal_gravity, somigliana_gravity                    (m/s^2)
- potential:    geopotential (m^2/s^2), geopotential_height (gpm),
                geometric_height (m), msl_height (m)
- moisture:     saturation_vapour_pressure, vapour_pressure, ... virtual_temperature (K)
- layers:       ln_ratio, layer_thickness (gpm), layer_thickness_lapse, pressure_across_layer (Pa)
- standard:     standard_temperature (K), standard_pressure (Pa), pressure_altitude (gpm)
- sealevel:     sea_level_pressure, qfe, qnh (Pa), indicated_altitude (m)
- highsite:     isobaric_height (gpm), standard_surface_pa (Pa) of high stations
- column:       Column, the streaming integration of an atmospheric column
- station:      Station, averages, sea-level pressure, tendency and QC of a
                fixed station or buoy; tendency_code (WMO code table 0200)
- errors:       TinygeoError and its ValueError subclasses

Importing the package loads none of them: a module is imported the first
time one of its names is read from the package (module-level ``__getattr__``,
PEP 562 on CPython; supported by MicroPython too). So ``from tinygeo.column
import Column`` on a board loads the column and the modules it uses, not the
standard atmosphere or the sea-level reductions (bench/size.py measures both).
``from tinygeo import *`` imports every public name on CPython (through
``__all__``); on MicroPython it only sees names already loaded, so name what
you use there.
"""
__version__ = "0.1.0"
"""The version, written only here (pyproject.toml and the MicroPython package
files read it from this line)."""

# "module:" followed by the public names it gives the package, space-separated
# (and space-framed); one string, so no tuple of ~60 names is built at import
_WHERE = (
    " errors: TinygeoError RangeError ModelRangeError ReadingError CheckpointError "
    "constants: G0 RD RV EPSILON WGS84 GRS80 "
    "gravity: normal_gravity somigliana_gravity "
    "potential: geopotential geopotential_height geometric_height msl_height "
    "moisture: saturation_vapour_pressure enhancement_factor vapour_pressure "
    "vapour_pressure_from_dew_point dew_point dew_point_from_rh mixing_ratio specific_humidity "
    "virtual_temperature virtual_temperature_from_mixing_ratio "
    "layers: ln_ratio layer_thickness layer_thickness_lapse pressure_across_layer layer_mean_tv "
    "standard: standard_temperature standard_pressure pressure_altitude "
    "sealevel: sea_level_pressure qfe qnh indicated_altitude "
    "highsite: isobaric_height standard_surface_pa "
    "column: Column EV_LEVEL EV_TROPOPAUSE EV_BURST EV_LANDED EV_LAUNCH EV_FLOAT FL_DRY "
    "FL_HELD_MIXING FL_NO_TIME FL_DESCENT FL_SAME_P FL_NO_GPS FL_CAPPED FL_REPLACED FL_TAKEOVER "
    "FL_SAME_TIME PH_WAIT PH_ASCENT PH_FLOAT PH_DESCENT PH_LANDED "
    "station: Station tendency_code EV_AVERAGE EV_FLAGS EV_GAP FL_STUCK_P FL_STUCK_T FL_STUCK_RH "
    "FL_GAP FL_TREND_GAP FL_NO_T12 FL_FEW "
)


def __dir__():
    # the public names (module __dir__, PEP 562): a REPL completes them
    # without importing every module
    a = ["__version__"]
    for n in _WHERE.split():
        if n[-1] != ":":
            a.append(n)
    return a


def __getattr__(name):
    if name == "__all__":
        return __dir__()
    # " name " in the table: its module is the last "module:" before it
    i = _WHERE.find(" " + name + " ")
    if i < 1 or ":" in name or " " in name:
        if not name.startswith("__"):
            # a submodule (``from . import standard`` asks the package first on
            # MicroPython)
            try:
                return __import__("tinygeo." + name, None, None, ("*",))
            except ImportError:
                pass
        raise AttributeError("module 'tinygeo' has no attribute '%s'" % name)
    i = _WHERE.rfind(":", 0, i)
    mod = _WHERE[_WHERE.rfind(" ", 0, i) + 1:i]
    # a non-empty fromlist makes __import__ return the submodule itself
    value = getattr(__import__("tinygeo." + mod, None, None, (name,)), name)
    globals()[name] = value     # later reads find it without this function
    return value
