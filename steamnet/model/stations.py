"""Data of a let-down station and its operating points, SI units.

Frozen dataclasses only; every optional field is None when the model does not give
it, and a check that needs a missing field reports ``not_assessed`` instead of
passing. :class:`StationLimits` holds the default limits of the station checks with
the label of where each comes from.

:func:`station_data` makes the StationData of every let-down of a model (site-wide
limits from ``[station_limits]``, then each station's own); the model keeps it
(:attr:`steamnet.model.model.Model.stations`), so it is parsed once.

The checks, their default limits and the sources of those limits are described in
docs/checks/index.md.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import ClassVar, Mapping

from ..calc.relief import orifice_area
from ..calc.valve import Characteristic
from ..errors import ModelError, ModelErrors
from ..units import Kind, parse_quantity

__all__ = ["ValveData", "DesuperheaterData", "StationLimits", "StationData",
           "StationPoint", "ReliefDevice", "ReliefData", "CHARACTERISTICS",
           "ATOMISATIONS", "station_data", "parse_limits"]

#: Allowed inherent characteristics: the values of :class:`steamnet.calc.Characteristic`.
CHARACTERISTICS = tuple(c.value for c in Characteristic)
#: Allowed kinds of spray atomisation.
ATOMISATIONS = ("mechanical", "steam_assisted", "other")


def _positive(item: str, **values: float | None) -> None:
    """Raise ModelError for a given value that is not a positive finite number."""
    for name, val in values.items():
        if val is not None and not (isinstance(val, (int, float))
                                    and math.isfinite(val) and val > 0):
            raise ModelError(f"must be a positive number, got {val!r}", item=item,
                             field=name)


@dataclass(frozen=True, slots=True)
class ValveData:
    """A control valve as the model gives it.

    Attributes
    ----------
    rated_kv : float or None
        Rated flow coefficient at full travel [m3/h]
    characteristic : str or None
        Inherent characteristic, ``"linear"`` or ``"equal_percentage"`` [-]
    rangeability : float or None
        Inherent rangeability (equal percentage) [-]
    fl : float or None
        Liquid pressure recovery factor [-]
    xt : float or None
        Pressure differential ratio factor at choked flow [-]
    fd : float or None
        Valve style modifier [-]
    diameter : float or None
        Nominal diameter [m]
    pipe_diameter : float or None
        Inside diameter of the pipe after the valve, for noise [m]
    pipe_wall : float or None
        Wall thickness of that pipe [m]
    pipe_density : float or None
        Density of its wall material; None for the carbon steel default [kg/m3]
    pipe_sound_speed : float or None
        Speed of sound in its wall material; None for the default [m/s]
    """

    rated_kv: float | None = None
    characteristic: str | None = None
    rangeability: float | None = None
    fl: float | None = None
    xt: float | None = None
    fd: float | None = None
    diameter: float | None = None
    pipe_diameter: float | None = None
    pipe_wall: float | None = None
    pipe_density: float | None = None
    pipe_sound_speed: float | None = None

    def __post_init__(self):
        _positive("valve", rated_kv=self.rated_kv, fl=self.fl, xt=self.xt, fd=self.fd,
                  diameter=self.diameter, pipe_diameter=self.pipe_diameter,
                  pipe_wall=self.pipe_wall, pipe_density=self.pipe_density,
                  pipe_sound_speed=self.pipe_sound_speed)
        if self.characteristic is not None and self.characteristic not in CHARACTERISTICS:
            raise ModelError(f"unknown characteristic {self.characteristic!r}; allowed: "
                             + ", ".join(CHARACTERISTICS), item="valve",
                             field="characteristic")
        if self.rangeability is not None and not (math.isfinite(self.rangeability)
                                                  and self.rangeability > 1):
            raise ModelError(f"must be above 1, got {self.rangeability!r}", item="valve",
                             field="rangeability")


@dataclass(frozen=True, slots=True)
class DesuperheaterData:
    """A spray desuperheater as the model gives it (maker's data).

    Attributes
    ----------
    atomisation : str or None
        ``"mechanical"``, ``"steam_assisted"`` or ``"other"`` [-]
    rated_min_steam : float or None
        Rated minimum steam flow [kg/s]
    rated_max_steam : float or None
        Rated maximum steam flow [kg/s]
    max_spray : float or None
        Maximum spray water flow [kg/s]
    min_spray : float or None
        Minimum controllable spray water flow [kg/s]
    evaporation_time : float or None
        Time the spray needs to evaporate, maker's figure [s]
    """

    atomisation: str | None = None
    rated_min_steam: float | None = None
    rated_max_steam: float | None = None
    max_spray: float | None = None
    min_spray: float | None = None
    evaporation_time: float | None = None

    def __post_init__(self):
        _positive("desuperheater", rated_min_steam=self.rated_min_steam,
                  rated_max_steam=self.rated_max_steam, max_spray=self.max_spray,
                  min_spray=self.min_spray, evaporation_time=self.evaporation_time)
        if self.atomisation is not None and self.atomisation not in ATOMISATIONS:
            raise ModelError(f"unknown atomisation {self.atomisation!r}; allowed: "
                             + ", ".join(ATOMISATIONS), item="desuperheater",
                             field="atomisation")
        if (self.rated_min_steam is not None and self.rated_max_steam is not None
                and self.rated_min_steam >= self.rated_max_steam):
            raise ModelError("rated minimum steam flow must be below the rated maximum",
                             item="desuperheater", field="rated_min_steam")
        if (self.min_spray is not None and self.max_spray is not None
                and self.min_spray >= self.max_spray):
            raise ModelError("minimum spray flow must be below the maximum",
                             item="desuperheater", field="min_spray")


_SOURCES = {
    "spray_capacity_warn": "common practice, no source",
    "spray_capacity_fail": "common practice, no source",
    "approach_fail": "common practice, no source",
    "approach_warn": "common practice, no source",
    "valve_travel_warn_high": "common practice for control valves, no source",
    "valve_travel_fail_high": "common practice for control valves, no source",
    "valve_travel_warn_low": "common practice for control valves, no source",
    "spray_pressure_margin_fail": "from memory, common practice",
    "velocity_warn_low": "from memory",
    "velocity_warn_high": "from memory",
    "evaporation_time_default": "from memory; maker's figure wins",
    "gain_spread_warn": "common practice, no source",
    "relief_cover_warn": "common practice, no source",
    "relief_cover_fail": "relief cover: the load must not exceed the relieving capacity",
    "noise_warn": "from memory: upper daily exposure action value of EU Directive "
                  "2003/10/EC, commonly applied at 1 m in valve specifications",
    "noise_fail": "common practice, no source (screening level for acoustic fatigue "
                  "of the pipe)",
}
_KINDS = {
    "spray_capacity_warn": "fraction",
    "spray_capacity_fail": "fraction",
    "approach_fail": "temperature_difference",
    "approach_warn": "temperature_difference",
    "valve_travel_warn_high": "fraction",
    "valve_travel_fail_high": "fraction",
    "valve_travel_warn_low": "fraction",
    "spray_pressure_margin_fail": "pressure_difference",
    "velocity_warn_low": "velocity",
    "velocity_warn_high": "velocity",
    "evaporation_time_default": "time",
    "gain_spread_warn": "ratio",
    "relief_cover_warn": "fraction",
    "relief_cover_fail": "fraction",
    "noise_warn": "sound_level",
    "noise_fail": "sound_level",
}


@dataclass(frozen=True, slots=True)
class StationLimits:
    """Limits of the let-down station checks, SI units (fractions as 0..1).

    Defaults from docs/checks/index.md; :attr:`LIMIT_SOURCES` gives the
    source label of each and :attr:`LIMIT_KINDS` the kind of quantity, so that a
    model loader can parse a table of overrides with units generically.

    Attributes
    ----------
    spray_capacity_warn : float
        Warn when required spray exceeds this fraction of the maximum spray [-]
    spray_capacity_fail : float
        Fail when required spray exceeds this fraction of the maximum spray [-]
    approach_fail : float
        Fail when the outlet is less than this above saturation [K]
    approach_warn : float
        Warn when the outlet is less than this above saturation [K]
    valve_travel_warn_high : float
        Warn above this travel [-]
    valve_travel_fail_high : float
        Fail above this travel [-]
    valve_travel_warn_low : float
        Warn below this travel [-]
    spray_pressure_margin_fail : float
        Fail when spray supply pressure minus steam pressure is below this, for
        mechanically atomised nozzles [Pa]
    velocity_warn_low : float
        Warn below this outlet velocity (poor atomisation) [m/s]
    velocity_warn_high : float
        Warn above this outlet velocity (erosion, noise) [m/s]
    evaporation_time_default : float
        Evaporation time used when the maker gives none [s]
    gain_spread_warn : float
        Warn when the largest control gain exceeds the smallest by this ratio [-]
    relief_cover_warn : float
        Warn when the relief load of a failed-open let-down exceeds this fraction of
        the downstream relieving capacity [-]
    relief_cover_fail : float
        Fail when it exceeds this fraction [-]
    noise_warn : float
        Warn above this valve noise level, 1 m downstream and 1 m from the pipe
        [dB(A)]
    noise_fail : float
        Fail above this valve noise level [dB(A)]
    origins : tuple of (str, str)
        (limit, where it was set) for every limit overridden by the model; the
        source label of such a limit is where it was set [-]
    """

    spray_capacity_warn: float = 0.85
    spray_capacity_fail: float = 1.00
    approach_fail: float = 8.0
    approach_warn: float = 10.0
    valve_travel_warn_high: float = 0.80
    valve_travel_fail_high: float = 0.95
    valve_travel_warn_low: float = 0.10
    spray_pressure_margin_fail: float = 3.5e5
    velocity_warn_low: float = 6.0
    velocity_warn_high: float = 75.0
    evaporation_time_default: float = 0.2
    gain_spread_warn: float = 3.0
    relief_cover_warn: float = 0.90
    relief_cover_fail: float = 1.00
    noise_warn: float = 85.0
    noise_fail: float = 110.0
    origins: tuple = ()

    LIMIT_SOURCES: ClassVar[Mapping[str, str]] = MappingProxyType(_SOURCES)
    LIMIT_KINDS: ClassVar[Mapping[str, str]] = MappingProxyType(_KINDS)

    def __post_init__(self):
        _positive("station_limits", **{n: getattr(self, n) for n in self.names()})
        order = [("spray_capacity_warn", "spray_capacity_fail"),
                 ("relief_cover_warn", "relief_cover_fail"), ("noise_warn", "noise_fail"),
                 ("approach_fail", "approach_warn"),
                 ("valve_travel_warn_low", "valve_travel_warn_high"),
                 ("valve_travel_warn_high", "valve_travel_fail_high"),
                 ("velocity_warn_low", "velocity_warn_high")]
        for low, high in order:
            if getattr(self, low) > getattr(self, high):
                raise ModelError(f"{low}={getattr(self, low)!r} must not exceed "
                                 f"{high}={getattr(self, high)!r}",
                                 item="station_limits", field=low)
        if self.gain_spread_warn <= 1:
            raise ModelError("must be above 1", item="station_limits",
                             field="gain_spread_warn")

    @classmethod
    def names(cls) -> tuple[str, ...]:
        """Names of all limits, in declaration order."""
        return tuple(f.name for f in dataclasses.fields(cls) if f.name != "origins")

    def source(self, name: str) -> str:
        """Source label of limit ``name``: where the model set it, when it did, else
        the default's source.

        Parameters
        ----------
        name : str
            Limit name [-]

        Returns
        -------
        label : str
            E.g. ``"common practice, no source"`` or ``"model file,
            [station_limits]"`` [-]
        """
        for limit, origin in self.origins:
            if limit == name:
                return origin
        return _SOURCES[name]

    def with_overrides(self, origin: str | None = None,
                       **si_values: float) -> "StationLimits":
        """A copy with some limits replaced.

        Parameters
        ----------
        origin : str, optional
            Where the new values were set, e.g. ``"model file, [station_limits]"``;
            it becomes their source label [-]
        **si_values : float
            New values by limit name, in SI units (fractions as 0..1, K, Pa, m/s,
            s, dB(A)) [various]

        Returns
        -------
        limits : StationLimits
            The new limits [-]

        Raises
        ------
        ModelError
            An unknown limit name (the message lists the known ones) or a value that
            breaks the order of the limits.
        """
        unknown = sorted(set(si_values) - set(self.names()))
        if unknown:
            raise ModelError(f"unknown station limit(s) {', '.join(unknown)}; known: "
                             + ", ".join(self.names()), item="station_limits")
        origins = self.origins
        if origin is not None and si_values:
            origins = tuple((n, o) for n, o in origins if n not in si_values) + tuple(
                (n, origin) for n in si_values)
        return dataclasses.replace(self, origins=origins, **si_values)


@dataclass(frozen=True, slots=True)
class ReliefDevice:
    """One steam safety valve of a header, as the model gives it.

    Attributes
    ----------
    name : str
        Valve name [-]
    p_set : float
        Absolute set pressure [Pa]
    overpressure : float
        Allowed overpressure as a fraction of the gauge set pressure [-]
    capacity : float or None
        Rated relieving capacity [kg/s]
    area : float or None
        Effective orifice area [m2]
    orifice : str or None
        API 526 orifice letter, when the area came from it [-]
    kd : float or None
        Effective coefficient of discharge [-]
    """

    name: str
    p_set: float
    overpressure: float
    capacity: float | None = None
    area: float | None = None
    orifice: str | None = None
    kd: float | None = None


@dataclass(frozen=True, slots=True)
class ReliefData:
    """What the relief cover of a failed-open let-down needs beyond the valve.

    Attributes
    ----------
    header : str
        The downstream (protected) header [-]
    devices : tuple of ReliefDevice
        Its safety valves; empty when the model gives none [-]
    p_atm : float
        Local atmospheric pressure, for the gauge set pressure [Pa]
    spray_fails_open : bool
        True when the spray valve can fail open (its maximum spray adds to the
        load) [-]
    credits : tuple of (str, float)
        (what, flow [kg/s]) of each credited outflow of the downstream header [-]
    max_inlet_pressure : float or None
        Highest upstream pressure the station is rated for [Pa]
    max_inlet_temperature : float or None
        Highest upstream temperature the station is rated for [K]
    """

    header: str
    devices: tuple = ()
    p_atm: float = 101325.0
    spray_fails_open: bool = True
    credits: tuple = ()
    max_inlet_pressure: float | None = None
    max_inlet_temperature: float | None = None


@dataclass(frozen=True, slots=True)
class StationData:
    """A let-down station: valve, optional desuperheater and spray valve, limits.

    Attributes
    ----------
    name : str
        Station name [-]
    valve : ValveData or None
        Let-down (steam) valve [-]
    desuperheater : DesuperheaterData or None
        None for a station without spray [-]
    spray_valve : ValveData or None
        Spray water control valve [-]
    outlet_pipe_diameter : float or None
        Inside diameter of the pipe after the desuperheater [m]
    sensor_distance : float or None
        Straight run from the spray nozzle to the temperature element [m]
    limits : StationLimits
        Check limits for this station [-]
    relief : ReliefData or None
        Relief devices downstream and the failure assumptions; None when not
        given [-]
    """

    name: str
    valve: ValveData | None = None
    desuperheater: DesuperheaterData | None = None
    spray_valve: ValveData | None = None
    outlet_pipe_diameter: float | None = None
    sensor_distance: float | None = None
    limits: StationLimits = field(default_factory=StationLimits)
    relief: ReliefData | None = None

    def __post_init__(self):
        _positive(f"station '{self.name}'", outlet_pipe_diameter=self.outlet_pipe_diameter,
                  sensor_distance=self.sensor_distance)


@dataclass(frozen=True, slots=True)
class StationPoint:
    """One operating point of a station in one case, as the balance yields it.

    Attributes
    ----------
    case : str
        Case name [-]
    station : str
        Station name [-]
    p_in : float
        Inlet (upstream header) pressure [Pa]
    h_in : float
        Inlet steam enthalpy [J/kg]
    p_out : float
        Outlet (downstream header) pressure [Pa]
    m_steam : float
        Steam flow through the let-down valve [kg/s]
    m_spray : float
        Spray water flow [kg/s]
    h_out : float
        Outlet enthalpy after the desuperheater [J/kg]
    h_water : float or None
        Spray water enthalpy [J/kg]
    t_water : float or None
        Spray water temperature [K]
    p_water : float or None
        Spray water supply pressure at the spray valve inlet [Pa]
    setpoint_reachable : bool
        False when the steam arrives colder than the outlet setpoint [-]
    out_header : str or None
        Name of the header the station feeds [-]
    header_inflow : float or None
        Total steam inflow of that header, this station's outlet included [kg/s]
    header_h : float or None
        Enthalpy of that header (its inflows mixed, less its heat loss) [J/kg]
    header_heat_loss : float or None
        Heat loss of that header [W]
    """

    case: str
    station: str
    p_in: float
    h_in: float
    p_out: float
    m_steam: float
    m_spray: float
    h_out: float
    h_water: float | None = None
    t_water: float | None = None
    p_water: float | None = None
    setpoint_reachable: bool = True
    out_header: str | None = None
    header_inflow: float | None = None
    header_h: float | None = None
    header_heat_loss: float | None = None

    def __post_init__(self):
        item = f"station '{self.station}', case '{self.case}'"
        _positive(item, p_in=self.p_in, p_out=self.p_out, p_water=self.p_water,
                  t_water=self.t_water)
        for name in ("m_steam", "m_spray"):
            val = getattr(self, name)
            if not (math.isfinite(val) and val >= 0):
                raise ModelError(f"must be zero or positive, got {val!r}", item=item,
                                 field=name)


def parse_limits(table: dict, *, base: StationLimits | None = None, file=None,
                 item="station_limits", origin: str | None = None) -> StationLimits:
    """StationLimits from a table of overrides written with units; ``origin`` (e.g.
    ``"model file, [station_limits]"``) becomes the source label of each limit set."""
    base = base or StationLimits()
    kinds = StationLimits.LIMIT_KINDS
    values = {}
    errors = []
    for key, raw in (table or {}).items():
        if key not in kinds:
            errors.append(ModelError(f"unknown station limit '{key}' (known: "
                                     f"{', '.join(kinds)})", file=file, item=item,
                                     field=key))
            continue
        try:
            values[key] = parse_quantity(raw, Kind(kinds[key]))
        except ModelError as exc:
            errors.append(exc.with_context(file=file, item=item, field=key))
    if errors:
        raise ModelErrors(errors)
    try:
        return base.with_overrides(origin, **values)
    except ModelError as exc:
        raise ModelErrors([exc.with_context(file=file, item=item)]) from None


def _valve(v) -> ValveData | None:
    if v is None:
        return None
    return ValveData(rated_kv=v.rated_coefficient, characteristic=v.characteristic,
                     rangeability=v.rangeability, fl=v.fl, xt=v.xt, fd=v.fd,
                     diameter=v.diameter, pipe_diameter=v.pipe_diameter,
                     pipe_wall=v.pipe_wall, pipe_density=v.pipe_density,
                     pipe_sound_speed=v.pipe_sound_speed)


def _relief(model, name: str, s) -> ReliefData:
    """The relief devices of the station's outlet header and its failure assumptions.

    Raises
    ------
    ModelError
        A credited outflow that names no user or turbine drawing from the outlet
        header.
    """
    header = model.table("header")[s.outlet]
    devices = tuple(
        ReliefDevice(name=r.name, p_set=r.set_pressure, overpressure=r.overpressure,
                     capacity=r.capacity,
                     area=orifice_area(r.orifice) if r.orifice else r.orifice_area,
                     orifice=r.orifice, kd=r.discharge_coefficient)
        for r in header.relief_valves)
    credits = []
    users, turbines = model.table("user"), model.table("turbine")
    xturbines = model.table("extraction_turbine")
    for k, c in enumerate(s.relief_credit):
        item = f"letdown '{name}' relief_credit {k + 1}"
        if c.user is not None:
            u = users.get(c.user)
            if u is None or u.header != s.outlet:
                on = [k for k, v in users.items() if v.header == s.outlet]
                raise ModelError(f"no user '{c.user}' on the outlet header "
                                 f"'{s.outlet}' (users there: {', '.join(on) or 'none'})",
                                 file=model.source, item=item, field="user")
            credits.append((f"user '{c.user}'", c.flow))
        else:
            t = turbines.get(c.turbine) or xturbines.get(c.turbine)
            if t is None or t.inlet != s.outlet:
                on = [k for k, v in {**turbines, **xturbines}.items()
                      if v.inlet == s.outlet]
                raise ModelError(f"no turbine '{c.turbine}' drawing from the outlet "
                                 f"header '{s.outlet}' (turbines there: "
                                 f"{', '.join(on) or 'none'})", file=model.source,
                                 item=item, field="turbine")
            credits.append((f"turbine '{c.turbine}'", c.flow))
    return ReliefData(header=s.outlet, devices=devices,
                      p_atm=model.site.atmospheric_pressure,
                      spray_fails_open=s.spray_fails == "open", credits=tuple(credits),
                      max_inlet_pressure=s.max_inlet_pressure,
                      max_inlet_temperature=s.max_inlet_temperature)


def station_data(model) -> dict[str, StationData]:
    """StationData of every let-down of ``model``, limits site-wide then per station.

    Raises
    ------
    ModelErrors
        A limit that is unknown, has a wrong unit or breaks the order of the limits,
        naming the file and the station.
    """
    site = parse_limits(model.station_limits, file=model.source,
                        origin="model file, [station_limits]")
    out = {}
    errors = []
    for name, s in model.table("letdown").items():
        try:
            limits = parse_limits(s.limits, base=site, file=model.source,
                                  item=f"letdown '{name}' limits",
                                  origin=f"model file, letdown '{name}' limits"
                                  ) if s.limits else site
        except ModelErrors as exc:
            errors.extend(exc.errors)
            continue
        d = s.desuperheater
        ds = None
        if d is not None:
            rated_min = d.rated_min_steam
            if rated_min is None and d.turndown and d.rated_max_steam:
                rated_min = d.rated_max_steam / d.turndown
            ds = DesuperheaterData(atomisation=d.atomisation, rated_min_steam=rated_min,
                                   rated_max_steam=d.rated_max_steam,
                                   max_spray=d.max_spray, min_spray=d.min_spray,
                                   evaporation_time=d.evaporation_time)
        try:
            out[name] = StationData(name=name, valve=_valve(s.valve), desuperheater=ds,
                                    spray_valve=_valve(s.spray_valve),
                                    outlet_pipe_diameter=s.outlet_pipe_diameter,
                                    sensor_distance=s.sensor_distance, limits=limits,
                                    relief=_relief(model, name, s))
        except ModelError as exc:
            errors.append(exc.with_context(file=model.source, item=f"letdown '{name}'"))
    if errors:
        raise ModelErrors(errors)
    return out
