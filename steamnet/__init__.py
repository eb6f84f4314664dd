"""steamnet: plant steam network balance and let-down desuperheater checks.

Public API::

    import steamnet
    model = steamnet.load_model("cases/orlewick.toml")
    study = steamnet.solve_cases(model)          # every case of the model
    study.summary, study.headers, study.equipment, study.streams, study.water
    best = steamnet.optimise(model)              # the cheapest dispatch of each case
    best.table, best.dispatch, best.binding, best.shadow, best.evaluation
"""

from ._version import FORMAT_VERSION, __version__
from .errors import ModelError, ModelErrors, PropertyRangeError, SteamnetError
from .model.load import load_model, loads_model
from .model.model import Model
from .solve import CaseResult, StudyResult, solve_case
from .sweep import solve_cases

__all__ = [
    "__version__", "FORMAT_VERSION", "load_model", "loads_model", "Model", "solve_case",
    "solve_cases", "CaseResult", "StudyResult", "SteamnetError", "ModelError",
    "ModelErrors", "PropertyRangeError", "optimise",
]


def optimise(model, cases=None, **options):
    """The cheapest dispatch of every case of ``model`` within every limit
    (:func:`steamnet.studies.optimise.optimise`, docs/howto-optimise.md)."""
    from .studies.optimise import optimise as _optimise
    return _optimise(model, cases, **options)
