"""Write cases/orlewick_hourly.csv: an invented hourly profile of a year for the demo
plant Orlewick Board Mill.

INVENTED DEMO DATA. The shapes are chosen to look plausible for a mill in a temperate
climate; they are not measurements and describe no real site or weather record. The
profile is deterministic (no random numbers): running the script again writes the same
file.

Columns (the case-table convention of docs/howto-cases.md):

* ``timestamp``: every hour of 2025, 8,760 rows;
* ``site.makeup_temperature [degC]``: make-up water, following the air temperature a
  few weeks late and with a smaller swing (about 4 degC in February, 19 degC in August);
* ``user.Building heating.demand [t/h]``: heating degrees below 16 degC of air
  temperature, lower at night (setback) and higher in the early morning (warm-up), with
  a floor of 0.3 t/h for hot-water service;
* ``user.LP tracing.demand [t/h]``: thermostat-controlled tracing, full below 0 degC of
  air temperature and off above 8 degC;
* ``user.Mill water heater.duty [MW]``: heating mill water from the make-up
  temperature, larger when the water is cold.

The air temperature itself is a seasonal wave (coldest around 20 January), a daily wave
(warmest at 15:00) and a few slow waves of 3 to 11 days standing in for passing weather.

Usage: ``python cases/make_orlewick_profile.py [OUT.csv]``
"""

from __future__ import annotations

import math
import sys
from datetime import datetime, timedelta
from pathlib import Path

HOURS = 8760
START = datetime(2025, 1, 1)
HEADINGS = ["timestamp", "site.makeup_temperature [degC]",
            "user.Building heating.demand [t/h]", "user.LP tracing.demand [t/h]",
            "user.Mill water heater.duty [MW]"]

# slow "weather" waves: (period in days, amplitude in K, phase in days)
_WEATHER = [(3.3, 1.6, 0.7), (5.9, 2.2, 2.1), (8.4, 1.8, 5.0), (11.2, 1.2, 3.3)]


def air_temperature(day: float, hour: int) -> float:
    """Invented air temperature [degC] at ``day`` (days since 1 January) and ``hour``."""
    season = 8.5 - 10.5 * math.cos(2 * math.pi * (day - 20) / 365)
    daily = 3.5 * math.cos(2 * math.pi * (hour - 15) / 24)
    weather = sum(a * math.sin(2 * math.pi * (day + ph) / p) for p, a, ph in _WEATHER)
    return season + daily + weather


def makeup_temperature(day: float, hour: int) -> float:
    """Make-up water [degC]: a late, damped copy of the seasons."""
    return 11.5 - 7.5 * math.cos(2 * math.pi * (day - 45) / 365) \
        + 0.3 * math.cos(2 * math.pi * (hour - 17) / 24)


def building_heating(t_air: float, hour: int) -> float:
    """Building heating steam [t/h]."""
    shape = 0.8 if (hour >= 22 or hour < 5) else 1.25 if 5 <= hour < 8 else 1.0
    return max(0.3, 0.55 * max(0.0, 16.0 - t_air) * shape)


def tracing(t_air: float) -> float:
    """LP tracing steam [t/h]: full (4.5 t/h) below 0 degC, off above 8 degC."""
    return 4.5 * min(1.0, max(0.0, (8.0 - t_air) / 8.0))


def water_heater(t_makeup: float) -> float:
    """Mill water heater duty [MW]."""
    return 3.5 + 4.5 * (22.0 - t_makeup) / 18.0


def rows():
    for k in range(HOURS):
        ts = START + timedelta(hours=k)
        day, hour = k / 24.0, ts.hour
        t_air = air_temperature(day, hour)
        t_mu = makeup_temperature(day, hour)
        yield [ts.strftime("%Y-%m-%d %H:%M"), f"{t_mu:.2f}",
               f"{building_heating(t_air, hour):.2f}", f"{tracing(t_air):.2f}",
               f"{water_heater(t_mu):.3f}"]


def write(path: Path) -> None:
    text = "\n".join(",".join(r) for r in [HEADINGS, *rows()]) + "\n"
    sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
    from steamnet.io.atomic import write_atomic   # never leaves a half-written file
    write_atomic(path, lambda tmp: tmp.write_text(text, encoding="utf-8"), suffix=".csv")


if __name__ == "__main__":
    out = Path(sys.argv[1]) if len(sys.argv) > 1 else \
        Path(__file__).resolve().parent / "orlewick_hourly.csv"
    write(out)
    print(f"wrote {out} ({HOURS} hours, invented demo data)")
