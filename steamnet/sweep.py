"""Sweeps of many cases: serial, in processes, or on a dask.distributed cluster.

Cases are cut into chunks of :data:`CHUNK` consecutive cases. Within a chunk each case
starts from the solution of the one before (warm start); each chunk starts cold. The
chunking does not depend on the number of workers, so a sweep gives bit-identical
results serially, with ``--workers N`` and on a cluster.
"""

from __future__ import annotations

from concurrent.futures import ProcessPoolExecutor
from typing import Callable, Sequence

from ._gc import young_collections_only
from .errors import MissingDependencyError, ModelError

__all__ = ["run_sweep", "CHUNK"]

#: Cases per chunk (a day of hourly cases).
CHUNK = 24


def _spec_name(spec) -> str:
    return spec if isinstance(spec, str) else spec[0]


def _solve_one(model, spec, start, tables, models: "_CaseModels | None" = None,
               streams: bool = True):
    """Solve one spec. With ``models`` (the fast path) the case model is made by
    :class:`_CaseModels` and the Net from the previous case's; without, every case is
    made and built from scratch (the reference path). A case whose changes are bad is
    made again on the reference path, so that its error reads the same either way."""
    from .model.validate import validate_model
    from .solve import _empty, solve_case, solve_model
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
        return _empty(_spec_name(spec), "error", str(exc), input_errors=[
            (e.message, e.item, e.field) for e in getattr(exc, "errors", [exc])])
    except Exception as exc:       # a fault of ours: report it on this case, go on
        return _empty(_spec_name(spec), "error", f"internal error: "
                      f"{type(exc).__name__}: {exc} (please report this)")


class _CaseModels:
    """The case models of one chunk, made with as little repeated work as gives the
    same models: each ``based_on`` case is made once; the changes that can alter the
    network (modes, equipment in or out of service, anything not in
    ``steamnet.graph.GRAPH_FREE_FIELDS``) are applied once per distinct set; the value
    changes (demands, duties, make-up temperature ...) on top of that, sharing its
    network graph. ``net`` is the last Net solved, the template of the next."""

    def __init__(self, model):
        self.model = model
        self.bases: dict = {}
        self.net = None
        self._valid: set[int] = set()         # id of base models that passed validation
        self._last_base = None

    def validate(self, m, spec) -> None:
        """Validate case model ``m``: fully, unless its base passed and the case's own
        value changes are ones validation never reads (then only what they touch)."""
        from .model.validate import validate_model, validate_value_changes
        base = self._last_base
        if (isinstance(spec, str) or base is None or len(spec) < 2):
            validate_model(m)
            return
        if id(base) not in self._valid:
            validate_model(base)
            self._valid.add(id(base))
        values = self._last_values
        if not validate_value_changes(m, values):
            validate_model(m)

    def _base(self, key, make):
        try:
            m = self.bases.get(key)
        except TypeError:                     # a change value that cannot be hashed
            return make()
        if m is None:
            m = self.bases[key] = make()
            m.graph                           # built once, shared by the cases on m
        return m

    def get(self, spec):
        """(case model, case name) of ``spec``; raises ModelError for a bad one."""
        from .model.model import graph_free
        if isinstance(spec, str):
            return self._base(("case", spec), lambda: self.model.for_case(spec)), spec
        name, changes = spec[0], spec[1]
        based_on = spec[2] if len(spec) > 2 and spec[2] else None
        origin = f"case '{name}'"
        values = {k: v for k, v in changes.items() if graph_free({k: v})}
        other = {k: v for k, v in changes.items() if k not in values}
        base = self._base(("case", based_on), lambda: self.model.for_case(based_on)) \
            if based_on else self.model
        if other:
            base = self._base(("changes", based_on, tuple(other.items())),
                              lambda: base.with_changes(other, origin=origin))
        self._last_base, self._last_values = base, values
        return base.with_values(values, origin=origin), name


def solve_chunk(model, specs: Sequence, tables: bool = False, warm_start: bool = True,
                keep_solution: bool = True, reference: bool = False,
                streams: bool = True) -> list:
    """Solve consecutive cases, each warm-started from the one before. ``reference``
    makes and builds every case from scratch (the code path before the speed work, kept to
    check that the fast one gives the same answers)."""
    out = []
    start = None
    models = None if reference else _CaseModels(model)
    for spec in specs:
        r = _solve_one(model, spec, start if warm_start else None, tables, models,
                       streams=streams)
        if r.solution is not None and r.ok and warm_start:
            start = {"h": r.solution.h, "modes": r.solution.modes}
        out.append(r if keep_solution else r.without_solution())
    return out


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
