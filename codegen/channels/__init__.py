"""Channel reasoning: what a code buys on a channel, as exact figures, simulations, a code choice and plots.

One way through: the channel models (`bsc`, and any other behind the `Channel` interface of `base`) give
the probabilities; `analysis` turns one code model and one channel into the `analyze` figures;
`simulate` draws the same channel through the compiled C; `recommend` searches the families with the
same figures; `figures` computes the curves a plot shows; `plot` only renders them; `study` runs the
`analyze` verb (figures, simulations, plot) for one or more specs.
"""
from __future__ import annotations

from .base import Channel
from .bsc import BSC

KINDS = ("bsc",)


def make(kind: str, flip_prob: float) -> Channel:
    """The channel named `kind` at long-run flip probability `flip_prob`."""
    if kind == "bsc":
        return BSC(flip_prob)
    raise ValueError(f"unknown channel {kind!r} (known: {', '.join(KINDS)})")


__all__ = ["BSC", "Channel", "KINDS", "make"]
