"""Parallel sweeps give the same answers as serial ones (docs/performance.md,
"Parallel sweeps")."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import steamnet
from steamnet.model.schema import SI
from conftest import DEMO


def _specs(n):
    # 50 synthetic hours: demand and make-up temperature vary (invented test inputs)
    return [(f"h{i:03d}", {"user.PM1 dryer section.demand": SI((30 + 4 * np.sin(i / 5)) / 3.6),
                           "site.makeup_temperature": SI(278.15 + i * 0.1)},
             "winter")
            for i in range(n)]


@pytest.fixture(scope="module")
def model():
    return steamnet.load_model(DEMO)


def _frame(study):
    return study.summary.drop(columns=["solve_ms"])


def test_workers_identical_to_serial(model):
    specs = _specs(50)
    serial = steamnet.solve_cases(model, specs, tables=False)
    par = steamnet.solve_cases(model, specs, tables=False, workers=2)
    assert serial.all_solved
    pd.testing.assert_frame_equal(_frame(serial), _frame(par), check_exact=True)
    assert [len(c.points) for c in par.cases] == [len(c.points) for c in serial.cases]
    assert par.cases[7].points == serial.cases[7].points


def test_bad_case_does_not_stop_the_sweep(model):
    specs = _specs(3)
    specs.insert(1, ("bad", {"user.No such user.demand": "1 t/h"}))
    st = steamnet.solve_cases(model, specs, tables=False)
    assert [c.status for c in st.cases] == ["solved", "error", "solved", "solved"]
    assert "No such user" in st.cases[1].message


def test_dask_local_cluster_on_loopback(model):
    distributed = pytest.importorskip("distributed")
    specs = _specs(30)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        on_dask = steamnet.solve_cases(model, specs, tables=False,
                                       scheduler=cluster.scheduler_address,
                                       station_checks=True)
    serial = steamnet.solve_cases(model, specs, tables=False)
    pd.testing.assert_frame_equal(_frame(serial), _frame(on_dask), check_exact=True)
    # the station checks made on the cluster's workers join into the serial report
    from steamnet.stations.run import run_checks
    assert len(on_dask.point_checks) == 2                   # chunks of 24
    a, b = run_checks(serial), run_checks(on_dask)
    for attr in ("checks", "envelopes", "gains"):
        pd.testing.assert_frame_equal(getattr(a, attr), getattr(b, attr))


def test_value_only_cases_are_still_validated(model):
    """Cases that change only demands and the make-up temperature skip the full
    cross-item validation; what those values can break is still checked: make-up water
    above saturation at the deaerator (IAPWS-IF97 saturation, 0.4 bar(g): about 109 degC)
    and a negative demand are errors of their own case only."""
    specs = _specs(4)
    specs[1] = ("hot", {**specs[1][1], "site.makeup_temperature": SI(273.15 + 150)},
                "winter")
    specs[2] = ("neg", {**specs[2][1], "user.PM1 dryer section.demand": "-3 t/h"},
                "winter")
    st = steamnet.solve_cases(model, specs, tables=False)
    assert [c.status for c in st.cases] == ["solved", "error", "error", "solved"]
    assert "make-up" in st.cases[1].message and "negative" in st.cases[2].message
