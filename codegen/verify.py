"""Bit-exact campaigns: the compiled C against the Python model (docs/DESIGN.md §6).

Each case encodes a data block with both, compares the parity, flips a set of error units, then compares
decode's return value, data and parity, and check's return value.  The C runs on guarded buffers, so a
write outside them is a failure too.
"""
from __future__ import annotations

import bisect
import itertools
import math
from dataclasses import dataclass, field

import numpy as np

from . import emit, harness, terminal
from .codes import build
from .codes.base import CodeModel
from .spec import Spec

MAX_REPORTED = 10          # mismatches described in full per report


@dataclass
class Case:
    kind: str
    data: bytes
    errors: tuple[tuple[int, int], ...]   # (bit offset in data || parity, XOR value of unit_bits bits)
    # for models with decode_erasures: the erasure list (unit indexes into data || parity) passed to it
    erasures: tuple[int, ...] | None = None
    # the model must correct this case (a burst within an interleaved frame's capability)
    expect_corrected: bool = False


@dataclass
class Report:
    name: str
    family: str
    profile: str
    properties: dict
    cases: dict = field(default_factory=dict)        # kind -> count
    failures: dict = field(default_factory=dict)     # kind -> count
    details: list = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not any(self.failures.values())

    def add(self, kind: str, problem: str | None) -> None:
        self.cases[kind] = self.cases.get(kind, 0) + 1
        self.failures.setdefault(kind, 0)
        if problem:
            self.failures[kind] += 1
            if len(self.details) < MAX_REPORTED:
                self.details.append(f"{kind}: {problem}")

    def table(self) -> str:
        p = self.properties
        title = f"{self.name} ({self.family}, profile {self.profile}): n={p['n']} k={p['k']} t={p['t']}"
        rows = [[kind, count, self.failures[kind]] for kind, count in self.cases.items()]
        total, bad = sum(self.cases.values()), sum(self.failures.values())
        rows.append(["total", total, bad, "OK" if self.ok else "MISMATCH"])
        text = terminal.render(terminal.table(["kind", "cases", "mismatches", ""], rows, title=title,
                                              right=("cases", "mismatches")))
        return "\n".join([text] + [f"  ! {d}" for d in self.details])

    def as_dict(self) -> dict:
        return {"name": self.name, "family": self.family, "profile": self.profile, "ok": self.ok,
                "properties": self.properties, "cases": self.cases, "mismatches": self.failures,
                "details": self.details}


def apply_errors(model: CodeModel, data: bytes, parity: bytes, errors) -> tuple[bytes, bytes]:
    """XOR each error value (unit_bits wide, MSB at its bit offset) into data || parity."""
    frame = bytearray(data + parity)
    width = model.properties.unit_bits
    for offset, value in errors:
        for i in range(width):
            if value >> (width - 1 - i) & 1:
                bit = offset + i
                frame[bit // 8] ^= 0x80 >> (bit % 8)
    return bytes(frame[:len(data)]), bytes(frame[len(data):])


def compare(model: CodeModel, module: harness.Module, case: Case) -> str | None:
    """None when C and model agree on every output for this case, else what differs.  A case with an
    erasure list goes through decode_erasures instead of decode and check."""
    where = f"data_len={len(case.data)} errors={list(case.errors)[:8]}"
    if case.erasures is not None:
        where += f" erasures={list(case.erasures)[:8]}"
    plen = model.parity_len(len(case.data))
    ref_parity = model.encode(case.data)
    rc, parity = module.encode(case.data, plen)
    if rc != 0 or parity != ref_parity:
        return f"encode differs (rc {rc}) {where}"
    rd, rp = apply_errors(model, case.data, parity, case.errors)
    if case.erasures is None:
        name, ref, got = "decode", model.decode(rd, rp), module.decode(rd, rp)
    else:
        name = "decode_erasures"
        ref = model.decode_erasures(rd, rp, case.erasures)
        got = module.decode_erasures(rd, rp, case.erasures)
    if got != ref:
        what = [n for n, a, b in zip(("status", "data", "parity"), got, ref) if a != b]
        return f"{name} {', '.join(what)} differ (C {got[0]}, model {ref[0]}) {where}"
    if case.erasures is None and module.check(rd, rp) != model.check(rd, rp):
        return f"check differs {where}"
    if case.expect_corrected and (ref[0] < 0 or ref[1] != case.data or ref[2][:plen] != parity):
        return f"not corrected although within t per codeword (model {ref[0]}) {where}"
    return None


def spread(lo: int, hi: int, most: int) -> list[int]:
    """Every integer of lo..hi when there are at most `most`, else `most` of them evenly spread, both
    ends included: large t keeps the case count bounded while still reaching t."""
    if hi - lo + 1 <= most:
        return list(range(lo, hi + 1))
    return sorted({lo + round(i * (hi - lo) / (most - 1)) for i in range(most)})


ALL_WEIGHTS_UP_TO = 24     # a "weight w" kind for every w when t is at most this
WEIGHT_KINDS = 32          # else at most this many (fewer on a small budget), spread over 1..t
WEIGHTS_INSIDE = 8         # weights (or burst lengths) one kind cycles through (fewer on a small budget)


class _Cases:
    """Builds the case list of docs/DESIGN.md §6 for one model, one case at a time (a campaign never
    holds more than the current word).  Every kind has at most `budget` cases per weight it covers, and
    the number of weights is bounded, so the total grows with the budget, not with n or t."""

    def __init__(self, model: CodeModel, rng: np.random.Generator, budget: int):
        self.model, self.rng, self.budget = model, rng, budget
        self.p = model.properties
        self.kinds = max(4, min(WEIGHT_KINDS, budget))
        self.inside = max(2, min(WEIGHTS_INSIDE, budget))

    def weights(self, t: int) -> list[int]:
        """The w of the "weight w" kinds."""
        return list(range(1, t + 1)) if t <= ALL_WEIGHTS_UP_TO else spread(1, t, self.kinds)

    def data(self, n: int, pattern: str = "random") -> bytes:
        if pattern == "zeros":
            return bytes(n)
        if pattern == "ones":
            return b"\xff" * n
        return self.rng.integers(0, 256, n, dtype=np.uint8).tobytes()

    def value(self) -> int:
        return 1 if self.p.unit_bits == 1 else int(self.rng.integers(1, 1 << self.p.unit_bits))

    def pick(self, total: int, w: int) -> list[int]:
        """w distinct indexes below total, without a permutation of all of them when total is large."""
        if total <= 1 << 16:
            return self.rng.choice(total, w, replace=False).tolist()
        seen: set[int] = set()
        while len(seen) < w:
            seen.add(int(self.rng.integers(total)))
        return list(seen)

    def _errors(self, units, picks) -> tuple:
        return tuple((units[i], self.value()) for i in sorted(picks))

    def weight(self, kind: str, n: int, w: int, units=None):
        """Every pattern of w units when affordable, else `budget` random ones."""
        units = self.model.error_units(n) if units is None else units
        if w > len(units):
            return
        if math.comb(len(units), w) <= self.budget:
            for picks in itertools.combinations(range(len(units)), w):
                yield Case(kind, self.data(n), self._errors(units, picks))
        else:
            for _ in range(self.budget):
                yield Case(kind, self.data(n), self._errors(units, self.pick(len(units), w)))

    def lengths(self) -> list[int]:
        """Allowed data_len values: all when few, else both ends and a sample (fewer on a small budget)."""
        lens = self.model.data_lengths()
        most = min(24, max(2, self.budget + 1))
        if len(lens) <= most:
            return list(lens)
        ends = {lens[0], lens[1], lens[-2], lens[-1]} if most >= 4 else {lens[0], lens[-1]}
        inner = lens[2:-2]
        sample = self.rng.choice(len(inner), max(0, min(len(inner), most - len(ends))), replace=False)
        return sorted(ends | {inner[int(i)] for i in sample})

    def all(self):
        t = self.p.t
        n = self.p.data_bytes
        units = self.model.error_units(n)
        inside = spread(1, t, self.inside)
        for length in self.lengths():
            for pattern in ("zeros", "ones", "random"):
                yield Case("clean", self.data(length, pattern), ())
            lu = self.model.error_units(length)
            for w in spread(1, t + 3, self.inside):
                if w <= len(lu):
                    yield Case("every data_len", self.data(length), self._errors(lu, self.pick(len(lu), w)))
        for w in self.weights(t):
            yield from self.weight(f"weight {w}", n, w)
        for pattern in ("zeros", "ones"):
            for w in inside:
                yield Case(f"{pattern} data", self.data(n, pattern), self._errors(units, self.pick(len(units), w)))
        parity_units = units[bisect.bisect_left(units, 8 * n):]
        for w in inside:
            yield from self.weight("parity only", n, w, parity_units)
        ends = [(units[0],), (units[-1],), (units[0], units[-1])]
        for offsets in ends:
            yield Case("first/last unit", self.data(n), tuple((o, self.value()) for o in offsets))
        for length in spread(2, min(max(t, 1) + 3, len(units)), self.inside):
            for _ in range(min(self.budget, 200)):
                start = int(self.rng.integers(0, len(units) - length + 1))
                yield Case("bursts", self.data(n), tuple((u, self.value()) for u in units[start:start + length]))
        for w in range(t + 1, t + 4):
            if w > len(units):
                break
            for _ in range(self.budget):
                yield Case(f"weight {w} (beyond t)", self.data(n), self._errors(units, self.pick(len(units), w)))
        if hasattr(self.model, "decode_erasures"):
            yield from self.erasure_cases()
        if getattr(self.model, "depth", 1) > 1:
            yield from self.interleaved_cases()

    def interleaved_cases(self):
        """Frame bursts: a run of up to depth x t consecutive frame bytes puts at most t bytes into each
        codeword, each byte with one error unit (any symbol value for RS, one bit for BCH), and must be
        corrected; t + 1 units in one codeword (the other codewords clean or within t) must agree too."""
        depth, t, n = self.model.depth, self.p.t, self.p.data_bytes
        units = self.model.error_units(n)
        by_byte: dict[int, list[int]] = {}
        for u in units:
            by_byte.setdefault(u // 8, []).append(u)
        frame_bytes = sorted(by_byte)
        lengths = sorted({1, depth, depth * t - 1, depth * t} | {int(x) for x in self.rng.integers(
            2, depth * t + 1, 3)})
        for length in (x for x in lengths if 1 <= x <= len(frame_bytes)):
            for _ in range(min(self.budget, 100)):
                start = int(self.rng.integers(0, len(frame_bytes) - length + 1))
                hit = [by_byte[b][int(self.rng.integers(0, len(by_byte[b])))]
                       for b in frame_bytes[start:start + length]]
                yield Case(f"frame bursts <= {depth}*t", self.data(n), tuple((u, self.value()) for u in hit),
                           expect_corrected=True)
        for _ in range(min(self.budget, 200)):
            i = int(self.rng.integers(0, depth))
            mine = [u for u in units if (u // 8) % depth == i]
            picks = self.rng.choice(len(mine), min(t + 1, len(mine)), replace=False)
            yield Case("one codeword t+1", self.data(n), self._errors(mine, picks))

    def erasure_cases(self):
        """Erasure lists for models with decode_erasures: erasures alone (some erased units right),
        erasures with errors inside the capability 2s + e <= d - 1 and just beyond it, and invalid lists
        (repeated, out of range, too long) that must leave the buffers untouched."""
        room = self.p.d - 1                       # 2s + e <= room is always corrected
        per = max(1, min(self.budget, 60))
        lengths = self.lengths()

        def draw(count: int):
            """(data_len, unit indexes) for `count` distinct units of a random allowed length, or None."""
            length = int(self.rng.choice(lengths))
            total = len(self.model.error_units(length))
            if count > total:
                return None
            return length, self.rng.choice(total, count, replace=False).tolist()

        def errs(length: int, idx: list[int], allow_zero: bool) -> list:
            units = self.model.error_units(length)
            out = []
            for i in idx:
                v = self.value()
                if allow_zero and self.rng.random() < 0.25:
                    v = 0                         # an erased unit that arrived intact
                out.append((units[i], v))
            return out

        for e in spread(1, room, self.kinds):
            for _ in range(per):
                got = draw(e)
                if got:
                    length, idx = got
                    yield Case("erasures", self.data(length), tuple(sorted(errs(length, idx, True))),
                               tuple(idx))
        for e in spread(0, room, self.kinds):
            fit = (room - e) // 2                 # most errors that still fit beside e erasures
            for kind, s in (("erasures+errors", fit), ("erasures+errors (beyond)", fit + 1),
                            ("erasures+errors (beyond)", fit + 2)):
                for _ in range(max(1, per // 3)):
                    got = draw(e + s)
                    if got:
                        length, idx = got
                        erased, wrong = idx[:e], idx[e:]
                        errors = errs(length, erased, True) + errs(length, wrong, False)
                        yield Case(kind, self.data(length), tuple(sorted(errors)), tuple(erased))
        for _ in range(per):
            got = draw(min(3, len(self.model.error_units(min(lengths)))))
            if not got:
                continue
            length, idx = got
            total = len(self.model.error_units(length))
            errors = tuple(sorted(errs(length, idx, False)))
            bad_lists = [tuple(idx + idx[:1]),                       # repeated position
                         tuple(idx[:1] + [total]),                   # one past the end
                         (0xFFFF,)]                                  # far out of range
            if total > room:
                bad_lists.append(tuple(range(room + 1)))             # longer than d - 1
            for lst in bad_lists:
                yield Case("bad erasure list", self.data(length), errors, lst)


def case_count(model: CodeModel, seed: int = 1, budget: int = 2000) -> int:
    """How many cases `campaign` runs with this seed and budget (the list is drawn once, without the C)."""
    return sum(1 for _ in _Cases(model, np.random.default_rng(seed), budget).all())


def campaign(model: CodeModel, module: harness.Module, seed: int = 1, budget: int = 2000,
             progress: bool | None = None, announce=None) -> Report:
    """Run every case kind against one compiled module.  `announce(text)`, when given, is told first how
    many cases will run; a progress bar shows on a terminal (terminal.progress)."""
    report = Report(model.spec.name, model.spec.family, model.spec.profile, model.properties.as_dict())
    label = f"{model.spec.name} [{model.spec.profile}]"
    total = case_count(model, seed, budget)
    if announce:
        word = model.properties.data_bytes + model.properties.parity_bytes
        announce(f"{label}: {total} cases, the C against the model; one word in memory at a time "
                 f"({word} bytes of data + parity, a few times that in the model's working copies)")
    cases = _Cases(model, np.random.default_rng(seed), budget)
    with terminal.progress(total, label, progress) as advance:
        for case in cases.all():
            try:
                problem = compare(model, module, case)
            except harness.GuardError as err:
                problem = f"{err} data_len={len(case.data)} errors={list(case.errors)[:8]}"
            report.add(case.kind, problem)
            advance(1, f"{label} {case.kind}")
    return report


def module_for(model: CodeModel, cc: str | None = None) -> harness.Module:
    return harness.build(model.spec.name, emit.render(model), cc)


def run_specs(specs: list[Spec], seed: int = 1, budget: int = 2000, profiles=None, announce=None
              ) -> list[Report]:
    reports = []
    for spec in specs:
        for profile in profiles or [spec.profile]:
            model = build(spec.with_profile(profile))
            reports.append(campaign(model, module_for(model), seed, budget, announce=announce))
    return reports
