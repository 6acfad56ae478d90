"""tinygeo: heights from a live stream of pressure, temperature and humidity.

Float-only, dependency-free; runs unchanged on CPython and MicroPython.
Public names are re-exported here; each lives in a one-concept module:

- gravity:      normal_gravity, somigliana_gravity                    (m/s^2)
- geopotential: geopotential (m^2/s^2), geopotential_height (gpm),
                geometric_height (m), msl_height (m)
- moisture:     saturation_vapour_pressure, vapour_pressure, ... virtual_temperature (K)
- layers:       ln_ratio, layer_thickness (gpm), layer_thickness_lapse, pressure_across_layer (Pa)
- standard:     standard_temperature (K), standard_pressure (Pa), pressure_altitude (gpm)
- sealevel:     sea_level_pressure, qfe, qnh (Pa), indicated_altitude (m)
- column:       Column, the streaming integration of an atmospheric column
- errors:       TinygeoError and its ValueError subclasses
"""
from .errors import (TinygeoError, RangeError, ModelRangeError, ReadingError,  # noqa: F401
                     CheckpointError)
from .constants import G0, RD, RV, EPSILON, WGS84, GRS80  # noqa: F401
from .gravity import normal_gravity, somigliana_gravity  # noqa: F401
from .potential import (geopotential, geopotential_height, geometric_height,  # noqa: F401
                           msl_height)
from .moisture import (saturation_vapour_pressure, enhancement_factor, vapour_pressure,  # noqa: F401
                       vapour_pressure_from_dew_point, dew_point, mixing_ratio,
                       specific_humidity, virtual_temperature,
                       virtual_temperature_from_mixing_ratio)
from .layers import (ln_ratio, layer_thickness, layer_thickness_lapse,  # noqa: F401
                     pressure_across_layer, layer_mean_tv)
from .standard import standard_temperature, standard_pressure, pressure_altitude  # noqa: F401
from .sealevel import sea_level_pressure, qfe, qnh, indicated_altitude  # noqa: F401
from .column import (Column, EV_LEVEL, EV_TROPOPAUSE, EV_BURST, EV_LANDED,  # noqa: F401
                     EV_LAUNCH, FL_DRY, FL_HELD_MIXING, FL_NO_TIME, FL_DESCENT,
                     PH_WAIT, PH_ASCENT, PH_DESCENT, PH_LANDED)

__version__ = "0.1.0"
