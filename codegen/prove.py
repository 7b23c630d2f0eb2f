"""`bitmend prove`: every error pattern of weight 1..W through the exact C, on a Dask cluster.

For each profile: a Job (prove_driver.py) at one data_len, a calibration of the driver's rate per weight
on this machine, a plan of shards of about SHARD_SECONDS each, then the shards on the cluster
(cluster.py), each finished shard appended to the --state file, and a Certificate of the counts.
A count of patterns above TOO_MANY (or beyond the driver's 64-bit ranks) is refused with what it would
cost.  Exit status of the verb: 0 when no pattern was decoded wrongly, 1 otherwise, 2 for bad input.
"""
from __future__ import annotations

import json
import os
import subprocess
import time
from dataclasses import dataclass, field
from pathlib import Path

from . import __version__, cluster, harness, terminal
from .codes import build
from .prove_driver import CLASSES, CODEWORD_SEED, CODEWORDS, MAX_WEIGHT, Job, make_job, run_shard, runner
from .spec import Spec

SHARD_SECONDS = 1.0          # work per shard on one core
CALIBRATE_SECONDS = 0.05     # driver time per weight spent measuring its rate here
TOO_MANY = 10 ** 12          # more patterns of one weight than this are refused, with their cost
SHOWN_FAILURES = 8           # failing patterns listed in a certificate


class ProveError(ValueError):
    """Bad input for a proof: an option value, a state file of another proof, a count too large."""


@dataclass
class Certificate:
    """What one profile's proof established (issue 11: every field of the certificate)."""

    job: Job
    spec: Spec
    t: int
    max_weight: int
    compiler: str
    flags: str
    workers: int
    scheduler: str
    weights: list = field(default_factory=list)      # dicts: weight, patterns and the four CLASSES
    failures: list = field(default_factory=list)     # (weight, rank) of the first wrong patterns
    elapsed: float = 0.0
    core_seconds: float = 0.0                          # driver time of the shards run by this invocation
    patterns_run: int = 0                              # patterns run by this invocation (not from --state)
    resumed_shards: int = 0

    @property
    def complete(self) -> bool:
        return all(sum(w[c] for c in CLASSES) == w["patterns"] for w in self.weights)

    @property
    def wrong(self) -> int:
        return sum(w["wrong"] for w in self.weights)

    @property
    def unit(self) -> str:
        if self.job.unit_bits == 1:
            return "bits"
        return f"{self.job.unit_bits}-bit symbols, every one of the {self.job.values} non-zero error values"

    def as_dict(self) -> dict:
        rate = self.patterns_run / self.core_seconds if self.core_seconds else None
        return {
            "spec_file": self.spec.source_name, "spec_sha256": self.spec.sha256, "bitmend": __version__,
            "name": self.spec.name, "family": self.spec.family, "profile": self.spec.profile,
            "compiler": self.compiler, "flags": self.flags, "t": self.t, "max_weight": self.max_weight,
            "units": self.unit, "error_units": len(self.job.units), "data_len": self.job.data_len,
            "codewords": self.codewords(), "elapsed_s": round(self.elapsed, 3), "workers": self.workers,
            "scheduler": self.scheduler, "patterns_per_second_per_core": round(rate) if rate else None,
            "resumed_shards": self.resumed_shards, "weights": self.weights,
            "wrong_patterns": [{"weight": w, "rank": r, "errors": self.job.describe(w, r)}
                               for w, r in self.failures],
            "complete": self.complete,
        }

    def codewords(self) -> list[dict]:
        size = self.job.data_len + self.job.parity_len
        out = []
        for i in range(CODEWORDS):
            word = self.job.words[i * size:(i + 1) * size]
            kind = "all-zero data" if i == 0 else f"random data (numpy seed {CODEWORD_SEED:#x}, draw {i})"
            out.append({"kind": kind, "data": word[:self.job.data_len].hex(),
                        "parity": word[self.job.data_len:].hex()})
        return out

    def table(self) -> str:
        d = self.as_dict()
        rate = d["patterns_per_second_per_core"]
        lines = [f"{d['name']} ({d['family']}, profile {d['profile']}): every error pattern of weight "
                 f"1..{self.max_weight} over {d['error_units']} {self.unit} (t = {self.t}), "
                 f"data_len {d['data_len']}",
                 f"  spec       {d['spec_file']}  sha256 {d['spec_sha256']}",
                 f"  bitmend    {d['bitmend']}",
                 f"  compiler   {d['compiler']}  {d['flags']}",
                 f"  codewords  {CODEWORDS}: all-zero data and {CODEWORDS - 1} of random data "
                 f"(seed {CODEWORD_SEED:#x}); each pattern runs on every one",
                 f"  workers    {d['workers']} ({d['scheduler']})",
                 f"  elapsed    {d['elapsed_s']:.1f} s" + (f", {rate:,} patterns/s per core" if rate else "")
                 + (f", {self.resumed_shards} shards taken from the state file" if self.resumed_shards else ""),
                 f"  {'weight':>6} {'patterns':>14} {'corrected':>14} {'detected':>14} {'miscorrected':>14}"
                 f" {'wrong':>10}"]
        for w in self.weights:
            lines.append(f"  {w['weight']:>6} {w['patterns']:>14,} {w['corrected']:>14,} {w['detected']:>14,}"
                         f" {w['miscorrected']:>14,} {w['wrong']:>10,}")
        lines.extend(f"  ! wrong: weight {x['weight']} rank {x['rank']}: {x['errors']}"
                     for x in d["wrong_patterns"])
        verdict = "no pattern decoded wrongly" if not self.wrong else f"{self.wrong:,} patterns decoded wrongly"
        lines.append(f"  complete: {'true' if self.complete else 'false'}; {verdict}")
        return "\n".join(lines)


class State:
    """The --state file: JSON lines, appended and flushed as shards finish, so a killed run resumes.

    {"plan": key, "weight": w, "shard": size}  fixes the shard size of one weight of one job;
    {"done": key, "weight": w, "first": r, "count": c, "counts": [...], "failed": [...], "seconds": s}.
    A torn last line (the run was killed while writing it) is ignored, and cut off before the next append.
    """

    def __init__(self, path: str | None):
        self.path = Path(path) if path else None
        self.plans: dict[tuple, int] = {}
        self.done: dict[tuple, dict] = {}
        self.new_plans: list[dict] = []           # written by save_plans() once the run really starts
        self.file_keys: set[str] = set()          # jobs the file already holds
        self.cut_at: int | None = None            # length of the good records before a torn last line
        self.newline = False                      # the last record lacks its newline
        if self.path is None or not self.path.exists():
            return
        try:
            lines = self.path.read_bytes().decode().splitlines(keepends=True)
        except UnicodeDecodeError:
            raise ProveError(f"{self.path}: not a bitmend prove state file (not UTF-8 text)") from None
        good = 0
        for i, line in enumerate(lines):
            try:
                rec = json.loads(line)
                if "plan" in rec:
                    self.plans[rec["plan"], rec["weight"]] = int(rec["shard"])
                else:
                    self.done[rec["done"], rec["weight"], rec["first"]] = rec
            except (ValueError, KeyError, TypeError):
                if i < len(lines) - 1:
                    raise ProveError(f"{self.path}: line {i + 1} is not a bitmend prove state record") from None
                self.cut_at = good
            good += len(line.encode())
        self.file_keys = {k for k, _ in self.plans}
        self.newline = self.cut_at is None and bool(lines) and not lines[-1].endswith("\n")

    def check(self, keys: set[str]) -> None:
        if self.file_keys and not keys & self.file_keys:
            raise ProveError(f"{self.path}: state of another proof (spec, profile, data_len, compiler input "
                             "or bitmend version differ); give another --state file")

    def _append(self, rec: dict) -> None:
        if self.path is not None:
            if self.cut_at is not None:
                os.truncate(self.path, self.cut_at)
                self.cut_at = None
            with self.path.open("a") as f:
                f.write("\n" * self.newline + json.dumps(rec) + "\n")
                self.newline = False
                f.flush()
                os.fsync(f.fileno())

    def shard_size(self, key: str, weight: int, size: int) -> int:
        """The recorded shard size of this weight, or `size` (then recorded)."""
        if (key, weight) not in self.plans:
            self.plans[key, weight] = size
            self.new_plans.append({"plan": key, "weight": weight, "shard": size})
        return self.plans[key, weight]

    def save_plans(self) -> None:
        for rec in self.new_plans:
            self._append(rec)
        self.new_plans = []

    def record(self, key: str, weight: int, first: int, count: int, result) -> None:
        counts, failed, seconds = result
        rec = {"done": key, "weight": weight, "first": first, "count": count, "counts": list(counts),
               "failed": list(failed), "seconds": seconds}
        self.done[key, weight, first] = rec
        self._append(rec)


def _compiler_id() -> str:
    cc = harness.compiler()
    try:
        res = subprocess.run([cc, "--version"], capture_output=True, text=True)
        first = res.stdout.splitlines()[0] if res.stdout else ""
    except OSError:
        first = ""
    return f"{cc}: {first}" if first else cc


def _rate(job: Job, weight: int) -> float:
    """Patterns per second of the driver on this machine for one weight (a short run from rank 0)."""
    run = runner(job)
    count = 16
    while True:
        t0 = time.perf_counter()
        run.run(weight, 0, min(count, job.patterns(weight)))
        took = time.perf_counter() - t0
        if took >= CALIBRATE_SECONDS or count >= job.patterns(weight):
            return min(count, job.patterns(weight)) / max(took, 1e-9)
        count *= 4


def _too_many(job: Job, weight: int, max_weight: int) -> str:
    n = job.patterns(weight)
    rate = _rate(job, weight) if weight <= MAX_WEIGHT else None
    what = f"C({len(job.units)}, {weight})" + (f" x {job.values}^{weight} error values" if job.values > 1 else "")
    cost = f"; about {n / rate / 86400:.3g} core-days at the {rate:,.0f} patterns/s per core measured here" \
        if rate else ""
    return (f"--max-weight {max_weight}: weight {weight} has {n:.3g} patterns ({what}), too many to run "
            f"(the limit is {TOO_MANY:.0e}){cost}; choose --max-weight {weight - 1} or less")


def _plan(spec: Spec, profile: str, max_weight: int | None, data_len: int | None, state: State,
          shard_seconds: float):
    """(job, certificate, shards) of one profile; ProveError for a bad option value or too many patterns."""
    model = build(spec.with_profile(profile))
    p = model.properties
    data_len = p.data_bytes if data_len is None else data_len
    lengths = model.data_lengths()
    if data_len not in lengths:
        raise ProveError(f"--data-len must be in {lengths.start}..{lengths.stop - 1} for {spec.source_name} "
                         f"(got {data_len})")
    job = make_job(model, data_len)
    top = min(len(job.units), MAX_WEIGHT)
    w_max = p.t + 1 if max_weight is None else max_weight
    if not 1 <= w_max <= top:
        raise ProveError(f"--max-weight must be in 1..{top} for {spec.source_name} (got {w_max})")
    for w in range(1, w_max + 1):
        if job.patterns(w) > TOO_MANY or not job.rank_ok(w):
            raise ProveError(f"{spec.source_name}: " + _too_many(job, w, w_max))
    shards = []
    for w in range(1, w_max + 1):
        total = job.patterns(w)
        size = state.plans.get((job.key, w)) or max(1, round(_rate(job, w) * shard_seconds))
        size = state.shard_size(job.key, w, size)
        shards.extend((w, first, min(size, total - first)) for first in range(0, total, size))
    cert = Certificate(job, model.spec, p.t, w_max, _compiler_id(),
                       " ".join([*harness.STRICT_FLAGS, "-O2"]), 0, "")
    return job, cert, shards


def run(spec: Spec, profiles: list[str], max_weight: int | None = None, data_len: int | None = None,
        scheduler: str | None = None, workers: int | None = None, state_file: str | None = None,
        progress: bool | None = None, shard_seconds: float = SHARD_SECONDS) -> tuple[list[Certificate], bool]:
    """(one certificate per profile, interrupted).  Ctrl-C ends the run early: the certificates then
    hold what finished, complete is false, and the state file lets the next run go on from there."""
    if workers is not None and workers < 1:
        raise ProveError(f"--workers must be at least 1 (got {workers})")
    if workers is not None and scheduler:
        raise ProveError("--workers applies to the local cluster only; the scheduler's cluster has its own")
    start = time.perf_counter()
    state = State(state_file)
    plans = [_plan(spec, p, max_weight, data_len, state, shard_seconds) for p in profiles]
    state.check({job.key for job, _, _ in plans})        # before anything is written
    certs = [cert for _, cert, _ in plans]
    todo = []
    for job, cert, shards in plans:
        for w, first, count in shards:
            if (job.key, w, first) in state.done:
                cert.resumed_shards += 1
            else:
                todo.append((job, cert, w, first, count))
    interrupted = False
    with cluster.connect(scheduler, workers) as client:
        state.save_plans()
        n_workers = cluster.worker_count(client)
        for cert in certs:
            cert.workers, cert.scheduler = n_workers, scheduler or "local cluster on 127.0.0.1"
        futures = {job.key: client.scatter(job, broadcast=True, hash=False) for job, _, _ in plans}
        by_future = {futures[job.key].key: cert for job, cert, _ in plans}
        calls = ((futures[job.key], w, first, count) for job, _, w, first, count in todo)
        try:
            with terminal.progress(sum(c for *_, c in todo), "proving", progress) as advance:
                for (fut, w, first, count), result in cluster.unordered(client, run_shard, calls,
                                                                        2 * n_workers + 2):
                    cert = by_future[fut.key]
                    state.record(cert.job.key, w, first, count, result)
                    cert.core_seconds += result[2]
                    cert.patterns_run += count
                    advance(count)
        except KeyboardInterrupt:
            interrupted = True
    for job, cert, shards in plans:
        _count(cert, job, shards, state)
        cert.elapsed = time.perf_counter() - start
    return certs, interrupted


def _count(cert: Certificate, job: Job, shards: list, state: State) -> None:
    """Sum the finished shards of every weight (this run's and the state file's) into the certificate."""
    for w in range(1, cert.max_weight + 1):
        row = {"weight": w, "patterns": job.patterns(w), **{c: 0 for c in CLASSES}}
        for sw, first, _ in shards:
            rec = state.done.get((job.key, sw, first)) if sw == w else None
            if rec is None:
                continue
            for c, n in zip(CLASSES, rec["counts"]):
                row[c] += n
            cert.failures.extend((w, r) for r in rec["failed"])
        cert.weights.append(row)
    cert.failures = sorted(cert.failures)[:SHOWN_FAILURES]
