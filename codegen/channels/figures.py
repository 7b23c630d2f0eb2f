"""The numbers a plot shows, computed from the code models and a channel: curves and points only, no
drawing (codegen.channels.plot renders them).

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


def flip_range(f: float, points: int = 60) -> list[float]:
    """Flip probabilities for a failure curve around f: two decades below to 30x above (at most 0.45)."""
    lo = f / 100.0
    hi = min(0.45, f * 30.0)
    if hi <= lo:
        hi = lo * 10
    step = (math.log10(hi) - math.log10(lo)) / (points - 1)
    return [10 ** (math.log10(lo) + i * step) for i in range(points)]


def failure_curve(model, ch: Channel, fs: list[float]) -> list[float]:
    return [analysis.block_failure(model, ch.at(f)) for f in fs]


def simulation_points(model, ch: Channel, most: int = 3) -> list[float]:
    """Extra flip probabilities for the plot where failures are common enough for a small simulation
    to show something: exact failure between 1 % and 60 %, spread over the range."""
    f = ch.flip_prob
    fr = flip_range(f, 40)
    usable = [x for x, p in zip(fr, failure_curve(model, ch, fr)) if 0.01 <= p <= 0.6 and x != f]
    if len(usable) <= most:
        return usable
    step = (len(usable) - 1) / (most - 1)
    return [usable[round(i * step)] for i in range(most)]


def compute(entries: list[tuple], ch: Channel) -> dict:
    """The two panels for `entries`: (model, analyze result, simulated points) per spec."""
    f0 = ch.flip_prob
    lo, hi = math.log10(f0 / 30.0), math.log10(min(0.49, f0 * 30.0))
    fs = [10 ** (lo + i * (hi - lo) / 299) for i in range(300)]
    plane = {"flip_probs": fs, "capacity": [bsc.capacity(f) for f in fs], "limits": [], "codes": []}
    failure = {"curves": [], "points": [], "simulated": []}
    fr = flip_range(f0)
    for model, result, simulated in entries:
        bits = result["channel_bits"]
        eps = result["block_failure"]
        name = result["name"]
        if 0.0 < eps < 1.0:
            plane["limits"].append({
                "label": f"{name}: finite-length limit, n = {bits} bits, failure {eps:.2g}",
                "rates": [min(1.0, max(0.0, bsc.normal_approx_rate(bits, f, eps))) for f in fs]})
        plane["codes"].append({"label": f"{name}: rate {result['rate']:.3f}", "flip_prob": f0,
                               "rate": result["rate"]})
        curve = failure_curve(model, ch, fr)
        shown = [(f, p) for f, p in zip(fr, curve) if p > 0.0]
        failure["curves"].append({"label": f"{name}: exact block failure",
                                  "flip_probs": [f for f, _ in shown], "failures": [p for _, p in shown]})
        failure["points"].append({"label": f"{name} at f = {f0:g}", "flip_prob": f0, "failure": eps})
        for s in simulated:
            failure["simulated"].append({"flip_prob": s["flip_prob"], "failure": s["simulated_failure"],
                                         "ci95": s["ci95"]})
    if len(entries) == 1:
        r = entries[0][1]
        failure["title"] = f"{r['name']}: n={r['n']}, k={r['k']}, t={r['t']}"
    else:
        failure["title"] = "block failure (one codeword)"
    return {"plane": plane, "failure": failure}
