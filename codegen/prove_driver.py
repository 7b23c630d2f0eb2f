"""The C side of `bitmend prove`: a driver compiled beside the module that runs one shard of patterns.

A `Job` holds everything a worker needs for one module: the emitted C, the driver rendered from
templates/prove_driver.c.j2, the error units and the codewords.  `run_shard(job, weight, first, count)`
is the task the cluster runs: it builds (or loads from the cache) the module with its driver under the
harness's strict flags and returns the four counts, the first failing ranks and the seconds spent.

Pattern ranks are those of the driver's header comment: combination rank * V^w + value index, the
combinations of w units in colexicographic order, V = 2^unit_bits - 1 values per unit.
"""
from __future__ import annotations

import hashlib
import math
import time
from dataclasses import dataclass, field

import numpy as np

from . import __version__, emit, harness
from .codes.base import CodeModel

CODEWORDS = 3               # the all-zero word and two fixed random codewords
CODEWORD_SEED = 0xB17E      # seed of the random codewords' data
MAX_WEIGHT = 16             # errors per pattern the driver holds
MAX_FAILED = 8              # failing ranks reported per shard
GUARD = 32                  # guard bytes between the driver's frames (a multiple of 8)
RANK_BITS = 63              # C(n, w) * w * V^w must stay below 2^63: the driver's ranks are uint64_t
CLASSES = ("corrected", "detected", "miscorrected", "wrong")


def shard_decl(name: str) -> str:
    return (f"int {name}_prove_shard(const uint8_t *words, uint32_t n_words, uint32_t data_len, "
            "uint32_t parity_len, const uint32_t *units, uint32_t n_units, uint32_t unit_bits, "
            "uint32_t weight, uint64_t first, uint64_t count, uint8_t *scratch, size_t scratch_len, "
            "uint64_t *counts, uint64_t *failed, uint32_t max_failed)")


def scratch_bytes(n_words: int, length: int) -> int:
    """The driver's scratch for n_words codewords of `length` bytes (its layout: guard, then for each
    codeword its frame padded to whole 64-bit words (two at least), a guard, its padded copy and a guard;
    two padded differences)."""
    span = max(16, -(-length // 8) * 8)
    return GUARD + n_words * 2 * (span + GUARD) + 2 * span


def driver_source(model: CodeModel) -> str:
    spec = model.spec
    return emit.environment().get_template("prove_driver.c.j2").render(
        name=spec.name, NAME=spec.name.upper(), version=__version__, spec_file=spec.source_name,
        shard_decl=shard_decl(spec.name), max_weight=MAX_WEIGHT, guard=GUARD)


@dataclass(frozen=True)
class Job:
    """One module at one data_len: what every shard of its proof needs (picklable, sent to the workers)."""

    name: str
    files: dict = field(hash=False)      # <name>.h, <name>.c and the driver <name>_prove.c
    data_len: int
    parity_len: int
    units: tuple                         # bit offset of each error unit in data || parity
    unit_bits: int
    words: bytes                         # CODEWORDS frames, each data || parity
    key: str                             # hash of all of the above: names the job in a state file

    @property
    def values(self) -> int:
        """Non-zero error values per unit."""
        return (1 << self.unit_bits) - 1

    def patterns(self, weight: int) -> int:
        return math.comb(len(self.units), weight) * self.values ** weight

    def rank_ok(self, weight: int) -> bool:
        """The driver's 64-bit arithmetic covers every rank of this weight."""
        return weight <= MAX_WEIGHT and self.patterns(weight) * weight < 1 << RANK_BITS

    def build(self) -> harness.Module:
        return harness.build(self.name, self.files, extra_cdef=shard_decl(self.name) + ";")

    def pattern(self, weight: int, rank: int) -> list[tuple[int, int]]:
        """(unit index, value) of each error of the pattern of this rank (the driver's order)."""
        vpow = self.values ** weight
        comb, vi = divmod(rank, vpow)
        pos, c = [], len(self.units)
        for i in range(weight, 0, -1):
            c -= 1
            while math.comb(c, i) > comb:
                c -= 1
            pos.append(c)
            comb -= math.comb(c, i)
        pos.reverse()
        return [(p, vi // self.values ** i % self.values + 1) for i, p in enumerate(pos)]

    def describe(self, weight: int, rank: int) -> str:
        """The pattern in a firmware engineer's words: 'data bit 17, parity bit 3' or 'data byte 4 ^ 0x1c'."""
        parts = []
        for unit, value in self.pattern(weight, rank):
            off = self.units[unit]
            where, at = ("data", off) if off < 8 * self.data_len else ("parity", off - 8 * self.data_len)
            parts.append(f"{where} bit {at}" if self.unit_bits == 1 else f"{where} byte {at // 8} ^ {value:#04x}")
        return ", ".join(parts)


def make_job(model: CodeModel, data_len: int) -> Job:
    """Render the module and its driver, compile them here (the workers then find them in the cache) and
    encode the codewords with the C: the all-zero data block and CODEWORDS - 1 random ones."""
    name = model.spec.name
    files = dict(emit.render(model))
    files[f"{name}_prove.c"] = driver_source(model)
    plen = model.parity_len(data_len)
    units = tuple(model.error_units(data_len))
    module = harness.build(name, files, extra_cdef=shard_decl(name) + ";")
    rng = np.random.default_rng(CODEWORD_SEED)
    datas = [bytes(data_len)] + [rng.integers(0, 256, data_len, dtype=np.uint8).tobytes()
                                 for _ in range(CODEWORDS - 1)]
    words = b""
    for data in datas:
        rc, parity = module.encode(data, plen)
        if rc != 0:
            raise RuntimeError(f"{name}_encode returned {rc} for data_len {data_len}")
        words += data + parity
    key = hashlib.sha256("\0".join([*(f"{k}\0{v}" for k, v in sorted(files.items())), str(data_len),
                                    str(units), words.hex()]).encode()).hexdigest()[:24]
    return Job(name, files, data_len, plen, units, model.properties.unit_bits, words, key)


class _Runner:
    """The compiled driver and its buffers for one job, kept per process."""

    def __init__(self, job: Job):
        module = job.build()
        ffi = module.ffi
        self.job, self.fn, self.ffi = job, module.fn("prove_shard"), ffi
        self.words = ffi.new("uint8_t[]", job.words)
        self.units = ffi.new("uint32_t[]", list(job.units))
        self.scratch_len = scratch_bytes(CODEWORDS, job.data_len + job.parity_len)
        self.scratch = ffi.new("uint8_t[]", self.scratch_len)
        self.counts = ffi.new("uint64_t[4]")
        self.failed = ffi.new("uint64_t[]", MAX_FAILED)

    def run(self, weight: int, first: int, count: int) -> tuple[tuple[int, ...], tuple[int, ...]]:
        job = self.job
        rc = self.fn(self.words, CODEWORDS, job.data_len, job.parity_len, self.units, len(job.units),
                     job.unit_bits, weight, first, count, self.scratch, self.scratch_len, self.counts,
                     self.failed, MAX_FAILED)
        if rc != 0:
            raise RuntimeError(f"{job.name}_prove_shard refused weight {weight} ranks {first}+{count}")
        counts = tuple(int(c) for c in self.counts)
        return counts, tuple(int(self.failed[i]) for i in range(min(counts[3], MAX_FAILED)))


_runners: dict[str, _Runner] = {}


def runner(job: Job) -> _Runner:
    if job.key not in _runners:
        _runners[job.key] = _Runner(job)
    return _runners[job.key]


def run_shard(job: Job, weight: int, first: int, count: int) -> tuple[tuple, tuple, float]:
    """The cluster's task: (counts by CLASSES, first failing ranks, seconds)."""
    r = runner(job)
    t0 = time.perf_counter()
    counts, failed = r.run(weight, first, count)
    return counts, failed, time.perf_counter() - t0
