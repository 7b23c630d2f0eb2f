"""Monte Carlo check of the channel maths: random channel trials through the compiled generated C.

Each trial encodes random data with the C, draws the channel (bitmend.channels.base.Channel.flip_positions)
over the transmitted bits (the code's bits only: the zero padding of the byte packing carries nothing and
is not sent), flips them, decodes
with the C and counts a failure when decode returns a negative value or returns data other than what
was encoded.  The trials run in chunks of fixed size with one seed each (numpy SeedSequence.spawn), so the
counts depend on the seed only, not on how many worker processes ran them.  Each worker builds (or loads
from the on-disk cache) the compiled module itself.
"""
from __future__ import annotations

import multiprocessing
import os
from dataclasses import dataclass

import numpy as np

from .. import terminal
from ..codes import build
from ..spec import Spec
from .base import Channel, wilson_interval

CHUNK = 250                 # trials per task


@dataclass
class Result:
    trials: int
    failures: int           # decode < 0, or wrong data returned
    detected: int           # decode < 0
    undetected: int         # decode >= 0 with wrong data

    @property
    def rate(self) -> float:
        return self.failures / self.trials if self.trials else 0.0

    @property
    def ci95(self) -> tuple[float, float]:
        return wilson_interval(self.failures, self.trials)

    def as_dict(self) -> dict:
        lo, hi = self.ci95
        return {"simulated_failure": self.rate, "ci95": [lo, hi], "simulated_trials": self.trials,
                "simulated_failures": self.failures, "simulated_detected": self.detected,
                "simulated_undetected": self.undetected}


def channel_positions(model) -> np.ndarray:
    """Bit offsets in data || parity that the channel carries, for the full data length."""
    if getattr(model, "depth", 1) > 1:         # an interleaved frame: every bit is sent, padding too
        n = model.properties.data_bytes
        return np.arange(8 * (n + model.parity_len(n)), dtype=np.int64)
    ub = model.properties.unit_bits
    units = np.asarray(model.error_units(model.properties.data_bytes), dtype=np.int64)
    return (units[:, None] + np.arange(ub, dtype=np.int64)[None, :]).ravel()


def _run_chunk(task) -> tuple[int, int, int]:
    spec, ch, seed_seq, count = task
    from .. import verify            # worker side: build or load the cached module here
    model = build(spec)
    module = verify.module_for(model)
    rng = np.random.default_rng(seed_seq)
    n = model.properties.data_bytes
    plen = model.parity_len(n)
    positions = channel_positions(model)
    detected = undetected = 0
    for _ in range(count):
        data = rng.integers(0, 256, n, dtype=np.uint8).tobytes()
        rc, parity = module.encode(data, plen)
        if rc != 0:
            raise RuntimeError(f"{spec.name}_encode returned {rc}")
        hit = ch.flip_positions(rng, len(positions))
        frame = np.frombuffer(data + parity, dtype=np.uint8).copy()
        if len(hit):
            pos = positions[hit]
            np.bitwise_xor.at(frame, pos // 8, (0x80 >> (pos % 8)).astype(np.uint8))
        raw = frame.tobytes()
        rc, got, _ = module.decode(raw[:n], raw[n:])
        if rc < 0:
            detected += 1
        elif got != data:
            undetected += 1
    return count, detected, undetected


def run(spec: Spec, ch: Channel, trials: int, seed: int = 1, workers: int | None = None,
        progress: bool | None = None, label: str = "") -> Result:
    """`trials` random trials of the spec's compiled C on channel `ch`."""
    if trials < 1:
        raise ValueError("trials must be at least 1")
    sizes = [CHUNK] * (trials // CHUNK) + ([trials % CHUNK] if trials % CHUNK else [])
    seeds = np.random.SeedSequence([seed, 0x5EED]).spawn(len(sizes))
    tasks = [(spec, ch, s, c) for s, c in zip(seeds, sizes)]
    workers = workers or min(os.cpu_count() or 1, len(tasks))
    # compile (or load) once here first, so the workers find the module in the cache
    from .. import verify
    verify.module_for(build(spec))
    done = det = und = 0
    if workers <= 1 or len(tasks) == 1:
        results = map(_run_chunk, tasks)
        pool = None
    else:
        pool = multiprocessing.get_context().Pool(workers)
        results = pool.imap_unordered(_run_chunk, tasks)
    try:
        with terminal.progress(trials, f"simulating {label or spec.name}", progress) as advance:
            for count, d, u in results:
                done += count
                det += d
                und += u
                advance(count)
    except BaseException:
        if pool is not None:
            pool.terminate()          # our own workers only; the remaining chunks are not wanted
        raise
    finally:
        if pool is not None:
            pool.close()
            pool.join()
    return Result(trials=done, failures=det + und, detected=det, undetected=und)
