"""Terminal output through rich: one console per stream, our table style, stage and batch
progress, and the wording of design values (magnitude, unit, sense, governing case).

Only the CLI uses this module. On a terminal, rich fits tables to the window and shows the
progress live on stderr; anywhere else (a pipe, a file, a test, CI) the text is plain: no
ANSI codes, no live display, and a width so large that no table row is ever wrapped.
"""

from __future__ import annotations

import math
import os
import sys
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import TextIO

from rich import box
from rich.console import Console
from rich.table import Table

__all__ = ["make_console", "table", "stages", "batch_progress", "force_text", "sense", "governs"]

#: Width of plain-text output: wide enough for any table row, so that none is wrapped.
PLAIN_WIDTH = 10_000


class _Console(Console):
    def on_broken_pipe(self) -> None:
        """The reader went away (``| head``): stop writing, and let the CLI decide (it is
        not an error there) instead of rich's SystemExit(1)."""
        self.quiet = True
        try:  # later writes and the flush at exit go to /dev/null, not to the closed pipe
            os.dup2(os.open(os.devnull, os.O_WRONLY), self.file.fileno())
        except (AttributeError, OSError, ValueError):  # not a real file (e.g. StringIO)
            pass
        raise BrokenPipeError


def make_console(stream: TextIO | None = None) -> Console:
    """A console on ``stream`` (default: the current sys.stdout). Colour, live displays and
    the window width only when the stream is a terminal; plain text otherwise. Markup and
    highlighting are off: our text holds brackets ("[chord]") and numbers that must print as
    they are."""
    stream = sys.stdout if stream is None else stream
    tty = _isatty(stream)
    return _Console(file=stream, force_terminal=tty, color_system="auto" if tty else None,
                   width=None if tty else PLAIN_WIDTH, markup=False, highlight=False, emoji=False,
                   soft_wrap=not tty, force_interactive=tty)


def _isatty(stream) -> bool:
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError):  # a closed or unusual stream
        return False


def table(console: Console, *columns: str | tuple[str, str], title: str | None = None,
          fit: bool | None = None) -> Table:
    """A table in our plain style: a rule under the headers, no frame. ``columns`` are
    headers, or (header, "right") for right-aligned numbers. Cells wrap to fit the width
    on a terminal (or with ``fit``); otherwise no cell wraps."""
    fit = console.is_terminal if fit is None else fit
    t = Table(box=box.SIMPLE_HEAD, show_edge=False, pad_edge=False, title=title, title_justify="left",
              header_style="bold" if console.is_terminal else None, title_style=None)
    for column in columns:
        header, justify = column if isinstance(column, tuple) else (column, "left")
        # On a terminal a long name folds onto a second line rather than being cut short.
        t.add_column(header, justify=justify, no_wrap=not fit, overflow="fold")
    return t


@contextmanager
def stages(console: Console, enabled: bool) -> Iterator[Callable[[str], None]]:
    """A callable for ``analyze(progress=...)``: each stage is printed with the elapsed time
    when it starts, under a live spinner naming the current stage. Nothing at all unless
    ``enabled`` and the console is a terminal."""
    if not (enabled and console.is_terminal):
        yield lambda stage: None
        return
    start = time.perf_counter()
    with console.status("starting", spinner="line") as status:
        def show(stage: str) -> None:
            console.print(f"[{time.perf_counter() - start:6.1f} s] {stage}")
            status.update(stage)

        yield show


@contextmanager
def batch_progress(console: Console, total: int, enabled: bool) -> Iterator[Callable[[object], None]]:
    """A callable for ``run_batch(on_done=...)``: a bar of finished runs out of ``total``
    with the elapsed time, live on a terminal only."""
    if not (enabled and console.is_terminal):
        yield lambda outcome: None
        return
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

    with Progress(TextColumn("runs"), BarColumn(), MofNCompleteColumn(), TimeElapsedColumn(), console=console,
                  transient=True) as bar:
        task = bar.add_task("runs", total=total)
        yield lambda outcome: bar.advance(task)


# Design values in words ---------------------------------------------------------------

def force_text(value: float, unit: str) -> str:
    """A magnitude with its unit: ``11.00 kip`` (the sign is said separately)."""
    return f"{abs(value):.2f} {unit}"


def sense(governing: dict, tension: dict | None, compression: dict | None) -> str:
    """"tension", "compression", or "tension or compression" where the largest tension and
    compression are equal (a seismic case reverses, so it governs both ways)."""
    value = governing["value"]
    if tension and compression and math.isclose(tension["value"], -compression["value"], rel_tol=1e-6) \
            and math.isclose(abs(value), tension["value"], rel_tol=1e-6):
        return "tension or compression"
    return "tension" if value > 0 else "compression" if value < 0 else "no force"


def governs(governing: dict) -> str:
    """The assumption and case of a design value: ``semirigid W-y``."""
    return f"{governing['assumption']} {governing['case']}"
