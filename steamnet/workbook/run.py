"""What one workbook is made from: the solved study plus the optional tables of the
station checks and of the studies, with the lookups every sheet needs."""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import pandas as pd

from ..stations.rows import CHECK_COLUMNS
from . import style

__all__ = ["Run", "LARGE_RUN", "CHECK_COLUMNS", "POINT_KEYS"]

#: Above this many cases the workbook is laid out for a long run: the case overview has
#: one row per case instead of one column, and per-case bar charts are left out.
LARGE_RUN = 60



#: The columns of a let-down station's row of the equipment table kept per case.
POINT_KEYS = ["item", "from", "to", "mode", "flow_t_h", "spray_t_h", "steam_out_t_h",
               "t_out_degc", "t_set_degc", "setpoint_reachable", "load_percent", "limit"]


@dataclass
class Run:
    study: object                                   # steamnet.solve.StudyResult
    checks: pd.DataFrame | None = None
    envelopes: pd.DataFrame | None = None
    studies: dict[str, pd.DataFrame] = field(default_factory=dict)
    network_case: str | None = None
    gains: pd.DataFrame | None = None    # steamnet.stations.run.StationReport.gains

    def __post_init__(self):
        if self.checks is not None:
            missing = [c for c in ("case", "station", "check", "status")
                       if c not in self.checks.columns]
            if missing:
                raise ValueError(f"checks table lacks column(s) {', '.join(missing)} "
                                 f"(expected {', '.join(CHECK_COLUMNS)})")
            if not len(self.checks):
                self.checks = None
        self.studies = {k: v for k, v in (self.studies or {}).items() if v is not None}

    # ------------------------------------------------------------- the model
    @property
    def model(self):
        return self.study.model

    @property
    def cases(self):
        return self.study.cases

    @property
    def currency(self) -> str:
        return self.model.site.currency

    @property
    def large(self) -> bool:
        return len(self.cases) > LARGE_RUN

    @cached_property
    def status_of(self) -> dict[str, str]:
        return {c.case: c.status for c in self.cases}

    @cached_property
    def case_order(self) -> dict[str, int]:
        return {c.case: i for i, c in enumerate(self.cases)}

    @cached_property
    def stations(self) -> list[str]:
        """Let-down stations in model order (then any station only the checks name)."""
        names = list(self.model.table("letdown"))
        if self.checks is not None:
            for s in pd.unique(self.checks["station"].astype(str)):
                if s not in names:
                    names.append(s)
        return names

    @cached_property
    def boilers(self) -> list[str]:
        return list(self.model.table("boiler"))

    @cached_property
    def letdown_points(self) -> dict[str, list[tuple[str, dict]]]:
        """station -> [(case, its row of the equipment table)] in case order."""
        out: dict[str, list[tuple[str, dict]]] = {s: [] for s in self.stations}
        for c in self.cases:
            eq = c.equipment
            if not len(eq):
                continue
            sel = eq[eq["type"] == "letdown"].reindex(columns=POINT_KEYS)
            for values in sel.to_numpy(dtype=object).tolist():
                r = dict(zip(POINT_KEYS, values))
                out.setdefault(str(r["item"]), []).append((c.case, r))
        return out

    # ------------------------------------------------------------- checks
    @cached_property
    def check_names(self) -> list[str]:
        if self.checks is None:
            return []
        return [str(c) for c in pd.unique(self.checks["check"].astype(str))]

    @cached_property
    def check_units(self) -> dict[str, str]:
        """The unit of each check (the most common one written for it)."""
        if self.checks is None or "unit" not in self.checks:
            return {}
        units = {}
        for name, grp in self.checks.groupby(self.checks["check"].astype(str), sort=False):
            u = grp["unit"].dropna().astype(str)
            u = u[u != ""]
            units[name] = str(u.mode().iloc[0]) if len(u) else ""
        return units

    @cached_property
    def checks_by_point(self) -> dict[tuple[str, str], dict[str, tuple]]:
        """(case, station) -> check -> (value, limit, status)."""
        out: dict[tuple[str, str], dict[str, tuple]] = {}
        if self.checks is None:
            return out
        df = self.checks
        val = df["value"] if "value" in df else pd.Series([None] * len(df))
        lim = df["limit"] if "limit" in df else pd.Series([None] * len(df))
        for case, st, chk, v, li, status in zip(df["case"].astype(str),
                                                 df["station"].astype(str),
                                                 df["check"].astype(str), val, lim,
                                                 df["status"]):
            out.setdefault((case, st), {})[chk] = (v, li, status)
        return out

    def worst_verdict(self, case: str, station: str) -> str | None:
        pts = self.checks_by_point.get((case, station))
        return style.worst(s for _, _, s in pts.values()) if pts else None

    # ------------------------------------------------------------- findings
    @cached_property
    def findings(self) -> list[dict]:
        from .findings import build_findings
        return build_findings(self)

    @cached_property
    def finding_counts(self) -> dict[str, dict[str, int]]:
        """case -> severity -> number of findings."""
        out: dict[str, dict[str, int]] = {}
        for f in self.findings:
            d = out.setdefault(f["case"], {})
            d[f["severity"]] = d.get(f["severity"], 0) + 1
        return out
