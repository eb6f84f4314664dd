"""Pure engineering functions of steamnet, SI units at the interface.

One module per topic: :mod:`steamnet.calc.valve` (IEC 60534-2-1 sizing through
``fluids`` and valve travel), :mod:`steamnet.calc.desuperheater` (spray balance,
control gains, evaporation distance), :mod:`steamnet.calc.boiler` (feedwater, blowdown,
fuel), :mod:`steamnet.calc.turbine` (section flows and power) and
:mod:`steamnet.calc.pump` (pump work), :mod:`steamnet.calc.relief` (valve flow at a
given Kv, API 520 steam relief capacity) and :mod:`steamnet.calc.noise` (IEC 60534-8-3
and 8-4 valve noise). The solver, the result tables, validation and
the station checks all call these: each equation has one home. Nothing here reads a
model or keeps state.
"""

from .boiler import BoilerBalance, boiler_balance
from .desuperheater import (evaporation_distance, gain_per_ratio, gain_per_spray,
                            spray_ratio, spray_water_flow)
from .pump import pump_work
from .turbine import internal_power, section_flows
from .valve import (Characteristic, ValveSizing, cv_to_kv, kv_to_cv, size_gas_valve,
                    size_liquid_valve, size_steam_valve, size_water_valve, valve_travel)

__all__ = [
    "Characteristic", "ValveSizing", "cv_to_kv", "kv_to_cv", "size_gas_valve",
    "size_liquid_valve", "size_steam_valve", "size_water_valve", "valve_travel",
    "evaporation_distance", "gain_per_ratio", "gain_per_spray", "spray_ratio",
    "spray_water_flow", "BoilerBalance", "boiler_balance", "pump_work", "internal_power",
    "section_flows",
]
