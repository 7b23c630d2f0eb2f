"""What one code buys on a channel: the figures `bitmend analyze` prints.

Built from a code model's `properties` (n, k, t, unit_bits, parity and table bytes), its family name,
which chooses the failure formula, and a channel model (codegen.channels.base.Channel):
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


def failure(model: CodeModel, ch: Channel) -> dict:
    """Block failure (one codeword) on channel `ch`, with the family's extra figures."""
    p = model.properties
    f = ch.flip_prob
    family = _family(model)
    out: dict = {}
    if family == "crc-repetition":
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
    if p.unit_bits > 1 or family == "reed-solomon":
        ps = ch.unit_error(p.unit_bits)
        out["symbol_error"] = ps
        out["block_failure"] = ch.units_failure(p.n, p.unit_bits, p.t)
        ser = bsc.post_decoding_ber(p.n, p.t, ps)
        # a wrong symbol holds m f / ps wrong bits on average, out of m
        out["post_decoding_ber"] = ser * f / ps if ps else 0.0
        out["failure_model"] = f"more than t of n symbols wrong, symbol error 1-(1-f)^{p.unit_bits}"
        return out
    out["block_failure"] = ch.units_failure(p.n, 1, p.t)
    out["post_decoding_ber"] = bsc.post_decoding_ber(p.n, p.t, f)
    out["failure_model"] = "more than t of n bits flipped"
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


def parity_check_columns(model) -> list[int] | None:
    """The columns of the model's parity-check matrix as ints (row 0 most significant), or None."""
    H = getattr(model, "H", None)
    if H is None:
        return None
    rows = len(H)
    return [sum(int(H[i][j]) << (rows - 1 - i) for i in range(rows)) for j in range(len(H[0]))]


def block_failure(model: CodeModel, ch: Channel) -> float:
    return failure(model, ch)["block_failure"]


def analyze(model: CodeModel, ch: Channel) -> dict:
    """The analyze figures as a JSON-ready dict (n, k, t in the code's units: symbols for RS)."""
    f = ch.flip_prob
    p = model.properties
    bits = channel_bits(model)
    cap = bsc.capacity(f)
    fail = failure(model, ch)
    eps = fail["block_failure"]
    fl = bsc.normal_approx_rate(bits, f, eps)
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
        "finite_length_rate": None if math.isnan(fl) else fl,
        "gap_to_finite_length": None if math.isnan(fl) else fl - p.rate,
    }
    out.update({k: v for k, v in fail.items() if k not in out})
    return out


def _fmt(x) -> str:
    if x is None:
        return "-"
    if isinstance(x, float):
        if x == 0.0:
            return "0"
        return f"{x:.4g}" if 1e-3 <= abs(x) < 1e4 else f"{x:.3e}"
    return str(x)


def channel_words(result: dict) -> str:
    """The channel of a result in words, from its JSON fields."""
    return f"a binary symmetric channel, flip probability {result['flip_prob']:g}"


def table(result: dict) -> str:
    """The readable table of one analysis."""
    unit = "symbol" if result["unit_bits"] > 1 else "bit"

    def units(count: int) -> str:
        return f"{count} {unit}" + ("" if count == 1 else "s")

    rows = [
        ("n", units(result["n"]) + (f" ({result['channel_bits']} bits)" if result["unit_bits"] > 1 else "")),
        ("k", units(result["k"])),
        ("t (corrected)", units(result["t"])),
        ("rate k/n", _fmt(result["rate"])),
        ("capacity 1-H2(f)", _fmt(result["capacity"])),
        ("rate / capacity", _fmt(result["rate_over_capacity"])),
    ]
    if "symbol_error" in result:
        rows.append(("symbol error", _fmt(result["symbol_error"])))
    if "vote_bit_error" in result and result["vote_bit_error"] is not None:
        rows.append(("vote bit error", _fmt(result["vote_bit_error"])))
    rows.append(("block failure", _fmt(result["block_failure"])))
    if "detected" in result:
        rows.append(("  detected", _fmt(result["detected"])))
        rows.append(("  undetected", _fmt(result["undetected"])))
    if "crc_undetected_estimate" in result:
        rows.append(("CRC miss (estimate)", _fmt(result["crc_undetected_estimate"])))
    rows.append(("post-decoding BER", _fmt(result["post_decoding_ber"])))
    rows.append(("finite-length limit", _fmt(result["finite_length_rate"]) + "  (rate at this n and failure)"))
    rows.append(("gap to that limit", _fmt(result["gap_to_finite_length"])))
    if "simulated_failure" in result:
        lo, hi = result["ci95"]
        rows.append(("simulated failure", f"{_fmt(result['simulated_failure'])}  "
                     f"({result['simulated_failures']}/{result['simulated_trials']}, "
                     f"95% [{_fmt(lo)}, {_fmt(hi)}])"))
        rows.append(("exact inside 95%", "yes" if lo <= result["block_failure"] <= hi else "NO"))
    head = f"{result['name']} ({result['family']}) on {channel_words(result)}"
    width = max(len(r[0]) for r in rows)
    return "\n".join([head] + [f"  {k:<{width}}  {v}" for k, v in rows])
