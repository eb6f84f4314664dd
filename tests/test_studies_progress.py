"""The progress bar of long studies: drawn on a terminal only, never for a handful of
steps, never with --quiet, and its line removed when closed."""

from __future__ import annotations

import io

from steamnet.studies.progress import ProgressBar


class Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def drive(bar: ProgressBar, total: int) -> None:
    with bar:
        for i in range(total):
            bar(i + 1, total, f"case {i}")


def test_draws_on_a_terminal_for_many_steps():
    out = Terminal()
    drive(ProgressBar("solving", stream=out), 40)
    text = out.getvalue()
    assert "solving" in text and "/40 " in text


def test_silent_when_quiet_not_a_terminal_or_few_steps():
    for bar, total in ((ProgressBar("x", quiet=True, stream=Terminal()), 40),
                       (ProgressBar("x", stream=io.StringIO()), 40),
                       (ProgressBar("x", stream=Terminal()), 5)):
        drive(bar, total)
        assert bar.stream.getvalue() == ""


def test_growing_total_and_close_on_interrupt():
    out = Terminal()
    bar = ProgressBar("trips", stream=out)
    try:
        with bar:
            bar(1, 10, "a")
            bar(2, 30, "b")           # the total grows as trips are found
            assert bar.bar.total == 30
            raise KeyboardInterrupt
    except KeyboardInterrupt:
        pass
    assert bar.bar is None            # closed: the line is cleared, not left half-drawn
