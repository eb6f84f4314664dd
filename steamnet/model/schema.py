"""The model-file schema: one pydantic class per table of the TOML file.

Each field that is a physical quantity is written in the file with its unit and stored
here in SI (absolute Pa, K, kg/s, W, J/kg, m, s, fractions as 0..1). Descriptions end in
the SI unit in brackets; docs/model-file.md is generated from these classes
(``python -m steamnet.model.docgen``), so it is never a second copy.

Unknown keys are errors (``extra="forbid"``), so a typo never passes silently.
"""

from __future__ import annotations

import math
import re
from functools import lru_cache
from typing import Annotated, Any, Literal

from pydantic import (BaseModel, BeforeValidator, ConfigDict, Field, ValidationInfo,
                      model_validator)

from ..units import STANDARD_ATMOSPHERE, Kind, parse_quantity

__all__ = [
    "SI", "Site", "Prices", "Header", "WaterSupply", "Boiler", "SteamTransfer", "Turbine",
    "Extraction", "ExtractionTurbine", "Valve", "Desuperheater", "Letdown", "User", "Vent",
    "Deaerator", "Case", "EQUIPMENT_TABLES", "NAME_RE", "ITEM_LABELS", "VENT_RANK",
    "item_label",
    "ReliefValve", "ReliefCredit",
    "Deaerator", "Case", "EQUIPMENT_TABLES", "NAME_RE",
]

#: Allowed item names: letters, digits, space and - _ / + ( ) # ; no dots (dots separate
#: the parts of a case change such as ``user.Tracing.demand``).
NAME_RE = re.compile(r"^[A-Za-z0-9][A-Za-z0-9 _\-/+()#&]{0,63}\Z")


#: How an item is named in messages: table -> label.
ITEM_LABELS = {
    "header": "header", "water_supply": "water supply", "boiler": "boiler",
    "steam_transfer": "steam transfer", "turbine": "turbine",
    "extraction_turbine": "extraction turbine", "letdown": "letdown", "user": "user",
    "vent": "vent", "deaerator": "deaerator", "case": "case", "site": "site",
    "prices": "prices",
}


#: Added to a vent's priority so that every vent ranks after every swing export (vents
#: take excess steam only after every export; docs/method.md).
VENT_RANK = 1000


def item_label(table: str, name: Any) -> str:
    """How one item is named in messages: ``"letdown 'PRV-2'"``."""
    return f"{ITEM_LABELS.get(table, table)} '{name}'"


class FieldError(ValueError):
    """A check across fields failed; names the field it concerns."""

    def __init__(self, field: str, message: str):
        self.field = field
        super().__init__(message)


class SI(float):
    """A value already in SI, passed through unparsed (case tables read with units in
    their headings use it)."""


@lru_cache(maxsize=8192)
def _parse_text(value: str, kind: Kind, p_atm: float, currency: str) -> float:
    """parse_quantity of a text value, remembered: a case revalidates the items it
    changes, and their other fields are the same texts every time (errors are raised
    each time, not remembered)."""
    return parse_quantity(value, kind, p_atm=p_atm, currency=currency)


def _quantity(kind: Kind):
    def parse(value: Any, info: ValidationInfo) -> float | None:
        if value is None:
            return None
        if isinstance(value, SI):
            return float(value)
        ctx = info.context or {}
        p_atm = ctx.get("p_atm", STANDARD_ATMOSPHERE)
        currency = ctx.get("currency", "EUR")
        try:
            if type(value) is str:
                return _parse_text(value, kind, p_atm, currency)
            return parse_quantity(value, kind, p_atm=p_atm, currency=currency)
        except Exception as exc:  # ModelError -> ValueError for pydantic to collect
            raise ValueError(getattr(exc, "message", str(exc))) from None
    parse.kind = kind  # what the field measures; case tables read units from headings
    return BeforeValidator(parse)


def Q(kind: Kind):  # noqa: N802 - reads like a type
    """An SI float read from a quantity string of the given kind."""
    return Annotated[float, _quantity(kind)]


def _name(value: Any) -> str:
    if not isinstance(value, str):
        raise ValueError(f"a name is text, got {type(value).__name__}")
    if not NAME_RE.match(value):
        raise ValueError(f"name {value!r} is not allowed: use 1-64 letters, digits, "
                         "spaces and - _ / + ( ) # &, starting with a letter or digit, "
                         "no dots")
    return value


Name = Annotated[str, BeforeValidator(_name)]
Pressure = Q(Kind.PRESSURE)
Temperature = Q(Kind.TEMPERATURE)
DeltaT = Q(Kind.TEMPERATURE_DIFFERENCE)
Flow = Q(Kind.MASS_FLOW)
Power = Q(Kind.POWER)
Fraction = Q(Kind.FRACTION)
Ratio = Q(Kind.RATIO)
Number = Q(Kind.NUMBER)
Length = Q(Kind.LENGTH)
Time = Q(Kind.TIME)
FlowCoefficient = Q(Kind.FLOW_COEFFICIENT)
PriceEnergy = Q(Kind.PRICE_ENERGY)
PriceMass = Q(Kind.PRICE_MASS)
SteamRate = Q(Kind.STEAM_RATE)
Area = Q(Kind.AREA)
Density = Q(Kind.DENSITY)
Velocity = Q(Kind.VELOCITY)
#: mass per unit energy (an emission factor, kg of CO2 per J of fuel)
MassPerEnergy = Q(Kind.STEAM_RATE)


class _Item(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, validate_default=False)

    def check(self) -> None:
        """Checks across fields; raise ValueError naming the field."""

    @model_validator(mode="after")
    def _run_check(self):
        self.check()
        return self


def _check_fraction(v: float | None, field: str, *, allow_zero: bool = False,
                    allow_one: bool = True) -> None:
    if v is None:
        return
    lo_ok = v >= 0 if allow_zero else v > 0
    hi_ok = v <= 1 if allow_one else v < 1
    if not (lo_ok and hi_ok and math.isfinite(v)):
        lo = "[0" if allow_zero else "(0"
        hi = "1]" if allow_one else "1)"
        raise FieldError(field, f"{field} must lie in {lo}, {hi} (0 to 100 %), got {v:g}")


def _check_nonneg(item: BaseModel, *fields: str) -> None:
    for f in fields:
        v = getattr(item, f)
        if v is not None and v < 0:
            raise FieldError(f, f"{f} must not be negative")


def _check_min_max(item: BaseModel, lo: str, hi: str) -> None:
    a, b = getattr(item, lo), getattr(item, hi)
    if a is not None and b is not None and a > b:
        raise FieldError(lo, f"{lo} is above {hi}")


# ----------------------------------------------------------------------------- site
class Site(_Item):
    """The site: name, local atmospheric pressure, currency, make-up water."""

    name: str = Field(description="plant name, shown on reports")
    atmospheric_pressure: Pressure = Field(
        STANDARD_ATMOSPHERE,
        description="local atmospheric pressure for gauge pressures; default the standard "
                    "atmosphere 1.01325 bar(a); give it for sites at altitude [Pa]")
    currency: str = Field("EUR", description="currency code used in prices, e.g. EUR, USD")
    makeup_temperature: Temperature = Field(
        description="temperature of make-up water entering the deaerator [K]")
    invented: bool = Field(False, description="true when the plant and its numbers are "
                           "invented (a demo or a training model): the workbook then "
                           "says \"invented demo plant\" on its first sheet and drawings")
    power_demand: Power | None = Field(
        None, description="electric demand of the site, met first by its generators: "
        "power generated up to it saves prices.electricity, power above it is sold at "
        "prices.electricity_export; none: every MW generated is worth "
        "prices.electricity [W]")
    max_power_export: Power | None = Field(
        None, description="largest electric power the grid connection may take from "
        "the site (export cap, a limit of `steamnet optimise`); needs power_demand [W]")

    def check(self) -> None:
        _check_nonneg(self, "power_demand", "max_power_export")
        if self.max_power_export is not None and self.power_demand is None:
            raise FieldError("max_power_export", "an export cap needs the site's "
                             "power_demand (power is exported above it)")


class Prices(_Item):
    """Prices for the cost of a case; a price left out counts as zero."""

    fuel: PriceEnergy = Field(0.0, description="fuel price per fuel energy (LHV basis as "
                              "the boiler efficiency) [currency/J]")
    electricity: PriceEnergy = Field(0.0, description="value of electric power generated "
                                     "(avoided purchase) [currency/J]")
    makeup_water: PriceMass = Field(0.0, description="treated make-up water [currency/kg]")
    electricity_export: PriceEnergy | None = Field(
        None, description="price received for electric power sold above the site's "
        "power_demand; default the electricity price [currency/J]")
    carbon: PriceMass = Field(0.0, description="price of the carbon dioxide emitted by "
                              "the fired boilers, per mass of CO2, e.g. '80 EUR/t'; "
                              "needs every fired boiler's emission_factor "
                              "[currency/kg]")


# --------------------------------------------------------------------------- header
#: Orifice letters of API 526 (effective areas in steamnet.calc.relief.ORIFICE_LETTERS).
ORIFICE_LETTER = Literal["D", "E", "F", "G", "H", "J", "K", "L", "M", "N", "P", "Q", "R",
                         "T"]


class ReliefValve(_Item):
    """A steam safety (relief) valve protecting a header (docs/checks/relief_cover.md)."""

    name: Name
    set_pressure: Pressure = Field(description="set pressure [Pa]")
    overpressure: Fraction = Field(description="allowed overpressure (accumulation) "
                                   "above the set pressure, as a share of the gauge set "
                                   "pressure, e.g. '10 %' [-]")
    capacity: Flow | None = Field(None, description="rated (certified) relieving "
                                  "capacity in steam at the relieving pressure; or give "
                                  "the orifice [kg/s]")
    orifice_area: Area | None = Field(None, description="effective orifice area; or give "
                                      "'orifice' [m2]")
    orifice: ORIFICE_LETTER | None = Field(None, description="API 526 orifice letter "
                                           "(D to T); or give 'orifice_area'")
    discharge_coefficient: Number | None = Field(
        None, description="effective coefficient of discharge Kd, needed with an "
        "orifice (the maker's certified figure) [-]")

    def check(self) -> None:
        _check_fraction(self.overpressure, "overpressure", allow_zero=True,
                        allow_one=False)
        if self.orifice is not None and self.orifice_area is not None:
            raise FieldError("orifice", "give either 'orifice' (a letter) or "
                             "'orifice_area', not both")
        if self.capacity is not None and (self.orifice or self.orifice_area):
            raise FieldError("capacity", "give either the rated 'capacity' or the "
                             "orifice, not both")
        _check_nonneg(self, "capacity", "orifice_area")
        if self.discharge_coefficient is not None and not (
                0 < self.discharge_coefficient <= 1):
            raise FieldError("discharge_coefficient", "discharge_coefficient must lie "
                             f"in (0, 1], got {self.discharge_coefficient:g}")


class Header(_Item):
    """A steam header held at one pressure by its controller."""

    name: Name
    pressure: Pressure = Field(description="header pressure held by its controller [Pa]")
    heat_loss: Power = Field(0.0, description="heat lost from the header and its mains [W]")
    description: str = ""
    relief_valves: list[ReliefValve] = Field(
        default_factory=list, description="the header's steam safety valves, "
        "[[header.relief_valves]] (see below)")

    def check(self) -> None:
        names = [r.name for r in self.relief_valves]
        if len(set(names)) != len(names):
            raise FieldError("relief_valves", "two relief valves have the same name")
        for r in self.relief_valves:
            if r.set_pressure <= self.pressure:
                raise FieldError("relief_valves", f"relief valve '{r.name}' is set at "
                                 "or below the header pressure: it would lift in "
                                 "normal operation")


# --------------------------------------------------------------------- water supply
class WaterSupply(_Item):
    """Feedwater or spray water for boilers and desuperheaters."""

    name: Name
    source: Literal["deaerator", "external"] = Field(
        "deaerator", description="'deaerator': pumped from the deaerator outlet; "
        "'external': water from outside the loop, counted as make-up")
    pressure: Pressure = Field(description="supply pressure at the user [Pa]")
    temperature: Temperature | None = Field(
        None, description="required for an external supply; for a deaerator supply the "
        "temperature follows from the deaerator and the pump [K]")
    pump_efficiency: Fraction | None = Field(
        None, description="pump efficiency of a deaerator supply; when given, the pump "
        "work v dP / efficiency heats the water and is reported (refused on an external "
        "supply) [-]")
    pump_turbine: Name | None = Field(
        None, description="the [[turbine]] (drive 'mechanical', mode 'pump') that drives "
        "this supply's pump: its power follows the pumped flow, and the pump's power is "
        "not charged as electricity; needs pump_efficiency. While that turbine is "
        "tripped or out of service the pump counts as motor-driven")

    def check(self) -> None:
        _check_fraction(self.pump_efficiency, "pump_efficiency")
        if self.pump_turbine is not None and self.source != "deaerator":
            raise FieldError("pump_turbine", "a turbine-driven pump is a feedwater pump "
                             "at the deaerator outlet: use source = 'deaerator'")
        if self.pump_turbine is not None and self.pump_efficiency is None:
            raise FieldError("pump_turbine", "a turbine-driven pump needs its "
                             "pump_efficiency (the turbine's power is v dP / efficiency "
                             "times the pumped flow)")
        if self.source == "external" and self.temperature is None:
            raise FieldError("temperature", "an external water supply needs its temperature")
        if self.source == "deaerator" and self.temperature is not None:
            raise FieldError("temperature", "a deaerator supply takes its temperature from the "
                             "deaerator; remove 'temperature' or use source = 'external'")
        if self.source == "external" and self.pump_efficiency is not None:
            raise FieldError("pump_efficiency", "an external supply is given at its "
                             "pressure and temperature at the user, so no pump is "
                             "modelled: remove 'pump_efficiency' (or pump from the "
                             "deaerator with source = 'deaerator')")


# --------------------------------------------------------------------------- boiler
class Boiler(_Item):
    """A fired or waste-heat boiler raising steam into one header."""

    name: Name
    header: Name = Field(description="header the steam goes to")
    kind: Literal["fired", "waste_heat"] = "fired"
    steam_temperature: Temperature = Field(description="superheater outlet temperature [K]")
    feedwater: Name = Field(description="water supply feeding the boiler")
    blowdown: Fraction = Field(0.0, description="continuous blowdown as a fraction of "
                               "feedwater [-]")
    efficiency: Fraction | None = Field(
        None, description="fuel-to-steam efficiency; required for a fired boiler [-]")
    mode: Literal["swing", "fixed", "off"] = Field(
        "swing", description="'swing': holds its header pressure; 'fixed': raises 'steam'")
    steam: Flow | None = Field(None, description="steam flow in fixed mode [kg/s]")
    min_steam: Flow = Field(0.0, description="minimum steam when running [kg/s]")
    max_steam: Flow | None = Field(None, description="maximum continuous rating [kg/s]")
    priority: int = Field(1, ge=1, le=99, description="sequence among the swing elements "
                          "of its header: 1 moves first")
    share: Fraction | None = Field(None, description="load share among swing elements of "
                                   "equal priority [-]")
    fuel_price: PriceEnergy | None = Field(None, description="overrides prices.fuel "
                                           "[currency/J]")
    blowdown_flash_header: Name | None = Field(
        None, description="header receiving flash steam from the blowdown, if any")
    drum_pressure: Pressure | None = Field(
        None, description="pressure of the steam drum, where the blowdown leaves as "
        "saturated water (its enthalpy and its flash follow from it); default the "
        "header pressure (the drum runs above it by the superheater's and the line's "
        "pressure drop) [Pa]")
    emission_factor: MassPerEnergy | None = Field(
        None, description="CO2 emitted per unit of fuel energy (same basis as the "
        "efficiency), from the fuel supplier's analysis or a published inventory "
        "factor, e.g. '56.1 kg/GJ'; no default. Needed when prices.carbon is given "
        "[kg/J]")
    dispatchable: bool = Field(False, description="`steamnet optimise` may set its "
                               "steam anywhere between min_steam and max_steam, "
                               "whatever its mode (a swing boiler may move anyway)")
    can_stop: bool = Field(False, description="`steamnet optimise` may also stop it "
                           "(steam 0 instead of at least min_steam); needs max_steam")
    in_service: bool = True

    def check(self) -> None:
        _check_nonneg(self, "emission_factor")
        if self.can_stop and self.max_steam is None:
            raise FieldError("can_stop", "a boiler that may stop needs its max_steam")
        _check_fraction(self.blowdown, "blowdown", allow_zero=True, allow_one=False)
        _check_fraction(self.efficiency, "efficiency")
        _check_nonneg(self, "steam", "min_steam", "max_steam")
        _check_min_max(self, "min_steam", "max_steam")
        if self.kind == "fired" and self.efficiency is None:
            raise FieldError("efficiency", "a fired boiler needs its efficiency")
        if self.mode == "fixed" and self.steam is None:
            raise FieldError("steam", "mode 'fixed' needs 'steam'")


class SteamTransfer(_Item):
    """Steam bought from or sold to outside the plant (a neighbour, a grid)."""

    name: Name
    header: Name
    direction: Literal["import", "export"]
    mode: Literal["fixed", "swing", "off"] = "fixed"
    flow: Flow | None = Field(None, description="flow in fixed mode [kg/s]")
    min_flow: Flow = 0.0
    max_flow: Flow | None = None
    steam_temperature: Temperature | None = Field(
        None, description="temperature of imported steam; required for an import [K]")
    price: PriceMass = Field(0.0, description="price paid for an import, or received for "
                             "an export [currency/kg]")
    priority: int = Field(1, ge=1, le=99)
    share: Fraction | None = None
    dispatchable: bool = Field(False, description="`steamnet optimise` may set its "
                               "flow anywhere between min_flow and max_flow, whatever "
                               "its mode")
    in_service: bool = True

    def check(self) -> None:
        _check_nonneg(self, "flow", "min_flow", "max_flow")
        _check_min_max(self, "min_flow", "max_flow")
        if self.mode == "fixed" and self.flow is None:
            raise FieldError("flow", "mode 'fixed' needs 'flow'")
        if self.direction == "import" and self.steam_temperature is None:
            raise FieldError("steam_temperature", "an import needs the steam_temperature it arrives at")


# ------------------------------------------------------------------------- turbines
_TURBINE_MODES = Literal["fixed_flow", "fixed_power", "swing", "pump", "tripped"]


class Turbine(_Item):
    """A backpressure turbine from one header to a lower one."""

    name: Name
    inlet: Name
    outlet: Name
    drive: Literal["generator", "mechanical"] = Field(
        "generator", description="'generator' reports electric power; 'mechanical' drives "
        "a pump, fan or compressor")
    isentropic_efficiency: Fraction | None = Field(
        None, description="internal isentropic efficiency [-]; or give the Willans line")
    willans_no_load: Flow | None = Field(None, description="Willans line: steam at zero "
                                         "output [kg/s]")
    willans_slope: SteamRate | None = Field(None, description="Willans line: extra steam "
                                            "per unit output [kg/J]")
    mechanical_efficiency: Fraction = 1.0
    generator_efficiency: Fraction = 1.0
    mode: _TURBINE_MODES = Field(
        "fixed_flow", description="'fixed_flow', 'fixed_power', 'swing' (holds the "
        "exhaust header), 'pump' (drives the pump of the water supply that names it in "
        "'pump_turbine': its power is that pump's) or 'tripped'")
    flow: Flow | None = Field(None, description="steam flow in fixed_flow mode [kg/s]")
    power: Power | None = Field(None, description="output in fixed_power mode: electric "
                                "for a generator, shaft for a mechanical drive [W]")
    min_flow: Flow = 0.0
    max_flow: Flow | None = None
    priority: int = Field(1, ge=1, le=99)
    share: Fraction | None = None
    dispatchable: bool = Field(False, description="`steamnet optimise` may set its "
                               "flow anywhere between min_flow and max_flow, whatever "
                               "its mode")
    in_service: bool = True

    def check(self) -> None:
        for f in ("isentropic_efficiency", "mechanical_efficiency", "generator_efficiency"):
            _check_fraction(getattr(self, f), f)
        _check_nonneg(self, "flow", "power", "min_flow", "max_flow", "willans_no_load",
                      "willans_slope")
        _check_min_max(self, "min_flow", "max_flow")
        willans = (self.willans_no_load is not None, self.willans_slope is not None)
        if self.isentropic_efficiency is None and not all(willans):
            raise FieldError("isentropic_efficiency", "give isentropic_efficiency, or willans_no_load and "
                             "willans_slope")
        if self.isentropic_efficiency is not None and any(willans):
            raise FieldError("isentropic_efficiency", "give either isentropic_efficiency or the Willans line, "
                             "not both")
        if any(willans) and not all(willans):
            raise FieldError("willans_slope", "the Willans line needs both willans_no_load and "
                             "willans_slope")
        if self.willans_slope is not None and self.willans_slope <= 0:
            raise FieldError("willans_slope", "willans_slope must be positive")
        if self.mode == "fixed_flow" and self.flow is None:
            raise FieldError("flow", "mode 'fixed_flow' needs 'flow'")
        if self.mode == "fixed_power" and self.power is None:
            raise FieldError("power", "mode 'fixed_power' needs 'power'")
        if self.mode == "pump" and self.drive != "mechanical":
            raise FieldError("drive", "mode 'pump' is a mechanical drive: give drive = "
                             "'mechanical'")
        if self.mode == "pump" and self.power is not None:
            raise FieldError("power", "mode 'pump' takes its power from the pump it "
                             "drives: remove 'power'")


class Extraction(_Item):
    """One extraction of an extraction turbine into a header."""

    header: Name
    mode: Literal["swing", "fixed"] = Field(
        "swing", description="'swing': the extraction holds its header; 'fixed': 'flow'")
    flow: Flow | None = None
    min_flow: Flow = 0.0
    max_flow: Flow | None = None
    priority: int = Field(1, ge=1, le=99)
    share: Fraction | None = None

    def check(self) -> None:
        _check_nonneg(self, "flow", "min_flow", "max_flow")
        _check_min_max(self, "min_flow", "max_flow")
        if self.mode == "fixed" and self.flow is None:
            raise FieldError("flow", "an extraction in mode 'fixed' needs 'flow'")


class ExtractionTurbine(_Item):
    """An extraction turbine: sections in series, extractions to headers, exhaust to a
    header or a condenser."""

    name: Name
    inlet: Name
    extractions: list[Extraction] = Field(description="extraction points, highest "
                                          "pressure first")
    exhaust: Name | None = Field(None, description="exhaust header (backpressure "
                                 "exhaust); or give condenser_pressure")
    condenser_pressure: Pressure | None = Field(None, description="condenser pressure "
                                                "[Pa]")
    section_efficiencies: list[Fraction] | None = Field(
        None, description="isentropic efficiency of each section, inlet section first; "
        "one more than there are extractions; or give the sections' Willans lines [-]")
    section_willans_no_load: list[Flow] | None = Field(
        None, description="Willans line of each section, inlet section first: steam "
        "through the section at zero output [kg/s]")
    section_willans_slope: list[SteamRate] | None = Field(
        None, description="Willans line of each section: extra steam through the "
        "section per unit of its output (electric for a generator, shaft for a "
        "mechanical drive) [kg/J]")
    drive: Literal["generator", "mechanical"] = "generator"
    mechanical_efficiency: Fraction = 1.0
    generator_efficiency: Fraction = 1.0
    mode: Literal["fixed_power", "fixed_flow", "tripped"] = "fixed_power"
    power: Power | None = None
    flow: Flow | None = Field(None, description="inlet (throttle) flow in fixed_flow "
                              "mode [kg/s]")
    min_flow: Flow = 0.0
    max_flow: Flow | None = None
    min_exhaust_flow: Flow = Field(0.0, description="minimum flow to the exhaust "
                                   "(cooling of the last stages) [kg/s]")
    max_exhaust_flow: Flow | None = None
    min_exhaust_quality: Fraction = Field(
        0.88, description="lowest acceptable exhaust quality; default 0.88 is a common "
        "floor (from memory): the maker's limit wins [-]")
    condensate_return: Fraction = Field(
        1.0, description="fraction of condenser condensate returned to the deaerator [-]")
    condensate_temperature: Temperature | None = Field(
        None, description="temperature of the returned condensate; default saturation "
        "at the condenser pressure [K]")
    moisture_correction: bool = Field(
        False, description="lower each section's efficiency for the moisture of its "
        "expansion, 1 % per 1 % of the mean of its inlet and outlet moisture (Baumann "
        "rule, common practice; the maker's wet-stage data win); condensing turbines "
        "only; off by default")
    dispatchable: bool = Field(False, description="`steamnet optimise` may set its "
                               "throttle flow anywhere between min_flow and max_flow "
                               "(within its exhaust limits), whatever its mode")
    in_service: bool = True

    def check(self) -> None:
        if self.moisture_correction and self.condenser_pressure is None:
            raise FieldError("moisture_correction", "the moisture correction is for a "
                             "condensing turbine (give condenser_pressure), whose last "
                             "sections expand into wet steam")
        for f in ("mechanical_efficiency", "generator_efficiency", "min_exhaust_quality"):
            _check_fraction(getattr(self, f), f)
        _check_fraction(self.condensate_return, "condensate_return", allow_zero=True)
        lines = (self.section_willans_no_load, self.section_willans_slope)
        if any(v is not None for v in lines) and not all(v is not None for v in lines):
            raise FieldError("section_willans_slope", "the sections' Willans lines need "
                             "both section_willans_no_load and section_willans_slope")
        willans = lines[0] is not None
        if willans == (self.section_efficiencies is not None):
            raise FieldError("section_efficiencies", "give section_efficiencies, or the "
                             "sections' Willans lines (section_willans_no_load and "
                             "section_willans_slope), one of the two")
        for e in self.section_efficiencies or ():
            _check_fraction(e, "section_efficiencies")
        for f in (("section_willans_no_load", "section_willans_slope") if willans
                  else ("section_efficiencies",)):
            got = len(getattr(self, f))
            if got != len(self.extractions) + 1:
                raise FieldError(f, f"{len(self.extractions)} extraction(s) need "
                                 f"{len(self.extractions) + 1} {f}, got {got}")
        if willans:
            if any(not v >= 0 for v in self.section_willans_no_load):
                raise FieldError("section_willans_no_load", "section_willans_no_load "
                                 "must not be negative")
            if any(not v > 0 for v in self.section_willans_slope):
                raise FieldError("section_willans_slope", "section_willans_slope must "
                                 "be positive")
            if self.moisture_correction:
                raise FieldError("moisture_correction", "a Willans line is the "
                                 "section's measured steam use, wet stages included: no "
                                 "moisture correction on top of it")
        if (self.exhaust is None) == (self.condenser_pressure is None):
            raise FieldError("exhaust", "give exactly one of 'exhaust' (a header) and "
                             "'condenser_pressure'")
        _check_nonneg(self, "flow", "power", "min_flow", "max_flow", "min_exhaust_flow",
                      "max_exhaust_flow")
        _check_min_max(self, "min_flow", "max_flow")
        _check_min_max(self, "min_exhaust_flow", "max_exhaust_flow")
        if self.mode == "fixed_flow" and self.flow is None:
            raise FieldError("flow", "mode 'fixed_flow' needs 'flow'")
        if self.mode == "fixed_power" and self.power is None:
            raise FieldError("power", "mode 'fixed_power' needs 'power'")


# ------------------------------------------------------------------------- let-down
class ReliefCredit(_Item):
    """An outflow of a let-down's outlet header that is certain to continue when the
    let-down valve fails open, credited against the relief load."""

    user: Name | None = Field(None, description="a user on the outlet header; or give "
                              "'turbine'")
    turbine: Name | None = Field(None, description="a turbine drawing from the outlet "
                                 "header that cannot trip with the failure")
    flow: Flow = Field(description="the minimum flow that is certain to continue [kg/s]")

    def check(self) -> None:
        if (self.user is None) == (self.turbine is None):
            raise FieldError("user", "give exactly one of 'user' and 'turbine'")
        _check_nonneg(self, "flow")


class Valve(_Item):
    """A control valve (let-down steam valve or spray water valve)."""

    rated_coefficient: FlowCoefficient | None = Field(
        None, description="flow coefficient at full travel, written '120 Kv' or "
        "'140 Cv' [Kv, m3/h]")
    characteristic: Literal["linear", "equal_percentage"] | None = None
    rangeability: Ratio | None = Field(None, description="inherent rangeability, e.g. "
                                       "'50:1' [-]")
    fl: Number | None = Field(None, description="liquid pressure recovery factor FL [-]")
    xt: Number | None = Field(None, description="pressure differential ratio factor xT "
                              "[-]")
    fd: Number | None = Field(None, description="valve style modifier Fd [-]")
    diameter: Length | None = Field(None, description="valve (and line) size [m]")
    pipe_diameter: Length | None = Field(
        None, description="inside diameter of the pipe after the valve, for its noise; "
        "default: the station's outlet_pipe_diameter for the let-down valve, the valve "
        "size for the spray valve [m]")
    pipe_wall: Length | None = Field(None, description="wall thickness of the pipe "
                                     "after the valve, for its noise [m]")
    pipe_density: Density | None = Field(
        None, description="density of the pipe wall material; default carbon steel, "
        "7800 kg/m3 [kg/m3]")
    pipe_sound_speed: Velocity | None = Field(
        None, description="speed of sound in the pipe wall material; default carbon "
        "steel, 5000 m/s [m/s]")

    def check(self) -> None:
        for f in ("pipe_diameter", "pipe_wall", "pipe_density", "pipe_sound_speed"):
            v = getattr(self, f)
            if v is not None and not v > 0:
                raise FieldError(f, f"{f} must be positive")
        for f in ("fl", "xt", "fd"):
            v = getattr(self, f)
            if v is not None and not (0 < v <= 1):
                raise FieldError(f, f"{f} must lie in (0, 1], got {v:g}")
        if self.rated_coefficient is not None and self.rated_coefficient <= 0:
            raise FieldError("rated_coefficient", "rated_coefficient must be positive")
        if self.rangeability is not None and self.rangeability <= 1:
            raise FieldError("rangeability", "rangeability must be above 1 (e.g. '50:1')")


class Desuperheater(_Item):
    """Spray desuperheater after a let-down valve."""

    spray_supply: Name = Field(description="water supply feeding the spray")
    outlet_temperature: Temperature | None = Field(
        None, description="outlet temperature setpoint [K]; or give 'approach'")
    approach: DeltaT | None = Field(
        None, description="setpoint as a margin above saturation at the outlet "
        "pressure (usual practice: it follows the pressure) [K]")
    max_spray: Flow | None = Field(None, description="maximum spray water flow [kg/s]")
    min_spray: Flow | None = Field(None, description="minimum controllable spray flow "
                                   "of the nozzle [kg/s]")
    rated_min_steam: Flow | None = Field(None, description="rated minimum steam flow "
                                         "[kg/s]")
    rated_max_steam: Flow | None = Field(None, description="rated maximum steam flow "
                                         "[kg/s]")
    turndown: Ratio | None = Field(None, description="rated turndown, e.g. '10:1'; with "
                                   "rated_max_steam gives the rated minimum [-]")
    atomisation: Literal["mechanical", "steam_assisted", "other"] | None = None
    evaporation_time: Time | None = Field(None, description="time for the spray to "
                                          "evaporate, from the maker [s]")

    def check(self) -> None:
        if (self.outlet_temperature is None) == (self.approach is None):
            raise FieldError("outlet_temperature", "give exactly one of 'outlet_temperature' and 'approach'")
        if self.approach is not None and self.approach <= 0:
            raise FieldError("approach", "approach must be above zero: the setpoint must lie above "
                             "saturation")
        _check_nonneg(self, "max_spray", "min_spray", "rated_min_steam", "rated_max_steam")
        _check_min_max(self, "min_spray", "max_spray")
        _check_min_max(self, "rated_min_steam", "rated_max_steam")
        if self.turndown is not None and self.turndown < 1:
            raise FieldError("turndown", "turndown must be at least 1 (e.g. '10:1')")


class Letdown(_Item):
    """A pressure let-down station, with or without a desuperheater."""

    name: Name
    inlet: Name
    outlet: Name
    mode: Literal["auto", "fixed_flow", "closed"] = Field(
        "auto", description="'auto': on downstream pressure control; 'fixed_flow'; "
        "'closed'")
    flow: Flow | None = Field(None, description="steam flow in fixed_flow mode [kg/s]")
    min_flow: Flow = 0.0
    max_flow: Flow | None = Field(None, description="largest steam flow the station may "
                                  "pass in the balance [kg/s]")
    priority: int = Field(1, ge=1, le=99)
    share: Fraction | None = None
    desuperheater: Desuperheater | None = None
    valve: Valve | None = None
    spray_valve: Valve | None = None
    outlet_pipe_diameter: Length | None = Field(None, description="inside diameter of "
                                                "the pipe after the desuperheater [m]")
    sensor_distance: Length | None = Field(None, description="straight run from the "
                                           "spray nozzle to the temperature element [m]")
    limits: dict[str, Any] = Field(default_factory=dict, description="overrides of "
                                   "[station_limits] for this station")
    spray_fails: Literal["open", "closed"] = Field(
        "open", description="how the spray water valve fails: 'open' adds the maximum "
        "spray to the relief load of a failed-open let-down (the conservative choice)")
    relief_credit: list[ReliefCredit] = Field(
        default_factory=list, description="outflows of the outlet header credited "
        "against the relief load, [[letdown.relief_credit]] (see below); default none")
    max_inlet_pressure: Pressure | None = Field(
        None, description="highest upstream pressure the station is rated for, for the "
        "case-independent relief cover row [Pa]")
    max_inlet_temperature: Temperature | None = Field(
        None, description="highest upstream temperature the station is rated for [K]")
    dispatchable: bool = Field(False, description="`steamnet optimise` may set its "
                               "flow anywhere between min_flow and max_flow, whatever "
                               "its mode")
    in_service: bool = True

    def check(self) -> None:
        _check_nonneg(self, "flow", "min_flow", "max_flow")
        _check_min_max(self, "min_flow", "max_flow")
        if self.mode == "fixed_flow" and self.flow is None:
            raise FieldError("flow", "mode 'fixed_flow' needs 'flow'")


# ------------------------------------------------------------------ users and vents
class User(_Item):
    """A steam user: a flow or a heat duty, and its condensate."""

    name: Name
    header: Name
    demand: Flow | None = Field(None, description="steam flow [kg/s]; or give 'duty'")
    duty: Power | None = Field(None, description="heat duty; flow = duty / (h_header - "
                               "h_saturated_liquid) [W]")
    condensate_return: Fraction = Field(0.0, description="fraction of the condensate "
                                        "returned to the deaerator [-]")
    condensate_temperature: Temperature | None = Field(
        None, description="temperature of returned condensate at the deaerator; "
        "required when condensate_return > 0 [K]")
    group: str = Field("", description="free text for grouping in reports")
    in_service: bool = True

    def check(self) -> None:
        if (self.demand is None) == (self.duty is None):
            raise FieldError("demand", "give exactly one of 'demand' and 'duty'")
        _check_nonneg(self, "demand", "duty")
        _check_fraction(self.condensate_return, "condensate_return", allow_zero=True)
        if self.condensate_return > 0 and self.condensate_temperature is None:
            raise FieldError("condensate_temperature", "condensate_return > 0 needs condensate_temperature")


class Vent(_Item):
    """A vent to atmosphere; used only for excess steam, always reported as a loss."""

    name: Name
    header: Name
    max_flow: Flow | None = Field(None, description="vent capacity; none means "
                                  "unlimited [kg/s]")
    priority: int = Field(1, ge=1, le=99)
    in_service: bool = True

    def check(self) -> None:
        _check_nonneg(self, "max_flow")


class Deaerator(_Item):
    """The deaerator: heating steam, returns and make-up in; saturated feedwater out."""

    name: Name
    header: Name = Field(description="header supplying the heating steam")
    pressure: Pressure = Field(description="deaerator pressure [Pa]")
    vent_fraction: Fraction = Field(0.0, description="vent steam as a fraction of "
                                    "feedwater leaving [-]")

    def check(self) -> None:
        _check_fraction(self.vent_fraction, "vent_fraction", allow_zero=True,
                        allow_one=False)


class Case(_Item):
    """An operating case: the base model plus changes."""

    name: Name
    description: str = ""
    based_on: Name | None = Field(None, description="another case this one starts from")
    changes: dict[str, Any] = Field(
        default_factory=dict, description="'table.item.field' = value, e.g. "
        "'user.Tracing.demand' = '6 t/h'")


#: Table name in the file -> item class, in the order reports list them.
EQUIPMENT_TABLES: dict[str, type[_Item]] = {
    "header": Header,
    "water_supply": WaterSupply,
    "boiler": Boiler,
    "steam_transfer": SteamTransfer,
    "turbine": Turbine,
    "extraction_turbine": ExtractionTurbine,
    "letdown": Letdown,
    "user": User,
    "vent": Vent,
    "deaerator": Deaerator,
}
