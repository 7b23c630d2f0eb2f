"""Terminal output: rich tables on stdout, and progress bars on stderr that show only on a terminal.

Progress is drawn when stderr is a terminal and the CI environment variable is unset; in a pipe, a
log file or CI nothing is drawn, so captured output holds the results only.
"""
from __future__ import annotations

import os
import sys
from contextlib import contextmanager
from typing import Callable, Iterator

from rich import box
from rich.console import Console, Group, RenderableType
from rich.markup import escape
from rich.progress import (BarColumn, MofNCompleteColumn, Progress, ProgressColumn, TextColumn,
                           TimeRemainingColumn)
from rich.table import Table
from rich.text import Text

PIPE_WIDTH = 240          # a table written into a pipe or file is not folded at 80 columns


def interactive() -> bool:
    """Whether long work may draw progress: stderr is a terminal and CI is not set."""
    return sys.stderr.isatty() and not os.environ.get("CI")


def console() -> Console:
    """stdout for tables: the terminal's width on a terminal, PIPE_WIDTH elsewhere; no colour markup."""
    return Console(width=None if sys.stdout.isatty() else PIPE_WIDTH, highlight=False)


def table(columns: list[str], rows: list[list], title: str | None = None, right: tuple[str, ...] = ()
          ) -> RenderableType:
    """A plain table under an optional title line: `columns` headers, `rows` of values printed with str()
    as they are (no markup); columns named in `right` are right-aligned (numbers)."""
    t = Table(box=box.SIMPLE_HEAD, pad_edge=False)
    for c in columns:
        t.add_column(Text(c), justify="right" if c in right else "left", overflow="fold")
    for row in rows:
        t.add_row(*(Text(str(v)) for v in row))
    return Group(Text(title), t) if title else t


def render(*tables: RenderableType) -> str:
    """The tables as text for stdout, without the padding rich adds at line ends."""
    out = console()
    with out.capture() as captured:
        for t in tables:
            out.print(t)
    return "\n".join(line.rstrip() for line in captured.get().splitlines())


def show(*tables: RenderableType) -> None:
    print(render(*tables))


class _Rate(ProgressColumn):
    """Items per second, once there is a figure."""

    def render(self, task) -> Text:
        return Text(f"{task.speed:,.0f}/s" if task.speed else "", style="progress.data.speed")


@contextmanager
def progress(total: int, label: str, enabled: bool | None = None) -> Iterator[Callable[..., None]]:
    """Yields `advance(n=1, label=None)`.  On a terminal (see `interactive`) a bar with the count, the rate
    and the time left is drawn on stderr and removed at the end; otherwise `advance` does nothing."""
    if not (interactive() if enabled is None else enabled):
        yield lambda n=1, label=None: None
        return
    bar = Progress(TextColumn("{task.description}"), BarColumn(), MofNCompleteColumn(), _Rate(),
                   TextColumn("left"), TimeRemainingColumn(), console=Console(file=sys.stderr),
                   transient=True)
    task = bar.add_task(escape(label), total=total)

    def advance(n: int = 1, label: str | None = None) -> None:
        bar.update(task, advance=n, **({"description": escape(label)} if label else {}))

    with bar:
        yield advance
