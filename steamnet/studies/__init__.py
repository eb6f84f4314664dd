"""Studies on top of the balance: case tables and hourly profiles, trip screening, a new
consumer, headroom per header and the marginal cost of steam.

Each study is a function returning a pandas DataFrame whose columns carry their unit
(``flow_t_h``, ``cost_per_h``, ``marginal_cost_per_t``); docs/studies.md lists them.

>>> from steamnet import load_model
>>> from steamnet.studies import header_headroom
>>> model = load_model("cases/orlewick.toml")
>>> table = header_headroom(model, "winter")
>>> sorted(table["header"])             # one row per header of the model
['HP', 'LLP', 'LP', 'MP']
>>> table[["header", "headroom_t_h"]]   # doctest: +ELLIPSIS
  header  headroom_t_h
0 ...

Results support engineering studies; they do not replace design by a licensed
engineer, the equipment maker's data, or the codes in force at the site.
"""

from ..io.casetable import read_case_table
from ..model.cases import BASE, CaseSet, CaseSpec, model_case_set
from .consumer import new_consumer_impact
from .headroom import header_headroom
from .marginal import marginal_steam_cost
from .runcases import CaseSetResult, case_results, solve_case_set
from .trips import trip_screening

__all__ = ["BASE", "CaseSet", "CaseSpec", "CaseSetResult", "model_case_set",
           "read_case_table", "solve_case_set", "case_results", "trip_screening",
           "new_consumer_impact", "header_headroom", "marginal_steam_cost"]
