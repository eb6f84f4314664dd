"""Many cases: :func:`solve_cases` and the sweeps behind it, serial, in processes, or on
a dask.distributed cluster (one case: :mod:`steamnet.solve`).

Cases are cut into chunks of :data:`CHUNK` consecutive cases. Within a chunk each case
starts from the solution of the one before (warm start); each chunk starts cold. The
chunking does not depend on the number of workers, so a sweep gives bit-identical
results serially, with ``--workers N`` and on a cluster.
"""

from __future__ import annotations

from concurrent.futures import ProcessPoolExecutor
from typing import Callable, Iterable, Sequence

from ._gc import young_collections_only
from .errors import MissingDependencyError, ModelError
from .model.cases import CaseModels
from .model.model import Model
from .model.validate import validate_model
from .solve import CaseResult, StudyResult, solve_case, solve_model
from .status import CaseStatus

__all__ = ["solve_cases", "run_sweep", "solve_chunk", "CHUNK"]

#: Cases per chunk (a day of hourly cases).
CHUNK = 24


def _spec_name(spec) -> str:
    return spec if isinstance(spec, str) else spec[0]


def _solve_one(model, spec, start, tables, models: CaseModels | None = None,
               streams: bool = True):
    """Solve one spec. With ``models`` (the fast path) the case model is made by
    :class:`~steamnet.model.cases.CaseModels` and the Net from the previous case's; without, every case is
    made and built from scratch (the reference path). A case whose changes are bad is
    made again on the reference path, so that its error reads the same either way."""
    try:
        if models is not None:
            try:
                m, name = models.get(spec)
                models.validate(m, spec)
            except ModelError:
                return _solve_one(model, spec, start, tables, streams=streams)
            r = solve_model(m, name, start=start, tables=tables, streams=streams,
                            like=models.net)
            if r.solution is not None:
                models.net = r.solution.net
            return r
        if isinstance(spec, str):
            return solve_case(model, spec, start=start, tables=tables, streams=streams,
                              reference=True)
        name, changes = spec[0], spec[1]
        base = model.for_case(spec[2]) if len(spec) > 2 and spec[2] else model
        m = base.with_changes(changes, origin=f"case '{name}'")
        validate_model(m)
        return solve_model(m, name, start=start, tables=tables, streams=streams,
                           reference=True)
    except ModelError as exc:      # includes ModelErrors: a bad case, the others go on
        return CaseResult.failed(_spec_name(spec), CaseStatus.ERROR, str(exc), input_errors=[
            (e.message, e.item, e.field) for e in getattr(exc, "errors", [exc])])
    except Exception as exc:       # a fault of ours: report it on this case, go on
        return CaseResult.failed(_spec_name(spec), CaseStatus.ERROR, f"internal error: "
                      f"{type(exc).__name__}: {exc} (please report this)")


def solve_chunk(model, specs: Sequence, tables: bool = False, warm_start: bool = True,
                keep_solution: bool = True, reference: bool = False,
                streams: bool = True) -> list:
    """Solve consecutive cases, each warm-started from the one before. ``reference``
    makes and builds every case from scratch (the code path before the speed work, kept to
    check that the fast one gives the same answers)."""
    out = []
    start = None
    before = None           # the solution of the case before the last one
    models = None if reference else CaseModels(model)
    for spec in specs:
        r = _solve_one(model, spec, start if warm_start else None, tables, models,
                       streams=streams)
        if r.solution is not None and r.ok and warm_start:
            start = warm_start_from(r.solution, before)
            before = r.solution
        else:
            before = None
        out.append(r if keep_solution else r.without_solution())
    return out


def warm_start_from(last, before=None) -> dict:
    """The start of the next case of a chunk from the solution of the ``last`` one: its
    modes, the slopes its iteration found (:class:`steamnet.solver.balance.Anderson`)
    and its header enthalpies, extrapolated along the line from the case ``before``
    it when both ran in the same modes (consecutive hours move smoothly, so the line
    lands nearer the next answer than the last answer does)."""
    h = list(last.h)
    if (before is not None and before.modes == last.modes
            and len(before.h) == len(h)):
        h = [2.0 * a - b for a, b in zip(h, before.h)]
    return {"h": h, "modes": last.modes, "accel": last.accel}


_WORKER = (None, None)      # (model, per-chunk extra) of this worker process


def _init_worker(model, extra) -> None:
    global _WORKER
    _WORKER = (model, extra)


def _solve_with_extra(model, extra, specs, opts: dict, keep_solution: bool):
    """Solve a chunk (``opts``: tables, streams, warm_start, reference);
    ``extra(results)`` (when given) runs on its results while their raw solutions are
    still at hand."""
    part = solve_chunk(model, specs, **opts)
    made = extra(part) if extra is not None else None
    if not keep_solution:
        part = [r.without_solution() for r in part]
    return part, made


def _counted_chunk(model, extra, specs, opts):
    """A chunk solved away from the caller: the results without their raw solutions,
    the chunk's extra, and the property statistics of the chunk (added to the
    caller's)."""
    from . import properties as props
    before = props.stats()
    part, made = _solve_with_extra(model, extra, specs, opts, keep_solution=False)
    after = props.stats()
    return part, made, {k: after[k] - before[k] for k in after}


def _worker_chunk(specs, opts):
    return _counted_chunk(*_WORKER, specs, opts)


def _dask_chunk(model, extra, specs, opts):
    return _counted_chunk(model, extra, specs, opts)


def run_sweep(model, specs: Sequence, *, workers: int = 1, scheduler: str | None = None,
              tables: bool = True, progress: Callable[[int, int, str], None] | None = None,
              warm_start: bool = True, chunk: int = CHUNK, reference: bool = False,
              extra: Callable[[list], object] | None = None, streams: bool = True,
              keep_solutions: bool = True) -> tuple[list, list | None]:
    """Solve ``specs`` (see :func:`steamnet.solve.solve_cases`) and return the
    CaseResults in order, and the value of ``extra(results)`` for every chunk (made
    where the chunk was solved, while the raw solutions are at hand; a module-level
    function or a functools.partial of one, so that it can be sent to workers), or
    None without ``extra``. ``streams`` builds the stream table of each case (with
    ``tables``). In processes or on a cluster the raw solutions are not sent back (each
    result keeps its tables, summary and station operating points); serially they are
    kept unless ``keep_solutions`` is False. The property statistics of the workers
    are added to this process's (:func:`steamnet.properties.stats`)."""
    opts = {"tables": tables, "streams": streams, "warm_start": warm_start,
            "reference": reference}
    with young_collections_only():
        return _run_sweep(model, list(specs), workers=workers, scheduler=scheduler,
                          opts=opts, progress=progress, chunk=chunk, extra=extra,
                          keep_solutions=keep_solutions)


def _run_sweep(model, specs: list, *, workers, scheduler, opts, progress, chunk, extra,
               keep_solutions) -> tuple[list, list | None]:
    from . import properties as props
    chunks = [specs[i:i + chunk] for i in range(0, len(specs), chunk)]
    total = len(specs)
    done = 0
    results: list = []
    extras: list | None = [] if extra is not None else None

    def tick(part, made=None, stats=None):
        nonlocal done
        if stats:
            props.add_stats(stats)
        if extras is not None:
            extras.append(made)
        done += len(part)
        if progress and part:
            progress(done, total, part[-1].case)

    if scheduler:
        try:
            from distributed import Client
        except ImportError:
            raise MissingDependencyError("a dask scheduler was given but "
                                         "dask.distributed is not installed",
                                         extra="dask") from None
        client = Client(scheduler)
        try:
            m = client.scatter(model, broadcast=True)
            futures = [client.submit(_dask_chunk, m, extra, c, opts, pure=False)
                       for c in chunks]
            for f in futures:
                part, made, stats = f.result()
                results.extend(part)
                tick(part, made, stats)
        except BaseException:
            for f in locals().get("futures", []):
                f.cancel()
            raise
        finally:
            client.close()
        return results, extras
    if workers <= 1 or len(chunks) <= 1:
        for c in chunks:
            part, made = _solve_with_extra(model, extra, c, opts,
                                           keep_solution=keep_solutions)
            results.extend(part)
            tick(part, made)
        return results, extras
    ex = ProcessPoolExecutor(max_workers=workers, initializer=_init_worker,
                             initargs=(model, extra))
    try:
        futures = [ex.submit(_worker_chunk, c, opts) for c in chunks]
        for f in futures:
            part, made, stats = f.result()
            results.extend(part)
            tick(part, made, stats)
    except BaseException:
        ex.shutdown(wait=False, cancel_futures=True)
        raise
    ex.shutdown()
    return results, extras


def solve_cases(model: Model, cases: Iterable | None = None, *,
                progress: Callable[[int, int, str], None] | None = None,
                warm_start: bool = True, workers: int = 1, scheduler: str | None = None,
                tables: bool = True, reference: bool = False,
                station_checks: "bool | dict" = False) -> StudyResult:
    """Solve every case of ``model`` (or the given ones; the base model when it has no
    cases). A case that cannot balance is reported and the others still run.

    Parameters
    ----------
    cases : iterable, optional
        Case names of the model, or ``(name, changes)`` pairs (changes to the base
        model, as in :meth:`Model.with_changes`), or ``(name, changes, based_on)``.
    workers : int
        Processes to solve in; results are identical for any number [-]
    scheduler : str, optional
        Address of a dask.distributed scheduler to run the sweep on (extra ``dask``).
    tables : bool
        Build the result tables of each case (off for long sweeps) [-]
    reference : bool
        Make, build and solve every case from scratch with the reference assembly (the
        code path before the speed work), to check that the fast path gives the same
        answers [-]
    station_checks : bool or dict
        Also run the single-point station checks of every case where it is solved (in
        the workers of a parallel sweep), for :func:`steamnet.stations.run.run_checks`
        to join; True checks against ``model.stations``, a dict against the
        station data given. The report is the same as without [-]
    """
    specs = list(cases) if cases is not None else [c.name for c in model.cases]
    extra = None
    if station_checks is not False and station_checks is not None:
        from functools import partial
        from .evaluate import chunk_findings
        extra = partial(chunk_findings, model.stations if station_checks is True
                        else station_checks)
    if not specs:
        out = [solve_case(model, reference=reference)]
        blocks = None if extra is None else [extra(out)]
    else:
        out, blocks = run_sweep(model, specs, workers=workers, scheduler=scheduler,
                                tables=tables, progress=progress, warm_start=warm_start,
                                reference=reference, extra=extra)
    if blocks is None:
        return StudyResult(model, out)
    return StudyResult(model, out, [b.points for b in blocks], findings_blocks=blocks)
