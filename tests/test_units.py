"""Quantities as written in model files, read into SI (steamnet/units.py), checked
against the definitions of the units.

Sources of the definitions:

* NIST Special Publication 811 (2008 edition), "Guide for the Use of the International
  System of Units", Appendix B (conversion factors) - cited as NIST SP 811;
* the international yard and pound (1959): 1 yd = 0.9144 m, 1 lb = 0.45359237 kg exactly;
* standard acceleration of gravity g_n = 9.80665 m/s2 exactly (3rd CGPM, 1901), which
  defines the pound-force and the kilogram-force;
* the US gallon = 231 in3 exactly;
* the flow coefficients: Kv in m3/h of water at 1 bar pressure drop, Cv in US gal/min
  of water at 1 psi pressure drop (IEC 60534-1, ISA-75.01.01).
"""

from __future__ import annotations

import math

import pytest

from helpers import LETDOWN_L1, boiler, external_water, headers, user
from helpers import model as model_from_text
from steamnet.errors import ModelError
from steamnet.units import Kind, parse_number_with_unit, parse_quantity

LB = 0.45359237                 # kg, exact
IN = 0.0254                     # m, exact
FT = 12 * IN
G_N = 9.80665                   # m/s2, exact
LBF = LB * G_N                  # N
PSI = LBF / IN ** 2             # Pa
HP = 550 * FT * LBF             # W: 550 ft lbf/s (NIST SP 811: 745.699 872 W)
BTU_IT = 1055.05585262          # J (NIST SP 811, B.8, International Table Btu)
GAL = 231 * IN ** 3             # m3 (US liquid gallon)
KGF_CM2 = G_N * 1.0 / 1e-4      # Pa (kilogram-force per square centimetre)
ATM = 101325.0                  # Pa (standard atmosphere)


def q(text, kind, **kw):
    return parse_quantity(text, kind, **kw)


def same(a, b, rel=1e-12):
    return math.isclose(a, b, rel_tol=rel, abs_tol=0.0)


def test_derived_constants_match_nist_sp811_printed_values():
    # NIST SP 811, Appendix B.8: the printed factors, to their printed digits
    assert same(PSI, 6.894757e3, rel=1e-7)
    assert same(HP, 7.456999e2, rel=1e-7)
    assert same(BTU_IT / LB, 2.326e3, rel=1e-12)           # Btu_IT/lb = 2.326 kJ/kg exact
    assert same(GAL, 3.785412e-3, rel=1e-7)


# ------------------------------------------------------------------------ pressure
@pytest.mark.parametrize("text,pa", [
    ("42 bar(g)", 42e5 + ATM), ("42 barg", 42e5 + ATM), ("42 bar(a)", 42e5),
    ("42 bara", 42e5), ("600 psig", 600 * PSI + ATM), ("600 psia", 600 * PSI),
    ("600 psi(g)", 600 * PSI + ATM), ("1.2 MPa(a)", 1.2e6), ("500 kPa(g)", 5e5 + ATM),
    ("250 mbar(a)", 250e2), ("10 kgf/cm2(g)", 10 * KGF_CM2 + ATM),
    ("-0.5 bar(g)", -0.5e5 + ATM), ("0.12 bar(a)", 0.12e5),
])
def test_pressures_gauge_and_absolute(text, pa):
    assert same(q(text, Kind.PRESSURE), pa)


def test_gauge_pressure_uses_the_site_atmosphere():
    p_atm = 0.95e5                                  # a site at altitude
    assert same(q("10 bar(g)", Kind.PRESSURE, p_atm=p_atm), 10e5 + p_atm)
    assert same(q("100 psig", Kind.PRESSURE, p_atm=p_atm), 100 * PSI + p_atm)
    assert same(q("10 bar(a)", Kind.PRESSURE, p_atm=p_atm), 10e5)


def site_atm(atm: str) -> str:
    """HP in bar(g), LP in bar(a), at a site with atmospheric pressure ``atm``."""
    return (headers(hp="10 bar(g)", lp="3 bar(a)", site="Altitude").replace(
        "[site]\n", f'[site]\natmospheric_pressure = "{atm}"\n')
        + external_water(p="15 bar(g)") + boiler(t="250 degC") + LETDOWN_L1
        + user("U", "LP", 'demand = "5 t/h"') + """
[[case]]
name = "storm"
changes = { "site.atmospheric_pressure" = "0.90 bar(a)" }
""")


def test_model_reads_gauge_pressures_against_its_site():
    m = model_from_text(site_atm("0.95 bar(a)"))
    assert same(m.headers["HP"].pressure, 10.95e5)
    assert same(m.headers["LP"].pressure, 3e5)           # absolute: unchanged
    # a case that changes the atmosphere re-reads every gauge pressure
    c = m.for_case("storm")
    assert same(c.headers["HP"].pressure, 10.90e5)
    assert same(c.table("water_supply")["FW"].pressure, 15.90e5)
    assert same(c.headers["LP"].pressure, 3e5)
    default = model_from_text(site_atm("1.01325 bar(a)"))
    assert same(default.headers["HP"].pressure, 10e5 + ATM)


def test_pressure_without_gauge_or_absolute_is_refused():
    for text in ("42 bar", "600 psi", "500 kPa"):
        with pytest.raises(ModelError, match="gauge or absolute"):
            q(text, Kind.PRESSURE)


# --------------------------------------------------------------------- temperature
@pytest.mark.parametrize("text,k", [
    ("400 degC", 673.15), ("673.15 K", 673.15), ("750 degF", (750 + 459.67) / 1.8),
    ("32 degF", 273.15), ("212 degF", 373.15), ("-40 degF", 233.15),
    ("1200 degR", 1200 / 1.8),
])
def test_temperatures(text, k):
    # NIST SP 811, B.9: T/K = (t/degF + 459.67) / 1.8; t/degC = T/K - 273.15
    assert same(q(text, Kind.TEMPERATURE), k)


@pytest.mark.parametrize("text,k", [("10 K", 10.0), ("18 degF", 10.0),
                                    ("10 delta_degC", 10.0)])
def test_temperature_differences(text, k):
    # a difference of 1 degF is 1/1.8 K; a difference of 1 degC is 1 K
    assert same(q(text, Kind.TEMPERATURE_DIFFERENCE), k)


@pytest.mark.parametrize("text", ["160 degC", "10 °C"])
def test_a_celsius_temperature_is_not_taken_for_a_difference(text):
    """A difference written as a Celsius temperature is refused with the fix, never
    read as that many kelvin (docs/model-file.md: differences are in K)."""
    with pytest.raises(ModelError, match="write K or delta_degC"):
        q(text, Kind.TEMPERATURE_DIFFERENCE)


def test_bare_c_and_f_are_refused():
    for text in ("400 C", "750 F"):
        with pytest.raises(ModelError, match="degC"):
            q(text, Kind.TEMPERATURE)


# --------------------------------------------------------------- flow, power, energy
@pytest.mark.parametrize("text,kind,si", [
    ("120 t/h", Kind.MASS_FLOW, 120 * 1000 / 3600),
    ("120 tph", Kind.MASS_FLOW, 120 * 1000 / 3600),
    ("15 kg/s", Kind.MASS_FLOW, 15.0),
    ("80 klb/h", Kind.MASS_FLOW, 80e3 * LB / 3600),
    ("2500 lb/h", Kind.MASS_FLOW, 2500 * LB / 3600),
    ("3.5 MW", Kind.POWER, 3.5e6),
    ("800 kW", Kind.POWER, 8e5),
    ("1200 hp", Kind.POWER, 1200 * HP),
    ("20 MMBtu/h", Kind.POWER, 20e6 * BTU_IT / 3600),
    ("1200 Btu/lb", Kind.SPECIFIC_ENTHALPY, 1200 * 2326.0),
    ("2800 kJ/kg", Kind.SPECIFIC_ENTHALPY, 2.8e6),
    ("4.2 t/MWh", Kind.STEAM_RATE, 4200 / 3.6e9),
    ("9 lb/kWh", Kind.STEAM_RATE, 9 * LB / 3.6e6),
    ("300 mm", Kind.LENGTH, 0.3),
    ("12 in", Kind.LENGTH, 12 * IN),
    ("0.2 s", Kind.TIME, 0.2),
    ("120 ft/s", Kind.VELOCITY, 120 * FT),
    ("3.5 bar", Kind.PRESSURE_DIFFERENCE, 3.5e5),
    ("50 psi", Kind.PRESSURE_DIFFERENCE, 50 * PSI),
])
def test_si_and_us_customary_units(text, kind, si):
    assert same(q(text, kind), si)


def test_mbtu_is_refused_as_ambiguous():
    for text, kind in (("10 MBtu/h", Kind.POWER), ("1 MBtu", Kind.POWER)):
        with pytest.raises(ModelError, match="ambiguous"):
            q(text, kind)
    with pytest.raises(ModelError, match="ambiguous"):
        q("4 USD/MBtu", Kind.PRICE_ENERGY, currency="USD")


@pytest.mark.parametrize("text,kind,per", [
    ("9.5 EUR/GJ", Kind.PRICE_ENERGY, 9.5e-9),
    ("32 EUR/MWh", Kind.PRICE_ENERGY, 32 / 3.6e9),
    ("1.8 EUR/t", Kind.PRICE_MASS, 1.8e-3),
])
def test_prices(text, kind, per):
    assert same(q(text, kind, currency="EUR"), per)


def test_price_per_mmbtu_and_currency_check():
    assert same(q("4 USD/MMBtu", Kind.PRICE_ENERGY, currency="USD"), 4 / (1e6 * BTU_IT))
    with pytest.raises(ModelError, match="site currency is 'EUR'"):
        q("4 USD/MMBtu", Kind.PRICE_ENERGY, currency="EUR")


# ---------------------------------------------------------- numbers, fractions, ratios
@pytest.mark.parametrize("kind", [Kind.PRESSURE, Kind.TEMPERATURE, Kind.MASS_FLOW,
                                  Kind.POWER, Kind.LENGTH])
def test_bare_numbers_are_refused(kind):
    with pytest.raises(ModelError, match="bare number"):
        q(45, kind)
    with pytest.raises(ModelError, match="needs a unit"):
        q("45", kind)


def test_odd_values_are_refused():
    for value in (True, "forty bar(g)", [42], "nan bar(g)", float("inf")):
        with pytest.raises(ModelError):
            q(value, Kind.PRESSURE)
    with pytest.raises(ModelError, match="not a unit of mass flow"):
        q("20 bar(g)", Kind.MASS_FLOW)


@pytest.mark.parametrize("value,frac", [("88 %", 0.88), (0.88, 0.88), ("88 percent", 0.88),
                                        ("0.5 %", 0.005), (1, 1.0)])
def test_fractions(value, frac):
    assert same(q(value, Kind.FRACTION), frac)


def test_fraction_with_another_unit_is_refused():
    with pytest.raises(ModelError):
        q("88 K", Kind.FRACTION)


@pytest.mark.parametrize("value,ratio", [("10:1", 10.0), ("50:1", 50.0), (12, 12.0),
                                         ("12", 12.0)])
def test_ratios(value, ratio):
    assert same(q(value, Kind.RATIO), ratio)


def test_ratio_by_zero_is_refused():
    with pytest.raises(ModelError, match="divides by zero"):
        q("10:0", Kind.RATIO)


# ------------------------------------------------------------- flow coefficients
def test_kv_and_cv():
    from fluids.control_valve import Cv_to_Kv
    assert q("120 Kv", Kind.FLOW_COEFFICIENT) == 120.0
    kv = q("100 Cv", Kind.FLOW_COEFFICIENT)
    # the same conversion as fluids' (Kv = Cv / 1.156)
    assert same(kv, Cv_to_Kv(100.0))
    # from the definitions: Kv/Cv = (gal/min in m3/h) * sqrt(bar / psi)
    from_definitions = GAL * 60 * math.sqrt(1e5 / PSI)
    # (fluids rounds the factor to 1.156; the water reference temperatures differ too)
    assert math.isclose(kv / 100, from_definitions, rel_tol=2e-4)
    # the usual rounding in the trade, Kv = 0.865 Cv (common practice, no source)
    assert math.isclose(kv / 100, 0.865, rel_tol=1e-4)


def test_flow_coefficient_needs_kv_or_cv():
    with pytest.raises(ModelError, match="flow-coefficient unit"):
        q("120 m3/h", Kind.FLOW_COEFFICIENT)


# --------------------------------------------------------- tables with one unit
def test_number_with_unit_in_a_heading():
    assert same(parse_number_with_unit(45.0, "bar(g)", Kind.PRESSURE), 45e5 + ATM)
    assert same(parse_number_with_unit(45.0, "bar(g)", Kind.PRESSURE, p_atm=0.9e5),
                45.9e5)
    assert same(parse_number_with_unit(10.0, "klb/h", Kind.MASS_FLOW), 10e3 * LB / 3600)


def test_prefixed_hour_is_refused():
    """'t/hh' is a typo; pint alone would read it as tonnes per hectohour (100 h)."""
    import pytest as _pt
    from steamnet.errors import ModelError as _ME
    from steamnet.units import parse_quantity as _pq
    with _pt.raises(_ME, match="prefixed hour"):
        _pq("12 t/hh", "mass_flow")
    assert _pq("12 t/h", "mass_flow") == _pt.approx(12000 / 3600, rel=1e-15)


def test_units_read_without_pint_equal_pints_conversions():
    """The common units are read from a table so that a model file needs no pint: each
    entry must be exactly what pint gives (pint, an independent units library, is the
    reference here; bit for bit, so that no answer moves)."""
    import steamnet.units as units
    ureg = units._registry()
    for (unit, si), (scale, offset) in units._KNOWN.items():
        a = ureg.Quantity(0.0, unit).to(si).magnitude
        b = ureg.Quantity(1.0, unit).to(si).magnitude
        if offset:
            assert (scale, offset) == (b - a, a), unit
        else:
            assert (scale, offset) == (b, 0.0), unit
    for (per, si), factor in units._KNOWN_PER.items():
        assert factor == ureg.Quantity(1.0, f"1/({per})").to(si).magnitude, per


def test_the_demo_model_loads_without_pint():
    """Start-up (docs/performance.md): reading the demo model needs no unit registry."""
    import subprocess
    import sys
    code = ("import sys, steamnet; steamnet.load_model('cases/orlewick.toml'); "
            "print('pint' in sys.modules)")
    root = __import__("pathlib").Path(__file__).resolve().parents[1]
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=root, check=True).stdout
    assert out.strip() == "False"
