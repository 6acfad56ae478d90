"""A sensor adapter interface and a simulated sensor that plays an invented flight.

The example loggers (``main.py`` here, ``code.py`` for CircuitPython) read
their sensor only through the small interface of :class:`SensorAdapter`, so a
real driver (a pressure/temperature/humidity chip plus a GPS receiver) can be
dropped in by writing one class with the same ``read()`` method and attributes.

:class:`SimulatedFlight` is **invented data for the demo only**: a small
balloon released from a field at 312 m above sea level, rising at about
5.2 m/s through a made-up atmosphere, bursting near 26.4 km, and falling back
under a parachute. It is deterministic (no random numbers, no clock), so the
same step gives the same readings on CPython, MicroPython and CircuitPython.
Its atmosphere is not a published standard and not a test reference: it only
has to look like a flight (falling pressure, a temperature minimum near 12 km,
humidity that dries out aloft, a GPS fix every tenth reading, a humidity
dropout and one failed temperature conversion to show the error path).

Runs unchanged under CPython, MicroPython and CircuitPython: floats,
``math`` and ``tinygeo.constants`` only.
"""
import math

from tinygeo.constants import G0, RD

# --- the invented scenario (demo values, not measurements) -------------------
LAUNCH_HEIGHT_M = 312.0      # field elevation above mean sea level, m
LAUNCH_P_PA = 97650.0        # surface pressure on the invented day, Pa
LAUNCH_T_K = 291.0           # surface temperature, K
LAPSE_K_M = -0.0063          # troposphere lapse rate, K/m
TROPOPAUSE_M = 11800.0       # top of the troposphere, m
ISOTHERMAL_TOP_M = 20000.0   # top of the isothermal layer, m
UPPER_LAPSE_K_M = 0.0012     # warming above, K/m
BURST_M = 26400.0            # balloon burst height, m
WAIT_S = 60.0                # on the ground before release, s
LANDED_HOLD_S = 600.0        # on the ground after landing before the log ends, s
ASCENT_M_S = 5.2             # mean ascent rate, m/s
DESCENT_M_S = 5.5            # parachute descent rate near the ground, m/s
SCALE_HEIGHT_2_M = 14800.0   # twice a density scale height: descent speeds up aloft

# hydrostatic constants of the invented atmosphere (dry air, constant gravity):
# standard gravity and the gas constant of dry air, the package's own
# (tinygeo.constants: G0 exact by definition, RD = R*/M0 of the U.S. Standard
# Atmosphere 1976), so the demo's air obeys the same physics as the column

# readings that show the error handling
DROPOUT_FIRST = 700          # humidity missing for readings 700..719 (by index)
DROPOUT_LAST = 719
FAILED_T_INDEX = 1234        # one failed temperature conversion (NaN)
GPS_EVERY = 10               # a GPS height every tenth reading


class SensorAdapter:
    """What a logger needs from a sensor; subclass it for a real driver.

    The subclass defines ``read()``, which takes one reading and returns
    True, or False when there is no more data (a simulated flight ended; a real sensor normally never ends).
    After a True return these attributes hold the reading, already in the
    units tinygeo takes (convert hPa -> Pa and degC -> K here, not in the loop):

    - ``p_pa``   pressure, Pa
    - ``t_k``    air temperature, K (NaN if the conversion failed)
    - ``rh_pct`` relative humidity, % (None when the hygrometer gave nothing)
    - ``time_s`` time of the reading, s, monotonic, from any origin
    - ``gps_m``  GPS height above mean sea level, m, or None without a fix

    ``index`` counts readings from 0. ``seek(index)`` positions the next read;
    a real sensor cannot go back in time, so its ``seek`` only sets ``index``.
    """

    def __init__(self):
        self.index = 0
        self.p_pa = float("nan")
        self.t_k = float("nan")
        self.rh_pct = None
        self.time_s = 0.0
        self.gps_m = None

    def seek(self, index):
        self.index = index

    # ``read()`` is the subclass's own (see SimulatedFlight.read below for the
    # pattern): this class holds only the shared attributes and ``seek``.


def air_temperature_k(z_m):
    """Temperature of the invented atmosphere at height ``z_m`` (m above MSL), K."""
    if z_m <= TROPOPAUSE_M:
        return LAUNCH_T_K + LAPSE_K_M * (z_m - LAUNCH_HEIGHT_M)
    t_trop = LAUNCH_T_K + LAPSE_K_M * (TROPOPAUSE_M - LAUNCH_HEIGHT_M)
    if z_m <= ISOTHERMAL_TOP_M:
        return t_trop
    return t_trop + UPPER_LAPSE_K_M * (z_m - ISOTHERMAL_TOP_M)


def air_pressure_pa(z_m):
    """Pressure of the invented atmosphere at ``z_m`` (m above MSL), Pa.

    Dry hydrostatic balance with constant gravity through the three layers of
    :func:`air_temperature_k` (closed forms for a linear and a constant
    temperature profile). Demo data only."""
    k = G0 / RD
    z1 = min(z_m, TROPOPAUSE_M)
    t1 = air_temperature_k(z1)
    p = LAUNCH_P_PA * math.pow(t1 / LAUNCH_T_K, -k / LAPSE_K_M)
    if z_m <= TROPOPAUSE_M:
        return p
    z2 = min(z_m, ISOTHERMAL_TOP_M)
    p = p * math.exp(-k * (z2 - TROPOPAUSE_M) / t1)
    if z_m <= ISOTHERMAL_TOP_M:
        return p
    return p * math.pow(air_temperature_k(z_m) / t1, -k / UPPER_LAPSE_K_M)


def air_rh_pct(z_m):
    """Relative humidity of the invented atmosphere at ``z_m``, % (demo data)."""
    if z_m <= TROPOPAUSE_M:
        return 65.0 - 50.0 * (z_m - LAUNCH_HEIGHT_M) / (TROPOPAUSE_M - LAUNCH_HEIGHT_M)
    return 5.0


class SimulatedFlight(SensorAdapter):
    """Plays the invented flight, one reading every ``step_s`` seconds.

    The flight is integrated step by step (height += rate * step), so it is
    fully determined by ``step_s``; ``seek(index)`` replays it silently up to
    a reading, which lets the demo resume exactly where a checkpoint left it.
    """

    def __init__(self, step_s=1.0):
        SensorAdapter.__init__(self)
        if not step_s > 0.0:
            raise ValueError("step_s=%r must be > 0 s" % (step_s,))
        self.step_s = float(step_s)
        self._restart()

    def _restart(self):
        self.index = 0
        self.true_height_m = LAUNCH_HEIGHT_M
        self.stage = 0            # 0 waiting, 1 rising, 2 falling, 3 landed, 4 log over
        self._stage_time_s = 0.0  # time spent in the current stage, s

    def seek(self, index):
        """Replay the flight silently so that the next ``read()`` is reading ``index``."""
        if index < self.index:
            self._restart()
        while self.index < index:
            if not self._advance():
                break
            self.index += 1

    def _advance(self):
        # Move the true state to the time of reading self.index; False when over.
        t_s = self.index * self.step_s
        if self.index == 0:
            return True
        dt = self.step_s
        self._stage_time_s += dt
        if self.stage == 0:
            if t_s >= WAIT_S:
                self.stage = 1
                self._stage_time_s = 0.0
        elif self.stage == 1:
            rate = ASCENT_M_S + 0.4 * math.sin(t_s / 37.0)
            self.true_height_m += rate * dt
            if self.true_height_m >= BURST_M:
                self.stage = 2
                self._stage_time_s = 0.0
        elif self.stage == 2:
            rate = DESCENT_M_S * math.exp((self.true_height_m - LAUNCH_HEIGHT_M) / SCALE_HEIGHT_2_M)
            self.true_height_m -= rate * dt
            if self.true_height_m <= LAUNCH_HEIGHT_M:
                self.true_height_m = LAUNCH_HEIGHT_M
                self.stage = 3
                self._stage_time_s = 0.0
        elif self.stage == 3:
            if self._stage_time_s >= LANDED_HOLD_S:
                self.stage = 4
        return self.stage != 4

    def read(self):
        """Take the next reading; False once the log is over."""
        if self.stage == 4 or not self._advance():
            return False
        i = self.index
        z = self.true_height_m
        # small deterministic "sensor noise"
        self.p_pa = air_pressure_pa(z) * (1.0 + 1.5e-5 * math.sin(2.1 * i + 0.5))
        self.t_k = air_temperature_k(z) + 0.04 * math.sin(1.3 * i)
        if i == FAILED_T_INDEX:
            self.t_k = float("nan")
        if DROPOUT_FIRST <= i <= DROPOUT_LAST:
            self.rh_pct = None
        else:
            self.rh_pct = air_rh_pct(z) + 0.8 * math.sin(0.7 * i)
        self.time_s = i * self.step_s
        if i % GPS_EVERY == 0:
            self.gps_m = z + 2.5 * math.sin(0.9 * i)
        else:
            self.gps_m = None
        self.index = i + 1
        return True
