"""Small helpers shared by the balance tests: build a model from TOML text, solve it,
pick rows out of the result tables, and the unit definitions the tests convert with."""

from __future__ import annotations

import pandas as pd

from steamnet.model.load import loads_model
from steamnet.solve import CaseResult, solve_case

#: Standard atmosphere [Pa] (ISO 2533: 101 325 Pa), the default site atmosphere.
P_ATM = 101325.0
#: 0 degC in kelvin (ITS-90 / SI definition of the Celsius scale).
C0 = 273.15
#: kg/s per t/h (1 t = 1000 kg, 1 h = 3600 s).
KG_S_PER_T_H = 1000.0 / 3600.0


def barg(p: float) -> float:
    """Absolute pressure [Pa] of a gauge pressure in bar (1 bar = 1e5 Pa) at the
    standard atmosphere."""
    return p * 1e5 + P_ATM


def bara(p: float) -> float:
    return p * 1e5


def degc(t: float) -> float:
    return t + C0


def t_h(m_t_h: float) -> float:
    """kg/s of a flow in t/h."""
    return m_t_h * KG_S_PER_T_H


def model(text: str, source: str = "test.toml"):
    return loads_model(text, source=source)


def solve(text: str, case: str | None = None, *, source: str = "test.toml",
          expect: str = "solved") -> CaseResult:
    """Solve ``case`` of the model in ``text`` and check its status."""
    r = solve_case(model(text, source), case)
    assert r.status == expect, r.message
    return r


def row(df: pd.DataFrame, column: str, value) -> pd.Series:
    sel = df[df[column] == value]
    assert len(sel) == 1, f"{len(sel)} rows with {column} == {value!r}"
    return sel.iloc[0]


def equip(r: CaseResult, item: str) -> pd.Series:
    return row(r.equipment, "item", item)


def header(r: CaseResult, name: str) -> pd.Series:
    return row(r.headers, "header", name)


def stream(r: CaseResult, name: str) -> pd.Series:
    return row(r.streams, "stream", name)


def kg_s(value_t_h: float) -> float:
    """kg/s of a table value in t/h."""
    return value_t_h * KG_S_PER_T_H


def j_kg(value_kj_kg: float) -> float:
    return value_kj_kg * 1e3


# ------------------------------------------------ model-file fragments (TOML text)
SITE_TEMPLATE = """
format_version = 1
[site]
name = "{name}"
makeup_temperature = "10 degC"
"""


def headers(hp="40 bar(g)", lp="4 bar(g)", hp_loss="0 kW", lp_loss="0 kW",
            hp_name="HP", lp_name="LP", site="Test bench") -> str:
    """A site with a high and a low header (the shape of the small test networks)."""
    return SITE_TEMPLATE.format(name=site) + f"""
[[header]]
name = "{hp_name}"
pressure = "{hp}"
heat_loss = "{hp_loss}"
[[header]]
name = "{lp_name}"
pressure = "{lp}"
heat_loss = "{lp_loss}"
"""


def external_water(name="FW", p="50 bar(g)", t="105 degC") -> str:
    return f"""
[[water_supply]]
name = "{name}"
source = "external"
pressure = "{p}"
temperature = "{t}"
"""


def boiler(t="400 degC", extra="", feedwater="FW", header="HP", eff="90 %") -> str:
    """Swing boiler B1 holding the high header."""
    return f"""
[[boiler]]
name = "B1"
header = "{header}"
steam_temperature = "{t}"
feedwater = "{feedwater}"
efficiency = "{eff}"
{extra}
"""


def user(name, hdr, what) -> str:
    return f"""
[[user]]
name = "{name}"
header = "{hdr}"
{what}
"""


LETDOWN_L1 = """
[[letdown]]
name = "L1"
inlet = "HP"
outlet = "LP"
"""


def turbine(what: str, name: str = "T1", eta: str = "70 %") -> str:
    """Backpressure turbine from HP to LP; ``what`` gives its mode and the rest."""
    return f"""
[[turbine]]
name = "{name}"
inlet = "HP"
outlet = "LP"
isentropic_efficiency = "{eta}"
{what}
"""


#: Boiler feedwater pumped from the deaerator.
DA_WATER = """
[[water_supply]]
name = "BFW"
source = "deaerator"
pressure = "50 bar(g)"
pump_efficiency = "70 %"
"""


def deaerator(header: str = "LP", p: str = "0.3 bar(g)", vent: str = "0.5 %") -> str:
    return f"""
[[deaerator]]
name = "DA"
header = "{header}"
pressure = "{p}"
vent_fraction = "{vent}"
"""


def plant_head(name: str, headers: str) -> str:
    """The start of a small test plant's model text: site, prices, header HP at
    40 bar(g), the other ``headers`` (TOML) and an external feedwater supply BFW
    (50 bar(g), 105 degC)."""
    return f"""
format_version = 1
[site]
name = "{name}"
makeup_temperature = "15 degC"
[prices]
fuel = "10 EUR/GJ"
[[header]]
name = "HP"
pressure = "40 bar(g)"
{headers}
[[water_supply]]
name = "BFW"
source = "external"
pressure = "50 bar(g)"
temperature = "105 degC"
"""


def hp_boiler(name: str, max_steam: str, priority: int = 1) -> str:
    """A swing boiler on HP raising steam at 400 degC from BFW, without blowdown."""
    return f"""
[[boiler]]
name = "{name}"
header = "HP"
steam_temperature = "400 degC"
feedwater = "BFW"
efficiency = "88 %"
blowdown = "0 %"
max_steam = "{max_steam}"
priority = {priority}
"""


def check_refuses(tmp_path, text: str, item: str, field: str, words: str) -> None:
    """``steamnet check`` of the model ``text`` exits 2, without a traceback, with an
    error line naming the file, ``item`` (e.g. "boiler 'B1'") and ``field`` and
    containing ``words``."""
    from click.testing import CliRunner

    from steamnet.cli import main
    path = tmp_path / "refused.toml"
    path.write_text(text, encoding="utf-8")
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    where = f"error: {path}: {item}: field '{field}'"
    assert any(ln.startswith(where) and words in ln
               for ln in result.stderr.splitlines()), result.stderr
