"""Machinery shared by the station checks: result rows, applicability, states.

Private to :mod:`steamnet.stations`; the checks themselves are in
:mod:`steamnet.stations.checks`.
"""

from __future__ import annotations

import inspect
import math
from dataclasses import dataclass

from .. import properties as props
from ..calc.desuperheater import gain_per_ratio, gain_per_spray
from ..model.stations import StationData, StationLimits, StationPoint
from .rows import CheckRow, Status

POINT_DOC = """

Parameters
----------
data : StationData
    Station data [-]
point : StationPoint
    Operating point of this station [-]

Returns
-------
row : CheckRow
    Check ``{check}``; value and limit in {unit} [{unit}]
"""


def row(data: StationData, case: str, check: str, unit: str, status: Status, *,
        value: float | None = None, limit: float | None = None, basis: str = "",
        source: str = "", advice: str = "") -> CheckRow:
    """A result row for one station."""
    return CheckRow(case=case, station=data.name, check=check, value=value,
                    limit=limit, unit=unit, status=status, basis=basis, source=source,
                    advice=advice)


def limit_source(lim: StationLimits, status: Status, warn: str, fail: str) -> str:
    """Source label of the limit a verdict refers to: the fail limit's for a fail, the
    warn limit's otherwise (where the model set it, or the default's source)."""
    return lim.source(fail if status is Status.FAIL else warn)


def needs_row(data: StationData, case: str, check: str, unit: str, needs: list[str],
              *, source: str, value: float | None = None, basis: str = "",
              extra: str = "") -> CheckRow:
    """A ``not_assessed`` row whose advice names the data needed."""
    advice = "not assessed, needs " + " and ".join(needs) + extra
    return row(data, case, check, unit, Status.NOT_ASSESSED, value=value, basis=basis,
               source=source, advice=advice)


@dataclass(slots=True)
class Ctx:
    """One check of one point: the data, the point and the row it will produce (made
    for every check of every point, so not frozen: a frozen dataclass is made about
    three times slower; nothing changes it after it is made)."""

    data: StationData
    point: StationPoint
    check: str
    unit: str

    @property
    def lim(self) -> StationLimits:
        return self.data.limits

    @property
    def ds(self):
        return self.data.desuperheater

    def row(self, status: Status, **kw) -> CheckRow:
        return row(self.data, self.point.case, self.check, self.unit, status, **kw)

    def needs(self, needs: list[str], **kw) -> CheckRow:
        return needs_row(self.data, self.point.case, self.check, self.unit, needs, **kw)


def gate(c: Ctx, spray: bool, spraying: bool) -> CheckRow | None:
    """A ``not_applicable`` row when the check does not concern this point, else None."""
    if c.point.m_steam == 0:
        reason = "no steam passes the station in this case"
    elif (spray or spraying) and c.ds is None:
        reason = "the station has no desuperheater"
    elif spraying and c.point.m_spray == 0:
        reason = "no spray at this point (steam at or below the outlet setpoint)"
    else:
        return None
    return c.row(Status.NOT_APPLICABLE, advice=reason)


def point_check(check: str, unit: str, *, spray: bool = False,
                spraying: bool = False):
    """Make a public check ``f(data, point) -> CheckRow`` from a body ``f(ctx)``.

    The public function returns ``not_applicable`` without calling the body when the
    station passes no steam, when ``spray`` (needs a desuperheater) or ``spraying``
    (needs spray at the point) is set and not met. It also completes the docstring
    with the common Parameters and Returns sections.
    """
    def wrap(body):
        def run(data: StationData, point: StationPoint) -> CheckRow:
            ctx = Ctx(data, point, check, unit)
            gated = gate(ctx, spray, spraying)
            return gated if gated is not None else body(ctx)
        run.__name__ = run.__qualname__ = body.__name__
        run.__module__ = body.__module__
        run.__doc__ = inspect.cleandoc(body.__doc__) + POINT_DOC.format(
            check=check, unit=unit)
        run.check_id = check
        run.unit = unit
        return run
    return wrap


def outlet(point: StationPoint) -> props.State:
    return props.state_ph(point.p_out, point.h_out)


def outlet_velocity(data: StationData, point: StationPoint) -> float:
    """Mean velocity in the outlet pipe [m/s]; needs ``outlet_pipe_diameter``."""
    area = math.pi * data.outlet_pipe_diameter ** 2 / 4.0
    return (point.m_steam + point.m_spray) * outlet(point).v / area


def water_state(point: StationPoint) -> props.State | None:
    """Spray water at the spray valve inlet, from (p_water, t_water) or (p_water, h)."""
    if point.p_water is None:
        return None
    if point.t_water is not None:
        return props.state_pt(point.p_water, point.t_water)
    if point.h_water is not None:
        return props.state_ph(point.p_water, point.h_water)
    return None


def water_enthalpy(point: StationPoint) -> float | None:
    """Spray water enthalpy [J/kg]: given, or from its temperature at p_water (or at
    p_out when the supply pressure is not given; the difference is a few kJ/kg)."""
    if point.h_water is not None:
        return point.h_water
    if point.t_water is not None:
        return props.state_pt(point.p_water or point.p_out, point.t_water).h
    return None


def gain_inputs(point: StationPoint) -> tuple[float, float] | None:
    """(spray water enthalpy [J/kg], outlet cp [J/(kg K)]) of a point whose control
    gains are defined: steam passes, the spray water is known and the outlet is dry;
    None otherwise."""
    if point.m_steam <= 0:
        return None
    h_w = water_enthalpy(point)
    if h_w is None:
        return None
    st = outlet(point)
    if st.is_wet:
        return None
    return h_w, st.cp


def control_gains(h_water: float, h_in: float, h_out: float, cp_out: float,
                  m_steam: float, m_spray: float) -> tuple[float, float]:
    """The two control gains of one operating point, the one place both the gain table
    and the gain-spread checks take them from: outlet temperature per unit spray flow
    [K s/kg] and per unit spray-to-steam ratio [K] (signed; see
    :mod:`steamnet.calc.desuperheater`)."""
    return (gain_per_spray(h_water, h_out, cp_out, m_steam, m_spray),
            gain_per_ratio(h_water, h_in, cp_out, m_spray / m_steam))
