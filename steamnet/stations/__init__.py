"""Let-down station data and checks.

:mod:`steamnet.model.stations` holds the station's data and operating points,
:mod:`steamnet.stations.checks` the checks (docs/checks/index.md),
:mod:`steamnet.stations.safety` the relief cover and valve noise checks, and
:mod:`steamnet.stations.rows` the result rows. Each check id has a page under
``docs/checks/``.
"""

from .checks import (ALL_CASES, POINT_CHECKS, check_across_cases,
                     check_approach_to_saturation, check_downstream_velocity,
                     check_gain_spread, check_letdown_valve, check_point,
                     check_sensor_distance, check_spray_capacity, check_spray_turndown,
                     check_spray_valve, check_spray_water_pressure, check_steam_turndown)
from ..model.stations import (DesuperheaterData, StationData, StationLimits,
                              StationPoint, ValveData)
from .rows import CheckRow, Status
from .safety import (check_letdown_noise, check_relief_cover, check_relief_cover_rated,
                     check_spray_cavitation, check_spray_noise)

__all__ = [
    "ALL_CASES", "POINT_CHECKS", "CheckRow", "Status", "DesuperheaterData",
    "StationData", "StationLimits", "StationPoint", "ValveData", "check_across_cases",
    "check_approach_to_saturation", "check_downstream_velocity", "check_gain_spread",
    "check_letdown_valve", "check_point", "check_sensor_distance",
    "check_spray_capacity", "check_spray_turndown", "check_spray_valve",
    "check_spray_water_pressure", "check_steam_turndown", "check_relief_cover",
    "check_relief_cover_rated", "check_letdown_noise", "check_spray_noise",
    "check_spray_cavitation",
]
