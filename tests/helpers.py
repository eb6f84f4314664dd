"""Small helpers shared by the balance tests: build a model from TOML text, solve it,
pick rows out of the result tables, and the unit definitions the tests convert with."""

from __future__ import annotations

import pandas as pd

from steamnet.model.model import loads_model
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
