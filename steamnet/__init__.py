"""steamnet: plant steam network balance and let-down desuperheater checks.

Public API::

    import steamnet
    model = steamnet.load_model("cases/orlewick.toml")
    study = steamnet.solve_cases(model)          # every case of the model
    study.summary, study.headers, study.equipment, study.streams, study.water
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
    "ModelErrors", "PropertyRangeError",
]
