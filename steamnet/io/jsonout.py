"""JSON export of every result (layout in docs/results.md, section "JSON export")."""

from __future__ import annotations

import json
import math
import re
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import pandas as pd

from .._version import FORMAT_VERSION, __version__
from ..units import T_H
from .atomic import write_atomic

__all__ = ["study_to_dict", "write_json", "JSON_LAYOUT_VERSION"]

#: Version of the JSON layout written here.
JSON_LAYOUT_VERSION = 2


#: Verdict and status words, as the console and the workbook write them (docs/results.md:
#: "not assessed", never "not_assessed").
_WORDS = {"not_assessed": "not assessed", "not_applicable": "not applicable",
          "not_converged": "not converged", "not_run": "not run"}
#: Keys whose values are verdict or status words.
_WORD_KEY = re.compile(r"(^|_)(status|verdict|severity|worst)(_|$)")


def _clean(v):
    if isinstance(v, dict):
        return {str(k): (_WORDS.get(x, x) if isinstance(x, str) and _WORD_KEY.search(
            str(k)) else _clean(x)) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_clean(x) for x in v]
    if isinstance(v, (np.bool_, bool)):
        return bool(v)
    if isinstance(v, (np.integer,)):
        return int(v)
    if isinstance(v, (float, np.floating)):
        f = float(v)
        return f if math.isfinite(f) else None
    if isinstance(v, pd.DataFrame):
        return [_clean(r) for r in v.to_dict(orient="records")]
    return v


def study_to_dict(study, extra: dict | None = None) -> dict:
    """Everything of a :class:`~steamnet.solve.StudyResult` as plain JSON types."""
    m = study.model
    doc = {
        "layout_version": JSON_LAYOUT_VERSION,
        "program": {"name": "steamnet", "version": __version__},
        "written_utc": datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "model": {"file": m.source, "sha256": m.sha256, "format_version": FORMAT_VERSION,
                  "plant": m.site.name},
        "cases": [],
    }
    for c in study.cases:
        doc["cases"].append({
            "case": c.case, "status": c.status, "message": c.message,
            "findings": c.findings, "summary": c.summary,
            "headers": c.headers, "equipment": c.equipment, "streams": c.streams,
            "water_t_h": {k.replace("_kg_s", "_t_h"): v * T_H for k, v in c.water.items()
                          if k.endswith("_kg_s")},
        })
    if extra:
        doc.update(extra)
    return _clean(doc)


def write_json(study, path: str | Path, extra: dict | None = None) -> None:
    """Write the JSON export atomically (the previous file survives a failure)."""
    doc = study_to_dict(study, extra)
    text = json.dumps(doc, indent=1, allow_nan=False)

    def writer(tmp: Path) -> None:
        tmp.write_text(text, encoding="utf-8")
    write_atomic(path, writer, suffix=".json")
