"""The Gilbert-Elliott burst channel: bit flips that come in runs, as radio fades and failing flash word
lines make them.

A two-state Markov chain runs along the bit stream, one step per bit.  In the good state a bit flips with
probability `good_flip` (default 0), in the bad state with `bad_flip` (default 0.5).  The chain leaves the
bad state with probability r = 1 / `burst_len` per bit (so a bad run lasts `burst_len` bits on average) and
enters it with the probability q that makes the long-run flip probability F = pi_bad * bad_flip +
(1 - pi_bad) * good_flip, where pi_bad = q / (q + r).  A block starts in the stationary distribution.  With
burst_len = 1 / (1 - pi_bad) both rows of the transition matrix equal the stationary distribution and the
channel is the memoryless BSC(F).

Exact figures come from a forward recursion over (state, error count): a stretch of the stream is a
`Span`, the 2 x 2 matrix (from the state at its first bit to the state after its last) of error-count
generating polynomials, kept up to degree t, plus the mass beyond t.  Every entry is a sum of
non-negative products, so a failure of 1e-40 is computed as such and never as 1 - (something near 1).
Spans compose (A then B) and a repeated span is raised to a power by squaring, so a codeword of 10^5 bits
costs a few dozen compositions.  A unit of m bits (an RS symbol) counts once when any of its bits flips.
"""
from __future__ import annotations

import itertools
import math

import numpy as np

from . import bsc
from .base import Channel

STATE_LIMIT = 1_000_000      # largest joint recursion (frame of interleaved codewords) computed exactly


class Span:
    """Error counts over a stretch of the stream: poly[s, u, c] = P(c errors, state u after | state s at
    the start) for c <= top; tail[s, u] = the same for more than top errors."""

    def __init__(self, poly: np.ndarray, tail: np.ndarray):
        self.poly = poly
        self.tail = tail

    @property
    def top(self) -> int:
        return self.poly.shape[2] - 1

    def mass(self) -> np.ndarray:
        return self.poly.sum(axis=2) + self.tail

    def then(self, b: "Span") -> "Span":
        """This stretch followed by stretch b."""
        top = self.top
        poly = np.zeros_like(self.poly)
        # beyond[v, u, a]: P(b adds more than top - a errors), a sum of non-negative terms
        rev = np.cumsum(b.poly[:, :, ::-1], axis=2)[:, :, ::-1]          # rev[..., c] = sum_{c' >= c}
        beyond = np.concatenate([rev[:, :, 1:], np.zeros(rev.shape[:2] + (1,))], axis=2)[:, :, ::-1]
        beyond = beyond + b.tail[:, :, None]
        tail = self.tail @ b.mass()
        for s in range(2):
            for u in range(2):
                for v in range(2):
                    poly[s, u] += np.convolve(self.poly[s, v], b.poly[v, u])[: top + 1]
                    tail[s, u] += float(self.poly[s, v] @ beyond[v, u])
        return Span(poly, tail)

    def power(self, count: int) -> "Span":
        """This stretch repeated `count` >= 1 times."""
        out, base = None, self
        while count:
            if count & 1:
                out = base if out is None else out.then(base)
            count >>= 1
            if count:
                base = base.then(base)
        return out


class GilbertElliott(Channel):
    kind = "burst"

    def __init__(self, flip_prob: float, burst_len: float, bad_flip: float = 0.5, good_flip: float = 0.0):
        super().__init__(flip_prob)
        if not burst_len >= 1.0:
            raise ValueError(f"burst length must be at least 1 bit (got {burst_len})")
        if not 0.0 <= good_flip < flip_prob < bad_flip <= 1.0:
            raise ValueError(f"need good_flip < flip probability < bad_flip (got {good_flip:g}, "
                             f"{flip_prob:g}, {bad_flip:g})")
        self.burst_len, self.bad_flip, self.good_flip = burst_len, bad_flip, good_flip
        self.pi_bad = (flip_prob - good_flip) / (bad_flip - good_flip)
        self.leave = 1.0 / burst_len
        self.enter = self.leave * self.pi_bad / (1.0 - self.pi_bad)
        if self.enter > 1.0:
            raise ValueError(f"flip probability {flip_prob:g} needs bad runs longer than {burst_len:g} bits "
                             f"(at most {self.flip_limit(burst_len, bad_flip, good_flip):.3g} at this length)")
        self.P = np.array([[1.0 - self.enter, self.enter], [self.leave, 1.0 - self.leave]])
        self.pi = np.array([1.0 - self.pi_bad, self.pi_bad])
        self.flips = np.array([good_flip, bad_flip])

    @staticmethod
    def flip_limit(burst_len: float, bad_flip: float, good_flip: float) -> float:
        """Largest average flip probability a chain with this bad-run length can have (enter = 1)."""
        return good_flip + (bad_flip - good_flip) * burst_len / (burst_len + 1.0)

    def flip_bounds(self) -> tuple[float, float]:
        return self.good_flip, min(0.5, self.flip_limit(self.burst_len, self.bad_flip, self.good_flip))

    def at(self, flip_prob: float) -> "GilbertElliott":
        return GilbertElliott(flip_prob, self.burst_len, self.bad_flip, self.good_flip)

    def params(self) -> dict:
        return {"channel": self.kind, "burst_len": self.burst_len, "bad_flip": self.bad_flip,
                "good_flip": self.good_flip}

    # -- spans ------------------------------------------------------------------------------------------
    def skip(self, bits: int, top: int) -> Span:
        """`bits` bits whose flips count for nothing."""
        poly = np.zeros((2, 2, top + 1))
        poly[:, :, 0] = np.linalg.matrix_power(self.P, bits)
        return Span(poly, np.zeros((2, 2)))

    def unit(self, unit_bits: int, top: int, counted_bits: int | None = None) -> Span:
        """One unit: its first `counted_bits` (default all) bits count as one error when any flips; the
        rest of its `unit_bits` are skipped.  For unit_bits = 1 this is one bit."""
        counted = unit_bits if counted_bits is None else counted_bits
        clean_step = np.diag(1.0 - self.flips) @ self.P
        hit_step = np.diag(self.flips) @ self.P
        clean, hit = np.eye(2), np.zeros((2, 2))
        for _ in range(counted):
            clean, hit = clean @ clean_step, hit @ self.P + clean @ hit_step
        rest = np.linalg.matrix_power(self.P, unit_bits - counted)
        poly = np.zeros((2, 2, top + 1))
        poly[:, :, 0] = clean @ rest
        tail = np.zeros((2, 2))
        if top >= 1:
            poly[:, :, 1] = hit @ rest
        else:
            tail = hit @ rest
        return Span(poly, tail)

    def _failure(self, span: Span) -> float:
        return float(self.pi @ span.tail @ np.ones(2))

    # -- the interface ------------------------------------------------------------------------------------
    def unit_error(self, unit_bits: int) -> float:
        return self._failure(self.unit(unit_bits, 0))

    def units_failure(self, n: int, unit_bits: int, t: int) -> float:
        if t >= n:
            return 0.0
        return self._failure(self.unit(unit_bits, t).power(n))

    def byte_span(self, unit_bits: int, units: int, top: int) -> Span:
        """One codeword byte holding `units` units of `unit_bits` bits, then its padding bits."""
        span = self.unit(unit_bits, top).power(units)
        pad = 8 - units * unit_bits
        return span.then(self.skip(pad, top)) if pad else span

    def interleaved_failure(self, unit_bits: int, byte_units: list[int], t: int, depth: int,
                            exact: bool = True) -> dict:
        """Codeword failure exact: the chain seen on one codeword (its bytes, each followed by the
        depth - 1 bytes of the other codewords, skipped) is again a Markov chain, composed span by span.
        Frame failure exact by a forward recursion over the channel state and every codeword's error count
        while that takes at most STATE_LIMIT states (and `exact`), else the union bound, with the worst
        codeword below."""
        gap = self.skip(8 * (depth - 1), t)
        kinds = {u: self.byte_span(unit_bits, u, t) for u in set(byte_units)}
        span = None
        for u, run in itertools.groupby(byte_units):
            # each byte then the other codewords' bytes; a skip after the last one changes no error count
            step = kinds[u].then(gap).power(len(list(run)))
            span = step if span is None else span.then(step)
        one = self._failure(span)
        union = min(1.0, depth * one)
        out = {"codeword_failure": one, "frame_failure": union, "frame_exact": False,
               "frame_failure_bounds": [one, union]}
        if exact and 2 * (t + 1) ** depth <= STATE_LIMIT:
            out["frame_failure"] = self._frame_failure([kinds[u] for u in byte_units], t, depth)
            out["frame_exact"] = True
        return out

    def _frame_failure(self, byte_spans: list[Span], t: int, depth: int) -> float:
        """Forward recursion over the frame, byte by byte: w[s, c_0, ..., c_{depth-1}] is the chance of
        channel state s before the byte and c_i errors so far in codeword i (none above t); the mass that
        would exceed t in any codeword is moved to `failed` as it arises (non-negative sums only)."""
        w = np.zeros((2,) + (t + 1,) * depth)
        w[(0,) + (0,) * depth] = self.pi[0]
        w[(1,) + (0,) * depth] = self.pi[1]
        failed = 0.0
        for j, span in enumerate(byte_spans):
            for i in range(depth):
                new = np.zeros_like(w)
                for s in range(2):
                    ws = w[s]
                    total = ws.sum()
                    if total == 0.0:
                        continue
                    for u in range(2):
                        failed += span.tail[s, u] * total
                        for d in range(min(span.top, t) + 1):
                            c = span.poly[s, u, d]
                            if c == 0.0:
                                continue
                            src = [slice(None)] * depth
                            dst = [slice(None)] * depth
                            src[i], dst[i] = slice(0, t + 1 - d), slice(d, t + 1)
                            new[u][tuple(dst)] += c * ws[tuple(src)]
                            if d:
                                src[i] = slice(t + 1 - d, t + 1)
                                failed += c * ws[tuple(src)].sum()
                w = new
        return min(1.0, failed)

    def flip_positions(self, rng: np.random.Generator, bits: int) -> np.ndarray:
        states = np.empty(bits, dtype=np.int8)
        state = int(rng.random() < self.pi_bad)
        i = 0
        while i < bits:
            # a run of the current state: geometric length (leaving with `leave` or `enter` per bit)
            run = int(rng.geometric(self.leave if state else self.enter))
            states[i:i + run] = state
            i += run
            state ^= 1
        return np.flatnonzero(rng.random(bits) < self.flips[states])
