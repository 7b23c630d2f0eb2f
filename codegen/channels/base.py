"""The interface every channel model gives to analysis, simulation and recommend, and the statistics
they share.

A channel flips bits of a stream; `flip_prob` is its long-run average flip probability.  A code sees
it through units (bits, or symbols of m bits): a unit is in error when any of its bits is flipped.
"""
from __future__ import annotations

import math
from abc import ABC, abstractmethod
from statistics import NormalDist

import numpy as np


class Channel(ABC):
    kind: str

    def __init__(self, flip_prob: float):
        if not 0.0 < flip_prob < 0.5:
            raise ValueError(f"flip probability must be in (0, 0.5) (got {flip_prob})")
        self.flip_prob = flip_prob

    @abstractmethod
    def at(self, flip_prob: float) -> "Channel":
        """The same kind of channel, every other parameter kept, at another average flip probability."""

    def flip_bounds(self) -> tuple[float, float]:
        """The open interval of average flip probabilities this channel's other parameters allow."""
        return 0.0, 0.5

    @abstractmethod
    def unit_error(self, unit_bits: int) -> float:
        """Chance that one unit of `unit_bits` consecutive bits holds at least one flip."""

    @abstractmethod
    def units_failure(self, n: int, unit_bits: int, t: int) -> float:
        """P(more than t of n consecutive units of `unit_bits` bits are in error): the exact failure of a
        bounded-distance decoder correcting t units."""

    def interleaved_failure(self, unit_bits: int, byte_units: list[int], t: int, depth: int,
                            exact: bool = True) -> dict:
        """Failures of a frame of `depth` codewords interleaved byte by byte (byte j of codeword i is frame
        byte j * depth + i).  `byte_units[j]`: units of `unit_bits` bits that byte j of a codeword holds
        (its first bits; the rest are padding).  Returns codeword_failure (one codeword, exact),
        frame_failure (exact when frame_exact, else the union bound) and frame_failure_bounds
        [worst codeword, union bound].  Here: independent codewords, which a memoryless channel gives."""
        one = self.units_failure(sum(byte_units), unit_bits, t)
        frame = -math.expm1(depth * math.log1p(-one)) if one < 1.0 else 1.0
        return {"codeword_failure": one, "frame_failure": frame, "frame_exact": True,
                "frame_failure_bounds": [one, min(1.0, depth * one)]}

    @abstractmethod
    def flip_positions(self, rng: np.random.Generator, bits: int) -> np.ndarray:
        """One random draw of the channel over `bits` consecutive bits: the indices of the flipped ones."""

    def params(self) -> dict:
        """What names this channel in the JSON (besides flip_prob)."""
        return {"channel": self.kind}


Z95 = NormalDist().inv_cdf(0.975)


def wilson_interval(failures: int, trials: int, z: float = Z95) -> tuple[float, float]:
    """Wilson score interval for a binomial proportion (95 % by default)."""
    if trials <= 0:
        return (0.0, 1.0)
    phat = failures / trials
    denom = 1.0 + z * z / trials
    centre = (phat + z * z / (2 * trials)) / denom
    half = z * math.sqrt(phat * (1 - phat) / trials + z * z / (4 * trials * trials)) / denom
    lo = 0.0 if failures == 0 else max(0.0, centre - half)
    hi = 1.0 if failures == trials else min(1.0, centre + half)
    return (lo, hi)
