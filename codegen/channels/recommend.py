"""Code choice: which configuration of which family protects N data bytes to a target failure at the
least cost, on a channel (bitmend.channels.base.Channel).

Per family a fast search (closed-form sizes and the channel's failure figures) finds, for each way of splitting the
data over codewords, the weakest configuration that meets the target.  Each of those finalists is then
built as a real spec (bitmend.spec.parse) and a real model (bitmend.codes.build), and judged again from
the model's own figures: parity bytes, table bytes and the block failure of bitmend.analysis.  "Block
failure for the whole data" is 1 - (1 - p)^c for c codewords failing independently with p each; for CRC +
repetition the CRC's undetected-error estimate is added to it (a silent wrong answer is a failure too).
A last codeword that is not full is counted as full (zero padded), which slightly overstates its failure.
Candidates are ranked by parity bytes, then table bytes, then failure.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

from .. import gf, terminal
from ..codes import build
from ..spec import FAMILIES, PROFILES, SpecError, parse
from . import analysis, bsc
from .base import Channel

# CRCs offered with repetition (catalogue parameters; CRC-16/KERMIT and CRC-32 as in the examples)
CRCS = {
    8: {"width": 8, "poly": 0x07, "init": 0, "reflect_in": False, "reflect_out": False, "xor_out": 0},
    16: {"width": 16, "poly": 0x1021, "init": 0, "reflect_in": True, "reflect_out": True, "xor_out": 0},
    32: {"width": 32, "poly": 0x04C11DB7, "init": 0xFFFFFFFF, "reflect_in": True, "reflect_out": True,
         "xor_out": 0xFFFFFFFF},
}
MAX_COPIES = 15
MAX_SPLITS = 8              # powers of two of codewords tried, after the fewest that fit
MAX_BCH_T = 400


@dataclass
class Candidate:
    family: str
    name: str
    tables: dict                    # {table: {key: value}} as written to the spec
    codewords: int
    chunk_bytes: int                # data bytes per codeword
    parity_bytes: int = 0           # all codewords together
    table_bytes: int = 0
    codeword_failure: float = math.nan
    block_failure: float = math.nan  # the whole data
    n: int = 0
    k: int = 0
    t: int = 0
    unit_bits: int = 1
    rate: float = 0.0
    depth: int = 1                  # codewords interleaved per frame
    notes: list = field(default_factory=list)

    def doc(self, profile: str) -> dict:
        d = {"code": {"name": self.name, "family": self.family}}
        d.update(self.tables)
        if self.depth > 1:
            d["interleave"] = {"depth": self.depth}
        if profile != "fast":
            d["c"] = {"profile": profile}
        return d

    def describe(self) -> str:
        parts = []
        for table, values in self.tables.items():
            for key, value in values.items():
                if key in ("init", "reflect_in", "reflect_out", "xor_out", "poly"):
                    continue
                parts.append(f"{key}={value}")
        return " ".join(parts + ([f"depth={self.depth}"] if self.depth > 1 else []))

    def as_dict(self) -> dict:
        return {"family": self.family, "name": self.name, "parameters": self.tables,
                "codewords": self.codewords, "data_bytes_per_codeword": self.chunk_bytes,
                "parity_bytes": self.parity_bytes, "table_bytes": self.table_bytes,
                "block_failure": self.block_failure, "codeword_failure": self.codeword_failure,
                "n": self.n, "k": self.k, "t": self.t, "unit_bits": self.unit_bits, "rate": self.rate,
                "depth": self.depth, "notes": self.notes}


def splits(data_bytes: int, smallest_chunk: int = 1, fewest: int = 1) -> list[int]:
    """Codeword counts to try: the fewest that fit (and one more), then powers of two from there, while a
    codeword still holds smallest_chunk bytes; never more codewords than it takes to hold the data."""
    out = {fewest, fewest + 1}
    c = 1
    while len(out) < MAX_SPLITS + 2 and math.ceil(data_bytes / c) >= smallest_chunk:
        if c >= fewest:
            out.add(c)
        c *= 2
    # the codewords a chunk size really takes (every one holding data), each chunk size once
    useful = {}
    for c in sorted(out):
        chunk = math.ceil(data_bytes / c)
        useful.setdefault(chunk, math.ceil(data_bytes / chunk))
    return sorted(set(useful.values()))


# -- fast per-family searches: yield Candidates (not yet built) --------------------------------------------

def _hamming(data_bytes: int, ch: Channel, target: float):
    for chunk in (1, 2, 4, 8, 16, 32, 64, 128):
        if chunk > data_bytes and chunk > 1:
            break
        count = math.ceil(data_bytes / chunk)
        for secded in (True, False):
            name = f"{'secded' if secded else 'hamming'}_{8 * chunk}"
            yield Candidate("hamming", name, {"hamming": {"data_bits": 8 * chunk, "secded": secded}},
                            count, chunk)


def bch_parity_bits(m: int, t: int) -> int:
    """deg g of the narrow-sense binary BCH code over GF(2^m) correcting t: the size of the union of
    the cyclotomic cosets of 1, 3, ..., 2t-1 (exact: g is the product of their minimal polynomials)."""
    roots: set[int] = set()
    for i in range(1, 2 * t, 2):
        if i % ((1 << m) - 1) not in roots:
            roots.update(gf.cyclotomic_coset(i, m))
    return len(roots)


def _fewest_t(failures, target: float) -> int | None:
    """From (t, failure) pairs in increasing t: the first t that meets the target, else the t with the
    lowest failure seen (the closest candidate); None when there are no pairs."""
    best = None
    for t, p in failures:
        if best is None or p < best[1]:
            best = (t, p)
        if p <= target:
            break
    return None if best is None else best[0]


DEPTHS = (1, 2, 4, 8, 16, 32, 64)       # interleaving depths tried where the channel has memory


def _layouts(data_bytes: int, ch: Channel, fewest: int):
    """(codewords, depth, data bytes per codeword) to try: every split, and under a channel with memory
    each split rounded up to whole frames of every depth up to four times its codeword count (a frame of
    more, shorter codewords; interleaving buys nothing on independent flips)."""
    seen = set()
    for count in splits(data_bytes, 1, fewest):
        for depth in (DEPTHS if ch.kind != "bsc" else (1,)):
            if depth > 1 and depth > count * 4:
                break
            frames = math.ceil(count / depth)
            chunk = math.ceil(data_bytes / (frames * depth))
            if (chunk, depth) not in seen:
                seen.add((chunk, depth))
                yield math.ceil(data_bytes / chunk), depth, chunk


def _whole(ch: Channel, unit_bits: int, byte_units: list[int], t: int, depth: int, codewords: int) -> float:
    """Failure for the whole data: frames of `depth` codewords failing independently, each frame's
    failure the union bound over its codewords (exact for depth 1)."""
    if depth == 1:
        one = ch.units_failure(sum(byte_units), unit_bits, t)
    else:
        one = ch.interleaved_failure(unit_bits, byte_units, t, depth, exact=False)["frame_failure"]
    return bsc.repeat_failure(one, math.ceil(codewords / depth))


def _bch(data_bytes: int, ch: Channel, target: float):
    biggest = ((1 << 16) - 1 - 16 * 64) // 8         # bytes one GF(2^16) codeword holds with t = 64
    for count, depth, chunk in _layouts(data_bytes, ch, math.ceil(data_bytes / biggest)):
        bits = 8 * chunk
        m_min = next((m for m in range(3, 17) if (1 << m) - 1 >= bits + m), None)
        if m_min is None:
            continue
        for m in range(m_min, min(m_min + 1, 16) + 1):
            def failures(m=m, bits=bits, count=count, depth=depth):
                roots: set[int] = set()
                for t in range(1, MAX_BCH_T + 1):
                    i = 2 * t - 1
                    if i % ((1 << m) - 1) not in roots:
                        roots.update(gf.cyclotomic_coset(i, m))
                    n = bits + len(roots)
                    if n > (1 << m) - 1:
                        return
                    r = len(roots)
                    yield t, _whole(ch, 1, [8] * (chunk + r // 8) + ([r % 8] if r % 8 else []), t, depth,
                                    count)

            t = _fewest_t(failures(), target)
            if t is not None:
                yield Candidate("bch", f"bch_m{m}_t{t}" + (f"_x{depth}" if depth > 1 else ""),
                                {"bch": {"m": m, "t": t, "data_bits": bits}}, count, chunk, depth=depth)


def _reed_solomon(data_bytes: int, ch: Channel, target: float):
    m = 8
    order = (1 << m) - 1
    for count, depth, k in _layouts(data_bytes, ch, math.ceil(data_bytes / (order - 2))):
        t = _fewest_t(((t, _whole(ch, m, [1] * (k + 2 * t), t, depth, count))
                       for t in range(1, (order - k) // 2 + 1)), target)
        if t is not None:
            yield Candidate("reed-solomon", f"rs_n{k + 2 * t}_k{k}" + (f"_x{depth}" if depth > 1 else ""),
                            {"reed-solomon": {"n": k + 2 * t, "k": k, "symbol_bits": m}}, count, k,
                            depth=depth)


def _crc_repetition(data_bytes: int, ch: Channel, target: float):
    for width, crc in CRCS.items():
        for count in splits(data_bytes, 4, math.ceil(data_bytes / 65535)):
            chunk = math.ceil(data_bytes / count)
            block_bits = 8 * (chunk + (width + 7) // 8)
            best = None
            for copies in range(1, MAX_COPIES + 1):
                r = bsc.crc_repetition(copies, block_bits, width, ch.flip_prob)
                p = bsc.repeat_failure(min(1.0, r["block_failure"] + r["crc_undetected"]), count)
                if best is None or p < best[1]:
                    best = (copies, p)
                if p <= target:
                    break
            copies = best[0]
            yield Candidate("crc-repetition", f"crc{width}_x{copies}",
                            {"crc": dict(crc), "repetition": {"copies": copies, "data_bytes": chunk}},
                            count, chunk)


SEARCHES = {"hamming": _hamming, "bch": _bch, "reed-solomon": _reed_solomon,
            "crc-repetition": _crc_repetition}


# -- judging with the real models ----------------------------------------------------------------------

def _judge(c: Candidate, ch: Channel, profile: str) -> Candidate:
    spec = parse(c.doc(profile), f"{c.name}.toml")
    model = build(spec)
    p = model.properties
    fig = analysis.failure(model, ch, exact=False)
    one = fig["block_failure"]                   # one codeword, or one frame of c.depth codewords
    if "crc_undetected_estimate" in fig:
        one = min(1.0, one + fig["crc_undetected_estimate"])
        c.notes.append("failure includes the CRC miss estimate")
    if p.data_bytes < c.depth * c.chunk_bytes:
        raise ValueError(f"{c.name}: model holds {p.data_bytes} bytes, not {c.depth * c.chunk_bytes}")
    frames = math.ceil(c.codewords / c.depth)
    if c.codewords > 1:
        c.notes.append(f"data split over {c.codewords} codewords of {c.chunk_bytes} bytes")
    if c.depth > 1:
        c.notes.append(f"{frames} frame(s) of {c.depth} interleaved codewords; frame failure: union bound")
    c.codeword_failure = fig.get("codeword_failure", one)
    c.block_failure = bsc.repeat_failure(one, frames)
    c.parity_bytes = frames * model.parity_len(c.depth * c.chunk_bytes)
    c.table_bytes = p.table_bytes
    c.n, c.k, c.t, c.unit_bits, c.rate = p.n, p.k, p.t, p.unit_bits, p.rate
    return c


@dataclass
class Outcome:
    data_bytes: int
    channel: Channel
    target: float
    candidates: list            # meeting the target, best first
    closest: list               # when none meets it: the lowest failures
    skipped: dict               # family -> why

    @property
    def best(self) -> Candidate | None:
        return self.candidates[0] if self.candidates else None

    @property
    def flip_prob(self) -> float:
        return self.channel.flip_prob

    def as_dict(self) -> dict:
        return {"data_bytes": self.data_bytes, "flip_prob": self.flip_prob, **self.channel.params(),
                "target": self.target,
                "met": bool(self.candidates),
                "candidates": [c.as_dict() for c in self.candidates],
                "closest": [c.as_dict() for c in self.closest], "skipped": self.skipped}


def search(data_bytes: int, ch: Channel, target: float, families: list[str] | None = None,
           profile: str = "fast", closest: int = 5) -> Outcome:
    if data_bytes <= 0:
        raise ValueError(f"data bytes must be positive (got {data_bytes})")
    if not 0.0 < target < 1.0:
        raise ValueError(f"target must be in (0, 1) (got {target})")
    if profile not in PROFILES:
        raise ValueError(f"profile must be one of {', '.join(PROFILES)} (got {profile})")
    finalists = {}                          # (family, name, codewords) -> candidate, in search order
    judged, skipped, missing = [], {}, set()
    for family in families or list(SEARCHES):
        if family not in FAMILIES:
            raise ValueError(f"unknown family {family!r}")
        if family == "crc-repetition" and ch.kind != "bsc":
            skipped[family] = "analysed on the binary symmetric channel only"
            continue
        for cand in SEARCHES[family](data_bytes, ch, target):
            finalists.setdefault((family, cand.name, cand.codewords), cand)
    with terminal.progress(len(finalists), "building finalists") as advance:
        for (family, _, _), cand in finalists.items():
            advance(1, f"building finalists: {family}")
            if family in missing:
                continue
            try:
                judged.append(_judge(cand, ch, profile))
            except ModuleNotFoundError as err:
                skipped[family] = f"model not available ({err.name})"
                missing.add(family)
            except SpecError as err:
                skipped.setdefault(family, f"{cand.name}: {err}")
    order = lambda c: (c.parity_bytes, c.table_bytes, c.block_failure)  # noqa: E731
    meeting = sorted((c for c in judged if c.block_failure <= target), key=order)
    near = [] if meeting else sorted(judged, key=lambda c: (c.block_failure, c.parity_bytes))[:closest]
    return Outcome(data_bytes, ch, target, meeting, near, skipped)


def _failure(x: float) -> str:
    return "< 1e-300" if x < analysis.UNDERFLOW else f"{x:.2e}"


def table(outcome: Outcome, rows_shown: int = 12) -> str:
    head = (f"{outcome.data_bytes} data bytes on {analysis.channel_words(outcome.as_dict())}, "
            f"target block failure {outcome.target:g}")
    rows = outcome.candidates or outcome.closest
    lines = [head]
    if not outcome.candidates:
        lines.append("nothing meets the target; the closest candidates:")
    header = ["#", "family", "parameters", "words", "parity B", "tables B", "failure", "rate"]
    cells = [[i, c.family, c.describe(), c.codewords, c.parity_bytes, c.table_bytes, _failure(c.block_failure),
              f"{c.rate:.3f}"] for i, c in enumerate(rows[:rows_shown], 1)]
    lines += ["  " + line for line in analysis.columns(header, cells, left=3)]
    if len(rows) > rows_shown:
        lines.append(f"  ... and {len(rows) - rows_shown} more (all of them in --json)")
    for family, why in outcome.skipped.items():
        lines.append(f"  (skipped {family}: {why})")
    return "\n".join(lines)


HEX_KEYS = {"poly", "init", "xor_out", "field_poly"}


def _toml_value(v, key: str = "") -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return f"0x{v:X}" if key in HEX_KEYS else str(v)
    return '"' + str(v).replace("\\", "\\\\").replace('"', '\\"') + '"'


def spec_text(c: Candidate, outcome: Outcome, profile: str = "fast") -> str:
    """The candidate as a spec file for `bitmend generate`."""
    lines = [
        f"# Chosen by bitmend recommend for {outcome.data_bytes} data bytes on",
        f"# {analysis.channel_words(outcome.as_dict())}, target block failure {outcome.target:g}.",
        f"# {c.codewords} codeword(s) of {c.chunk_bytes} data bytes; parity {c.parity_bytes} bytes in all; "
        f"block failure {c.block_failure:.3e} for the whole data",
        "# (retention effects and stuck bits are not modelled).",
    ]
    for table, values in c.doc(profile).items():
        lines.append("")
        lines.append(f"[{table}]")
        for key, value in values.items():
            lines.append(f"{key} = {_toml_value(value, key)}")
    return "\n".join(lines) + "\n"
