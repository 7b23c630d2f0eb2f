"""Channel reasoning: what a code buys on a channel, as exact figures, simulations, a code choice and plots.

One way through: the channel models (`bsc`, `burst`, and any other behind the `Channel` interface of `base`) give
the probabilities; `analysis` turns one code model and one channel into the `analyze` figures;
`simulate` draws the same channel through the compiled C; `recommend` searches the families with the
same figures; `figures` computes the curves a plot shows; `plot` only renders them; `study` runs the
`analyze` verb (figures, simulations, plot) for one or more specs.
"""
from __future__ import annotations

from .base import Channel
from .bsc import BSC
from .burst import GilbertElliott

KINDS = ("bsc", "burst")


def make(kind: str, flip_prob: float, burst_len: float | None = None, bad_flip: float = 0.5,
         good_flip: float = 0.0) -> Channel:
    """The channel named `kind` at long-run flip probability `flip_prob`."""
    if kind == "bsc":
        return BSC(flip_prob)
    if kind == "burst":
        if burst_len is None:
            raise ValueError("the burst channel needs a mean burst length")
        return GilbertElliott(flip_prob, burst_len, bad_flip, good_flip)
    raise ValueError(f"unknown channel {kind!r} (known: {', '.join(KINDS)})")


__all__ = ["BSC", "Channel", "GilbertElliott", "KINDS", "make"]
