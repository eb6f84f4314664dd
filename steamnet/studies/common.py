"""Pieces every study uses: which cases, quantities from the caller, an added user,
solving with a warm start, and reporting progress."""

from __future__ import annotations

from typing import Callable, Iterable, Iterator

from ..errors import ModelError, ModelErrors
from ..model.model import Model
from ..model.schema import EQUIPMENT_TABLES, NAME_RE, SI
from ..model.validate import user_errors
from ..solve import CaseResult, solve_case
from ..units import Kind, parse_quantity
from ..model.cases import CaseSet, model_case_set
from ..status import CaseStatus

__all__ = ["Progress", "resolve_cases", "quantity", "condensate", "header_list",
           "with_user", "solve", "warm", "solved_cases", "free_name", "tick", "OPTIONS"]

#: progress(done, total, label), called after each unit of work.
Progress = Callable[[int, int, str], None]


def resolve_cases(model: Model, cases: CaseSet | Iterable[str] | str | None) -> CaseSet:
    """A :class:`CaseSet` from None (every case of the model file, or the base model
    when it has none), case names of the model file, or a CaseSet (from a case table)."""
    if isinstance(cases, CaseSet):
        return cases
    if isinstance(cases, str):
        cases = [cases]
    return model_case_set(model, list(cases) if cases is not None else None)


def quantity(value, kind: Kind, model: Model, what: str) -> float:
    """A caller's quantity in SI: text with its unit (``"12 t/h"``) or a number already
    in SI. Errors name ``what`` (e.g. ``"option --demand"``)."""
    if value is None:
        return None
    if isinstance(value, str):
        try:
            return parse_quantity(value, kind, p_atm=model.site.atmospheric_pressure,
                                  currency=model.site.currency)
        except ModelError as exc:
            raise ModelError(exc.message, item=what) from None
    try:
        return float(value)
    except (TypeError, ValueError):
        raise ModelError(f"expected a quantity such as '12 t/h', got {value!r}",
                         item=what) from None


def condensate(model: Model, condensate_return, condensate_temperature,
               options: dict | None = None) -> tuple[float, float | None]:
    """The condensate return [-] and temperature [K] of an added user, checked; errors
    name the options of ``options`` (field -> label, default :data:`OPTIONS`)."""
    opt = {**OPTIONS, **(options or {})}
    ret = quantity(condensate_return, Kind.FRACTION, model, opt["condensate_return"])
    t_ret = quantity(condensate_temperature, Kind.TEMPERATURE, model,
                     opt["condensate_temperature"])
    if not 0 <= ret <= 1:
        raise ModelError("the condensate return must lie in 0 to 100 %",
                         item=opt["condensate_return"])
    if ret > 0 and t_ret is None:
        raise ModelError("a condensate return above zero needs its temperature",
                         item=opt["condensate_temperature"])
    return ret, t_ret


def header_list(model: Model, headers: Iterable[str] | None) -> list[str]:
    """The named headers (all when None or empty), each checked to exist."""
    hdrs = list(headers) if headers else list(model.headers)
    for h in hdrs:
        if h not in model.headers:
            raise ModelError(f"header '{h}' does not exist (headers: "
                             f"{', '.join(model.headers)})", item="option --header")
    return hdrs


def free_name(model: Model, wanted: str) -> str:
    """``wanted``, or ``wanted (2)``, ... so that no item of any table has the name."""
    used = {n for t in EQUIPMENT_TABLES for n in model.raw.get(t, {})}
    name, k = wanted, 2
    while name in used:
        name, k = f"{wanted} ({k})", k + 1
    return name


def with_user(model: Model, header: str, *, demand: float | None = None,
              duty: float | None = None, condensate_return: float = 0.0,
              condensate_temperature: float | None = None,
              name: str = "added demand", origin: str = "added user",
              options: dict | None = None) -> Model:
    """``model`` with one more steam user (SI values), made with
    :meth:`Model.with_item`; the model file is not touched. The user gets the checks
    of a user of the model file; their errors name the options of ``options`` (field
    -> label, default :data:`OPTIONS`)."""
    if header not in model.headers:
        raise ModelError(f"header '{header}' does not exist (headers: "
                         f"{', '.join(model.headers)})", file=model.source, item=origin,
                         field="header")
    if not NAME_RE.match(name):
        raise ModelError(f"name {name!r} is not allowed: use 1-64 letters, digits, "
                         "spaces and - _ / + ( ) # &, no dots", item=origin, field="name")
    data = {"name": name, "header": header,
            "condensate_return": SI(condensate_return)}
    if demand is not None:
        data["demand"] = SI(demand)
    if duty is not None:
        data["duty"] = SI(duty)
    if condensate_temperature is not None:
        data["condensate_temperature"] = SI(condensate_temperature)
    m = model.with_item("user", data, origin=origin)
    # the checks a user of the model file gets, named by the option that gave the value
    problems = user_errors(m, name)
    if problems:
        opt = {**OPTIONS, **(options or {})}
        raise ModelErrors([ModelError(msg, item=opt.get(field, origin))
                           for field, msg in problems])
    return m


#: The command-line option that gives each field of an added user, as errors name it.
OPTIONS = {"header": "option --header", "demand": "option --demand",
           "duty": "option --duty", "condensate_return": "option --return",
           "condensate_temperature": "option --return-temperature"}


def solve(model: Model, start: dict | None = None, *, probe: bool = False,
          tables: bool = True) -> CaseResult:
    """One balance of ``model`` as it stands (already validated), without the stream
    table; ``start`` is a warm start from :func:`warm`. A ``probe`` of a search (it
    only needs to know whether the case balances, and which header ends it) leaves out
    the imbalance under the control sequences and the result tables (its findings are
    read from the solution); without ``tables`` only the result tables are left out
    (a study that reads the summary, the water balance and the solution)."""
    return solve_case(model, start=start, streams=False, tables=tables and not probe,
                      sequence_shortfall=not probe)


def warm(result: CaseResult) -> dict | None:
    """Warm start (header enthalpies and operating modes) from a solved case."""
    sol = result.solution
    if sol is None or result.status not in (CaseStatus.SOLVED, CaseStatus.INFEASIBLE):
        return None
    return {"h": list(sol.h), "modes": list(sol.modes)}


def solved_cases(cs: CaseSet, solved: dict | None = None
                 ) -> Iterator[tuple[str, Model, CaseResult]]:
    """(name, validated model, its balance) for every case of the set, in order; a case
    already balanced (``solved``: name -> CaseResult with its solution, as a report
    has them) is not solved again."""
    for name in cs:
        m = cs.build(name)
        known = (solved or {}).get(name)
        yield name, m, known if known is not None and known.solution is not None \
            else solve(m)


def tick(progress: Progress | None, done: int, total: int, label: str) -> None:
    if progress is not None:
        progress(done, total, label)
