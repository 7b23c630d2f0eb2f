"""The numbers a plot shows, computed from the code models and a channel: curves and points only, no
drawing (bitmend.channels.plot renders them).

Two panels, each for one or more analysed specs at one channel setting:
- the rate-error plane: flip probability against rate, with the capacity 1 - H2(f), each code's
  finite-length limit at its length and block failure (normal approximation), and each code as a point;
- failure against flip probability: each code's exact block failure over a range, its operating point, and
  the simulations through the C with their 95 % intervals.
"""
from __future__ import annotations

import math

from . import analysis, bsc
from .base import Channel
from .bsc import BSC


def flip_range(ch: Channel, points: int = 60) -> list[float]:
    """Flip probabilities for a failure curve around the channel's: two decades below to 30x above (at
    most 0.45), inside what the channel's other parameters allow."""
    f = ch.flip_prob
    low, high = ch.flip_bounds()
    lo = max(f / 100.0, low + (f - low) / 100.0)
    hi = min(0.45, f * 30.0, f + (high - f) * 0.99)
    step = (math.log10(hi) - math.log10(lo)) / (points - 1)
    return [10 ** (math.log10(lo) + i * step) for i in range(points)]


def failure_curve(model, ch: Channel, fs: list[float]) -> list[float]:
    """Block failure over fs; for an interleaved frame the union bound (the exact frame recursion costs
    seconds per point)."""
    return [analysis.failure(model, ch.at(f), exact=False)["block_failure"] for f in fs]


def simulation_points(model, ch: Channel, most: int = 3) -> list[float]:
    """Extra flip probabilities for the plot where failures are common enough for a small simulation
    to show something: exact failure between 1 % and 60 %, spread over the range."""
    f = ch.flip_prob
    fr = flip_range(ch, 40)
    usable = [x for x, p in zip(fr, failure_curve(model, ch, fr)) if 0.01 <= p <= 0.6 and x != f]
    if len(usable) <= most:
        return usable
    step = (len(usable) - 1) / (most - 1)
    return [usable[round(i * step)] for i in range(most)]


def compute(entries: list[tuple], ch: Channel) -> dict:
    """The two panels for `entries`: (model, analyze result, simulated points) per spec.  Under a channel
    other than the BSC the failure panel also shows each code on the BSC of the same average flip
    probability, so the gap the channel's memory makes is in view."""
    f0 = ch.flip_prob
    low, high = ch.flip_bounds()
    lo = math.log10(max(f0 / 30.0, low + (f0 - low) / 30.0))
    hi = math.log10(min(0.49, f0 * 30.0, f0 + (high - f0) * 0.99))
    fs = [10 ** (lo + i * (hi - lo) / 299) for i in range(300)]
    memoryless = ch.kind == "bsc"
    plane = {"flip_probs": fs, "capacity": [bsc.capacity(f) for f in fs],
             "capacity_label": "capacity 1 - H2(f)" if memoryless else
             "capacity 1 - H2(f) of the memoryless channel (ideal interleaving)",
             "limits": [], "codes": []}
    failure = {"curves": [], "points": [], "simulated": []}
    fr = flip_range(ch)
    for index, (model, result, simulated) in enumerate(entries):
        name = result["name"]
        if result["finite_length_rate"] is not None:
            bits, eps = result["channel_bits"], result["block_failure"]
            note = result.get("finite_length_note", "")
            label = f"{name}: finite-length limit, n = {bits} bits, failure {eps:.2g}"
            plane["limits"].append({
                "label": label + (" (not meaningful here)" if "not meaningful" in note else ""),
                "meaningful": "not meaningful" not in note, "code": index,
                "rates": [min(1.0, max(0.0, bsc.normal_approx_rate(bits, f, eps))) for f in fs]})
        plane["codes"].append({"label": f"{name}: rate {result['rate']:.3f}", "flip_prob": f0,
                               "rate": result["rate"], "code": index})
        curves = [(ch, "")] if memoryless else [(ch, f" ({ch.kind})"), (BSC(f0), " (same f, independent flips)")]
        for c, suffix in curves:
            curve = failure_curve(model, c, fr)
            shown = [(f, p) for f, p in zip(fr, curve) if p > 0.0]
            what = "frame failure (union bound)" if "frame_failure" in result else "exact block failure"
            failure["curves"].append({"label": f"{name}: {what}{suffix}", "dashed": c is not ch, "code": index,
                                      "flip_probs": [f for f, _ in shown], "failures": [p for _, p in shown]})
        failure["points"].append({"label": f"{name} at f = {f0:g}", "flip_prob": f0,
                                  "failure": result["block_failure"], "code": index})
        for s in simulated:
            # no failure seen: the simulation says only "below the interval's upper end"
            kind = "interval" if s["simulated_failure"] > 0 else "upper_bound"
            failure["simulated"].append({"flip_prob": s["flip_prob"], "failure": s["simulated_failure"],
                                         "ci95": s["ci95"], "trials": s["simulated_trials"], "code": index,
                                         "kind": kind})
    if len(entries) == 1:
        r = entries[0][1]
        failure["title"] = f"{r['name']}: n={r['n']}, k={r['k']}, t={r['t']}"
    else:
        failure["title"] = "block failure (one codeword)"
    return {"plane": plane, "failure": failure}
