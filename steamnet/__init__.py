"""steamnet: plant steam network balance and let-down desuperheater checks.

Public API::

    import steamnet
    model = steamnet.load_model("cases/orlewick.toml")
    study = steamnet.solve_cases(model)          # every case of the model
    study.summary, study.headers, study.equipment, study.streams, study.water
    best = steamnet.optimise(model)              # the cheapest dispatch of each case
    best.table, best.dispatch, best.binding, best.shadow, best.evaluation

The names above are imported where they are first used (``import steamnet`` itself
loads no numerical library; see docs/performance.md, start-up).
"""

from importlib import import_module

from ._version import FORMAT_VERSION, __version__
from .errors import ModelError, ModelErrors, PropertyRangeError, SteamnetError

__all__ = [
    "__version__", "FORMAT_VERSION", "load_model", "loads_model", "Model", "solve_case",
    "solve_cases", "CaseResult", "StudyResult", "SteamnetError", "ModelError",
    "ModelErrors", "PropertyRangeError", "optimise",
]

#: Public names kept in submodules, imported on first use: name -> module.
_LAZY = {
    "load_model": ".model.load", "loads_model": ".model.load", "Model": ".model.model",
    "solve_case": ".solve", "CaseResult": ".solve", "StudyResult": ".solve",
    "solve_cases": ".sweep",
}


def __getattr__(name: str):
    if name in _LAZY:
        value = getattr(import_module(_LAZY[name], __name__), name)
        globals()[name] = value         # later look-ups skip this function
        return value
    raise AttributeError(f"module 'steamnet' has no attribute '{name}'")


def __dir__():
    return sorted(set(globals()) | set(__all__))



def optimise(model, cases=None, **options):
    """The cheapest dispatch of every case of ``model`` within every limit
    (:func:`steamnet.studies.optimise.optimise`, docs/howto-optimise.md)."""
    from .studies.optimise import optimise as _optimise
    return _optimise(model, cases, **options)
