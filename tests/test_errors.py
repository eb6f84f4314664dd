"""The error hierarchy (steamnet/errors.py; an internal mismatch of the station checks is
tested in test_station_checks.py) and how the command line maps each error to
its exit code (steamnet/cli/__init__.py: 2 bad input or a missing optional package, 4 an
internal error)."""

from __future__ import annotations

import subprocess
import sys

import pytest
from click.testing import CliRunner

import steamnet
from conftest import DEMO, ROOT
from steamnet import errors
from steamnet.cli import EXIT_INPUT, EXIT_INTERNAL, main


def test_item_property_error_is_a_property_range_error_of_the_package():
    assert issubclass(errors.ItemPropertyError, errors.PropertyRangeError)
    assert issubclass(errors.ItemPropertyError, errors.SteamnetError)
    # the old import paths name the same class
    from steamnet.solver import balance, network
    assert network.ItemPropertyError is errors.ItemPropertyError
    assert balance.ItemPropertyError is errors.ItemPropertyError
    exc = errors.ItemPropertyError("letdown 'PRV-1'", errors.PropertyRangeError("too hot"))
    assert str(exc) == "letdown 'PRV-1': too hot" and exc.item == "letdown 'PRV-1'"


def test_missing_dependency_and_internal_errors_are_not_input_errors():
    for cls in (errors.MissingDependencyError, errors.InternalError):
        assert issubclass(cls, errors.SteamnetError)
        assert not issubclass(cls, errors.ModelError)


def test_a_scheduler_without_dask_names_the_extra_to_install(monkeypatch):
    monkeypatch.setitem(sys.modules, "distributed", None)      # import fails
    model = steamnet.load_model(DEMO)
    with pytest.raises(errors.MissingDependencyError) as info:
        steamnet.solve_cases(model, scheduler="tcp://127.0.0.1:1")
    assert info.value.extra == "dask"
    assert "pip install 'steamnet[dask]'" in str(info.value)


def test_cli_without_dask_exits_2_with_the_pip_command():
    code = ("import sys; sys.modules['distributed'] = None\n"
            "from steamnet.cli import main\n"
            f"main(['solve', {str(DEMO)!r}, '--scheduler', 'tcp://127.0.0.1:1'])\n")
    r = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True,
                       text=True)
    assert r.returncode == EXIT_INPUT, r.stderr
    assert "pip install 'steamnet[dask]'" in r.stderr and "Traceback" not in r.stderr


def test_cli_maps_an_internal_error_to_exit_4_asking_for_a_report(monkeypatch):
    def fault(*args, **kwargs):              # fault injection: the mapping is tested
        raise errors.InternalError("two parts disagree")
    monkeypatch.setattr("steamnet.sweep.solve_cases", fault)   # imported on use
    r = CliRunner().invoke(main, ["solve", str(DEMO)])
    assert r.exit_code == EXIT_INTERNAL
    assert "internal error" in r.output and "please report" in r.output
    assert "two parts disagree" in r.output and "Traceback" not in r.output
