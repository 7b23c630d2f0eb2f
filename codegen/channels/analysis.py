"""What one code buys on a channel: the figures `bitmend analyze` prints.

Built from a code model's `properties` (n, k, t, unit_bits, parity and table bytes), its family name,
which chooses the failure formula, and a channel model (bitmend.channels.base.Channel):
- "bch", "hamming" (SEC): bounded distance over bits, P(more than t of n bits flipped);
- "hamming" with secded: the same failure, split into detected and undetected;
- "reed-solomon": bounded distance over symbols of m = unit_bits bits, each wrong with 1 - (1 - f)^m;
- "crc-repetition": vote + per-copy fallback, exact, plus the CRC's undetected-error estimate.
Any other family with t and n is treated as bounded distance over its units.
"""
from __future__ import annotations

import math

from ..codes.base import CodeModel
from . import bsc
from .base import Channel


def _family(model: CodeModel) -> str:
    return model.spec.family


def _is_secded(model: CodeModel) -> bool:
    if _family(model) != "hamming":
        return False
    try:
        return bool(model.spec.table("hamming").secded)
    except KeyError:
        return model.properties.d >= 4


def channel_bits(model: CodeModel) -> int:
    """Bits the channel carries per codeword (padding bits of the byte packing excluded)."""
    p = model.properties
    return p.n * p.unit_bits


def failure(model: CodeModel, ch: Channel, exact: bool = True) -> dict:
    """Block failure (one codeword, or one frame of an interleaved module) on channel `ch`, with the
    family's extra figures.  Figures that are worked out for the memoryless channel only are None under
    another channel, with the reason.  exact=False skips the exact frame recursion (curves)."""
    p = model.properties
    f = ch.flip_prob
    family = _family(model)
    memoryless = ch.kind == "bsc"
    out: dict = {}
    if family == "crc-repetition":
        if not memoryless:
            raise ValueError(f"{model.spec.name}: crc-repetition is analysed on the binary symmetric channel "
                             f"only (its vote needs the copies' bits jointly)")
        rep = model.spec.table("repetition")
        width = model.spec.table("crc").width
        block_bits = p.n // rep.copies
        r = bsc.crc_repetition(rep.copies, block_bits, width, f)
        out["block_failure"] = r["block_failure"]
        out["crc_undetected_estimate"] = r["crc_undetected"]
        out["vote_bit_error"] = r["vote_bit_error"]
        out["copy_damaged"] = r["block_damaged"]
        # a failed frame is left as received: copy 0 holds, per bit, f / P(copy damaged) flips on average
        out["post_decoding_ber"] = r["block_failure"] * f / r["block_damaged"] if r["block_damaged"] else 0.0
        out["failure_model"] = ("vote wrong and every copy damaged (exact); CRC misses estimated "
                                "as 2^-width per damaged block checked")
        return out
    symbols = p.unit_bits > 1 or family == "reed-solomon"
    depth = getattr(model, "depth", 1)
    if depth > 1:
        out.update(frame_failure(model, ch, exact))
    else:
        out["block_failure"] = ch.units_failure(p.n, p.unit_bits, p.t)
    if symbols:
        ps = ch.unit_error(p.unit_bits)
        out["symbol_error"] = ps
        out["failure_model"] = f"more than t of n symbols wrong, symbol error 1-(1-f)^{p.unit_bits}"
    else:
        out["failure_model"] = "more than t of n bits flipped"
    if not memoryless:
        out["failure_model"] += f" (exact forward recursion over the {ch.kind} channel's states)"
        out["post_decoding_ber"] = None
        out["post_decoding_ber_reason"] = "worked out for the memoryless channel only"
        return out
    if symbols:
        # a wrong symbol holds m f / ps wrong bits on average, out of m
        ser = bsc.post_decoding_ber(p.n, p.t, ps)
        out["post_decoding_ber"] = ser * f / ps if ps else 0.0
        return out
    out["post_decoding_ber"] = bsc.post_decoding_ber(p.n, p.t, f)
    if family == "hamming":
        columns = parity_check_columns(model)
        if columns is not None:
            s = bsc.syndrome_split(columns, len(model.H), f, _is_secded(model))
            out["detected"] = s["detected"]
            out["undetected"] = s["undetected"]
            out["split_model"] = (f"exact over the code's parity-check columns for up to "
                                  f"{s['exact_weights']} errors")
        elif _is_secded(model):
            s = bsc.secded_split(p.n, f)
            out["detected"] = s["detected"]
            out["undetected"] = s["undetected"]
            out["split_model"] = ("detected = even counts >= 2, undetected = odd counts >= 3 "
                                  "(an upper bound: a shortened code flags some odd ones)")
    return out


def byte_units(model) -> list[int]:
    """Units that each byte of one codeword holds (data then parity), from the codeword model's units."""
    inner = model.inner
    n = inner.properties.data_bytes
    counts = [0] * (n + inner.parity_len(n))
    for u in inner.error_units(n):
        counts[u // 8] += 1
    return counts


def frame_failure(model, ch: Channel, exact: bool = True) -> dict:
    """An interleaved frame: its failure (the frame fails when any codeword does), one codeword's, and
    bounds [worst codeword, union bound] where the exact recursion is too large (or not asked for)."""
    p = model.properties
    r = ch.interleaved_failure(p.unit_bits, byte_units(model), p.t, model.depth, exact=exact)
    how = ("exact" if r["frame_exact"] else
           "union bound over the codewords (an upper bound; the worst codeword is a lower one)")
    return {"block_failure": r["frame_failure"], "frame_failure": r["frame_failure"],
            "frame_failure_bounds": r["frame_failure_bounds"], "codeword_failure": r["codeword_failure"],
            "frame_exact": r["frame_exact"], "depth": model.depth,
            "frame_model": f"a frame of {model.depth} interleaved codewords fails when any does: {how}"}


def parity_check_columns(model) -> list[int] | None:
    """The columns of the model's parity-check matrix as ints (row 0 most significant), or None."""
    H = getattr(model, "H", None)
    if H is None:
        return None
    rows = len(H)
    return [sum(int(H[i][j]) << (rows - 1 - i) for i in range(rows)) for j in range(len(H[0]))]


def block_failure(model: CodeModel, ch: Channel) -> float:
    return failure(model, ch)["block_failure"]


UNDERFLOW = 1e-300           # probabilities below this are not told apart from 0
NORMAL_MIN_FLIPS = 1         # fewer expected flips per block (n f (1 - f)): the information density is
                             # nowhere near normal, so the normal approximation is not meaningful (our rule)
PROBABILITIES = ("block_failure", "post_decoding_ber", "symbol_error", "detected", "undetected",
                 "crc_undetected_estimate", "vote_bit_error", "copy_damaged", "frame_failure",
                 "codeword_failure")


def finite_length(bits: int, t: int, ch: Channel, eps: float) -> tuple[float | None, str | None]:
    """The finite-length limit at this length and block failure, clamped to [0, 1], and a note: why it is
    omitted (None), or why it is not meaningful where it is given."""
    f = ch.flip_prob
    if ch.kind != "bsc":
        return None, "the normal approximation is worked out here for the memoryless channel only"
    if t == 0:
        return None, "detection-only code: its failure counts detected blocks, the limit is for decoders"
    if not UNDERFLOW <= eps < 1.0:
        return None, "block failure outside [1e-300, 1): no figure there"
    raw = bsc.normal_approx_rate(bits, f, eps)
    if not math.isfinite(raw):
        return None, "the approximation overflows at this flip probability"
    value = min(1.0, max(0.0, raw))
    notes = []
    if bits * f * (1.0 - f) < NORMAL_MIN_FLIPS:
        notes.append(f"not meaningful: n f (1 - f) = {bits * f * (1.0 - f):.3g} expected flips per block, "
                     f"below {NORMAL_MIN_FLIPS}")
    if value != raw:
        notes.append(f"clamped from {raw:.4g}")
    return value, "; ".join(notes) or None


def analyze(model: CodeModel, ch: Channel) -> dict:
    """The analyze figures as a JSON-ready dict (n, k, t in the code's units: symbols for RS).

    Every probability is clamped to [0, 1]; those below 1e-300 are listed in `underflow` (reported as
    computed, 0 or a denormal, meaning "< 1e-300").  No field is NaN or infinite: such a figure is None
    with a `<field>_reason`."""
    f = ch.flip_prob
    p = model.properties
    bits = channel_bits(model)
    cap = bsc.capacity(f)
    fail = failure(model, ch)
    eps = min(1.0, max(0.0, fail["block_failure"]))
    fl, note = finite_length(bits, p.t, ch, fail.get("codeword_failure", eps))
    out = {
        "name": model.spec.name,
        "family": _family(model),
        "profile": model.spec.profile,
        "flip_prob": f,
        **ch.params(),
        "n": p.n,
        "k": p.k,
        "t": p.t,
        "d": p.d,
        "unit_bits": p.unit_bits,
        "channel_bits": bits,
        "data_bytes": p.data_bytes,
        "parity_bytes": p.parity_bytes,
        "table_bytes": p.table_bytes,
        "rate": p.rate,
        "capacity": cap,
        "rate_over_capacity": p.rate / cap,
        "block_failure": eps,
        "post_decoding_ber": fail["post_decoding_ber"],
        "finite_length_rate": fl,
        "gap_to_finite_length": None if fl is None else fl - p.rate,
    }
    if note:
        out["finite_length_note"] = note
    out.update({k: v for k, v in fail.items() if k not in out})
    return checked(out)


def checked(out: dict) -> dict:
    """Probabilities clamped to [0, 1] with the underflow listed; non-finite numbers made None with a
    reason, so the dict is strict JSON."""
    low = []
    for key in PROBABILITIES:
        v = out.get(key)
        if isinstance(v, float):
            out[key] = v = min(1.0, max(0.0, v))
            if v < UNDERFLOW:
                low.append(key)
    for key, v in list(out.items()):
        if isinstance(v, float) and not math.isfinite(v):
            out[key] = None
            out[f"{key}_reason"] = "not a finite number at this flip probability"
    if low:
        out["underflow"] = low
    return out


def fmt(x, underflow: bool = False) -> str:
    """A figure for a table: "< 1e-300" for an underflowed probability, "-" for none."""
    if x is None:
        return "-"
    if underflow:
        return "< 1e-300"
    if isinstance(x, float):
        if x == 0.0:
            return "0"
        return f"{x:.4g}" if 1e-3 <= abs(x) < 1e4 else f"{x:.3e}"
    return str(x)


def channel_words(result: dict) -> str:
    """The channel of a result in words, from its JSON fields."""
    if result["channel"] == "bsc":
        return f"a binary symmetric channel, flip probability {result['flip_prob']:g}"
    return (f"a Gilbert-Elliott burst channel, average flip probability {result['flip_prob']:g} (mean burst "
            f"{result['burst_len']:g} bits, flip {result['bad_flip']:g} in a burst, "
            f"{result['good_flip']:g} outside)")


def table(result: dict) -> str:
    """The readable table of one analysis."""
    unit = "symbol" if result["unit_bits"] > 1 else "bit"
    low = set(result.get("underflow", ()))

    def prob(key: str) -> str:
        return fmt(result[key], key in low)

    def units(count: int) -> str:
        return f"{count} {unit}" + ("" if count == 1 else "s")

    rows = [
        ("n", units(result["n"]) + (f" ({result['channel_bits']} bits)" if result["unit_bits"] > 1 else "")),
        ("k", units(result["k"])),
        ("t (corrected)", units(result["t"])),
        ("rate k/n", fmt(result["rate"])),
        ("capacity 1-H2(f)", fmt(result["capacity"])
         + ("" if result["channel"] == "bsc" else "  (memoryless reference: what ideal interleaving sees)")),
        ("rate / capacity", fmt(result["rate_over_capacity"])),
    ]
    if "symbol_error" in result:
        rows.append(("symbol error", prob("symbol_error")))
    if "vote_bit_error" in result and result["vote_bit_error"] is not None:
        rows.append(("vote bit error", prob("vote_bit_error")))
    if "frame_failure" in result:
        lo, hi = result["frame_failure_bounds"]
        rows.append(("codeword failure", prob("codeword_failure")))
        rows.append((f"frame failure ({result['depth']} cw)", prob("frame_failure")
                     + ("  (exact)" if result["frame_exact"] else
                        f"  (union bound; at least {fmt(lo)}, the worst codeword)")))
    else:
        rows.append(("block failure", prob("block_failure")))
    if "detected" in result:
        rows.append(("  detected", prob("detected")))
        rows.append(("  undetected", prob("undetected")))
    if "crc_undetected_estimate" in result:
        rows.append(("CRC miss (estimate)", prob("crc_undetected_estimate")))
    rows.append(("post-decoding BER", prob("post_decoding_ber")
                 + (f"  ({result['post_decoding_ber_reason']})" if "post_decoding_ber_reason" in result else "")))
    limit = fmt(result["finite_length_rate"]) + "  (rate at this n and failure"
    note = result.get("finite_length_note")
    rows.append(("finite-length limit", limit + (f"; {note})" if note else ")")))
    rows.append(("gap to that limit", fmt(result["gap_to_finite_length"])))
    if "simulated_failure" in result:
        lo, hi = result["ci95"]
        rows.append(("simulated failure", f"{fmt(result['simulated_failure'])}  "
                     f"({result['simulated_failures']}/{result['simulated_trials']}, "
                     f"95% [{fmt(lo)}, {fmt(hi)}])"))
        rows.append(("exact in that interval", "yes" if lo <= result["block_failure"] <= hi else "NO"))
    head = f"{result['name']} ({result['family']}) on {channel_words(result)}"
    width = max(len(r[0]) for r in rows)
    return "\n".join([head] + [f"  {k:<{width}}  {v}" for k, v in rows])


def columns(header: list[str], rows: list[list[str]], left: int = 0) -> list[str]:
    """Text columns whose widths follow the values, two spaces apart: the first `left` columns
    left-aligned, the rest right-aligned; columns never merge."""
    widths = [max(len(str(r[i])) for r in [header] + rows) for i in range(len(header))]

    def line(cells) -> str:
        return "  ".join(f"{c:<{w}}" if i < left else f"{c:>{w}}"
                         for i, (c, w) in enumerate(zip(map(str, cells), widths))).rstrip()

    return [line(header)] + [line(r) for r in rows]


def summary(results: list[dict]) -> str:
    """One row per analysed spec, for `analyze` with several specs."""
    head = f"{len(results)} codes on {channel_words(results[0])}"
    header = ["name", "family", "n", "k", "t", "rate", "block failure", "finite-length limit"]
    rows = []
    for r in results:
        low = set(r.get("underflow", ()))
        limit = fmt(r["finite_length_rate"])
        if "not meaningful" in r.get("finite_length_note", ""):
            limit += " *"
        row = [r["name"], r["family"], r["n"], r["k"], r["t"], fmt(r["rate"]),
               fmt(r["block_failure"], "block_failure" in low), limit]
        if "simulated_failure" in r:
            row.append(f"{r['simulated_failures']}/{r['simulated_trials']}")
        rows.append(row)
    if any("simulated_failure" in r for r in results):
        header.append("simulated")
        rows = [row + [""] * (len(header) - len(row)) for row in rows]
    lines = [head] + ["  " + line for line in columns(header, rows, left=2)]
    if any(row[7].endswith(" *") for row in rows):
        lines.append(f"  * not meaningful: fewer than {NORMAL_MIN_FLIPS} expected flip(s) per block")
    return "\n".join(lines)
