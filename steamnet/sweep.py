"""Sweeps of many cases: serial, in processes, or on a dask.distributed cluster.

Cases are cut into chunks of :data:`CHUNK` consecutive cases. Within a chunk each case
starts from the solution of the one before (warm start); each chunk starts cold. The
chunking does not depend on the number of workers, so a sweep gives bit-identical
results serially, with ``--workers N`` and on a cluster.
"""

from __future__ import annotations

from concurrent.futures import ProcessPoolExecutor
from typing import Callable, Sequence

from .errors import ModelError, ModelErrors

__all__ = ["run_sweep", "CHUNK"]

#: Cases per chunk (a day of hourly cases).
CHUNK = 24


def _spec_name(spec) -> str:
    return spec if isinstance(spec, str) else spec[0]


def _solve_one(model, spec, start, tables):
    from .model.validate import validate_model
    from .solve import _empty, solve_case, solve_model
    try:
        if isinstance(spec, str):
            return solve_case(model, spec, start=start, tables=tables)
        name, changes = spec[0], spec[1]
        base = model.for_case(spec[2]) if len(spec) > 2 and spec[2] else model
        m = base.with_changes(changes, origin=f"case '{name}'")
        validate_model(m)
        return solve_model(m, name, start=start, tables=tables)
    except ModelError as exc:      # includes ModelErrors: a bad case, the others go on
        return _empty(_spec_name(spec), "error", str(exc))
    except Exception as exc:       # a fault of ours: report it on this case, go on
        return _empty(_spec_name(spec), "error", f"internal error: "
                      f"{type(exc).__name__}: {exc} (please report this)")


def solve_chunk(model, specs: Sequence, tables: bool = False, warm_start: bool = True,
                keep_solution: bool = True) -> list:
    """Solve consecutive cases, each warm-started from the one before."""
    out = []
    start = None
    for spec in specs:
        r = _solve_one(model, spec, start if warm_start else None, tables)
        if r.solution is not None and r.ok and warm_start:
            start = {"h": r.solution.h, "modes": r.solution.modes}
        out.append(r if keep_solution else r.without_solution())
    return out


_WORKER_MODEL = None


def _init_worker(model) -> None:
    global _WORKER_MODEL
    _WORKER_MODEL = model


def _worker_chunk(specs, tables, warm_start):
    return solve_chunk(_WORKER_MODEL, specs, tables, warm_start, keep_solution=False)


def _dask_chunk(model, specs, tables, warm_start):
    return solve_chunk(model, specs, tables, warm_start, keep_solution=False)


def run_sweep(model, specs: Sequence, *, workers: int = 1, scheduler: str | None = None,
              tables: bool = True, progress: Callable[[int, int, str], None] | None = None,
              warm_start: bool = True, chunk: int = CHUNK) -> list:
    """Solve ``specs`` (see :func:`steamnet.solve.solve_cases`) and return the
    CaseResults in order. In processes or on a cluster the raw solutions are not sent
    back (each result keeps its tables, summary and station operating points)."""
    specs = list(specs)
    chunks = [specs[i:i + chunk] for i in range(0, len(specs), chunk)]
    total = len(specs)
    done = 0
    results: list = []

    def tick(part):
        nonlocal done
        done += len(part)
        if progress and part:
            progress(done, total, part[-1].case)

    if scheduler:
        try:
            from distributed import Client
        except ImportError:
            raise ModelError("a dask scheduler was given but dask.distributed is not "
                             "installed: pip install 'steamnet[dask]'") from None
        client = Client(scheduler)
        try:
            m = client.scatter(model, broadcast=True)
            futures = [client.submit(_dask_chunk, m, c, tables, warm_start, pure=False)
                       for c in chunks]
            for f in futures:
                part = f.result()
                results.extend(part)
                tick(part)
        except BaseException:
            for f in locals().get("futures", []):
                f.cancel()
            raise
        finally:
            client.close()
        return results
    if workers <= 1 or len(chunks) <= 1:
        for c in chunks:
            part = solve_chunk(model, c, tables, warm_start)
            results.extend(part)
            tick(part)
        return results
    ex = ProcessPoolExecutor(max_workers=workers, initializer=_init_worker,
                             initargs=(model,))
    try:
        futures = [ex.submit(_worker_chunk, c, tables, warm_start) for c in chunks]
        for f in futures:
            part = f.result()
            results.extend(part)
            tick(part)
    except BaseException:
        ex.shutdown(wait=False, cancel_futures=True)
        raise
    ex.shutdown()
    return results
