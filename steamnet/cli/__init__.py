"""The ``steamnet`` command.

Exit codes: 0 every case balances and no check fails; 1 a case is infeasible, did not
converge or could not be computed, or a check fails; 2 bad input (the message names the
file, the item and the field) or an optional package missing for what was asked (the
message gives the pip command that installs it); 3 an output file could not be written;
4 an internal error (please report it; ``--debug`` shows the traceback); 130
interrupted (Ctrl-C), 143 ended by SIGTERM, 129 by SIGHUP (nothing half-written is kept
in any of these).
"""

from __future__ import annotations

import sys
import traceback

import click

from .._version import __version__
from ..errors import (InternalError, MissingDependencyError, ModelError,
                      SteamnetError)
from ..io.atomic import remove_own_temps
from ..io.signals import termination_as_interrupt
from ..io.textsafe import escape_controls

EXIT_OK, EXIT_FAIL, EXIT_INPUT, EXIT_OUTPUT, EXIT_INTERNAL, EXIT_INTERRUPT = 0, 1, 2, 3, 4, 130

#: Python's cyclic garbage collector in a command's process: its youngest generation
#: collected after this many allocations (Python's default is 700), the older ones as
#: by default. A command makes many short-lived objects (property states, table rows)
#: and few cycles, and a report spends 8 % of its time in collections at the default
#: (docs/performance.md); memory is freed as before by reference counting.
GC_THRESHOLD = (50_000, 10, 10)


class _Group(click.Group):
    """Turns every error into a one-line message and an exit code, never a traceback."""

    def invoke(self, ctx):
        import gc
        gc.set_threshold(*GC_THRESHOLD)
        debug = bool(ctx.params.get("debug"))
        try:
            with termination_as_interrupt():
                return super().invoke(ctx)
        except ModelError as exc:
            click.echo(_error_text(exc), err=True)
            ctx.exit(EXIT_INPUT)
        except MissingDependencyError as exc:      # the message says what to install
            click.echo(f"error: {exc}", err=True)
            ctx.exit(EXIT_INPUT)
        except InternalError as exc:
            _internal(exc, debug)
            ctx.exit(EXIT_INTERNAL)
        except BrokenPipeError:          # output piped into `head` and closed
            sys.stderr.close()
            ctx.exit(EXIT_OK)
        except KeyboardInterrupt as exc:
            remove_own_temps()
            click.echo(getattr(exc, "text", "interrupted: nothing half-written was kept"),
                       err=True)
            ctx.exit(getattr(exc, "code", EXIT_INTERRUPT))
        except SteamnetError as exc:
            from ..io.atomic import OutputError
            click.echo(f"error: {escape_controls(str(exc))}", err=True)
            ctx.exit(EXIT_OUTPUT if isinstance(exc, OutputError) else EXIT_FAIL)
        except (click.exceptions.Exit, click.exceptions.Abort, click.ClickException):
            raise
        except Exception as exc:  # pragma: no cover - defensive
            _internal(exc, debug)
            ctx.exit(EXIT_INTERNAL)


def _internal(exc: Exception, debug: bool) -> None:
    """The one-line report of a fault of steamnet (with the traceback under --debug)."""
    if debug:
        traceback.print_exc()
    click.echo(f"internal error: {type(exc).__name__}: {escape_controls(str(exc))} "
               "(please report this; run with --debug for details)", err=True)


def _error_text(exc: ModelError) -> str:
    errors = getattr(exc, "errors", [exc])
    lines = [f"error: {escape_controls(_with_line(e))}" for e in errors[:50]]
    if len(errors) > 50:
        lines.append(f"... and {len(errors) - 50} more")
    return "\n".join(lines)


def _with_line(e: ModelError) -> str:
    """The message and the line of the model file where its item starts ("...; the item
    starts on line N"), when the file and the item are found."""
    text = str(e)
    if not e.file or not e.item or "line " in e.message:
        return text
    line = _item_line(str(e.file), e.item)
    return text if line is None else f"{text}; the item starts on line {line}"


_TEXTS: dict[str, str | None] = {}


def _item_line(path: str, item: str) -> int | None:
    from ..model.lines import item_line
    from ..model.schema import ITEM_LABELS
    if path not in _TEXTS:
        try:
            from ..io.readfile import read_input
            _TEXTS[path] = read_input(path, "model file").decode("utf-8")
        except (OSError, SteamnetError, UnicodeDecodeError, ValueError):
            _TEXTS[path] = None
    text = _TEXTS[path]
    return item_line(text, item, ITEM_LABELS) if text else None


def parallel_options(f):
    """--workers and --scheduler, for the commands that solve many cases as a sweep."""
    f = click.option("--scheduler", metavar="ADDRESS", help="Run on a dask.distributed "
                     "scheduler at ADDRESS (extra 'dask').")(f)
    return click.option("--workers", type=click.IntRange(1, 256), default=1,
                        show_default=True,
                        help="Solve in this many processes (identical results).")(f)


@click.group(cls=_Group, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, "--version", prog_name="steamnet")
@click.option("--debug", is_flag=True, hidden=True, help="Show tracebacks of internal "
              "errors.")
def main(debug: bool) -> None:
    """steamnet: plant steam and spray-water balance, let-down station checks and an
    Excel workbook of results.

    Start with `steamnet solve cases/orlewick.toml`; see README.md and docs/.
    """


from . import commands  # noqa: E402,F401  (registers the subcommands)
from . import studies  # noqa: E402,F401  (study subcommands)
from . import report  # noqa: E402,F401  (the results workbook)
from . import stations  # noqa: E402,F401  (the station checks)
from . import compare  # noqa: E402,F401  (case differences)
from . import optimise  # noqa: E402,F401  (the cheapest dispatch)

__all__ = ["main", "EXIT_OK", "EXIT_FAIL", "EXIT_INPUT", "EXIT_OUTPUT", "EXIT_INTERNAL"]


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
