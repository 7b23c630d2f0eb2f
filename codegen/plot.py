"""The analyze figure (matplotlib, Agg backend): PNG or SVG, chosen by the file's extension.

Left: the rate-error plane, flip probability against rate, with the capacity limit 1 - H2(f), the
finite-length limit at this code's length and block failure (normal approximation), and the code as a
point.  Right: block failure against flip probability over a range, exact, with simulated points and their
95 % intervals when a simulation ran.
"""
from __future__ import annotations

import io
import math
from pathlib import Path

from . import analysis, channel

FORMATS = {".png": "png", ".svg": "svg"}


def format_for(path: str | Path) -> str | None:
    return FORMATS.get(Path(path).suffix.lower())


def render(model, result: dict, simulated: list[dict] | None = None, fmt: str = "png") -> bytes:
    """The figure as PNG or SVG bytes.  `simulated`: dicts with flip_prob, simulated_failure, ci95."""
    import matplotlib
    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    f0 = result["flip_prob"]
    bits = result["channel_bits"]
    eps = result["block_failure"]
    fig = Figure(figsize=(11, 4.4), dpi=110)
    left, right = fig.subplots(1, 2)

    # rate-error plane
    lo, hi = math.log10(f0 / 30.0), math.log10(min(0.49, f0 * 30.0))
    fs = [10 ** (lo + i * (hi - lo) / 299) for i in range(300)]
    caps = [channel.capacity(f) for f in fs]
    left.plot(fs, caps, color="black", label="capacity 1 - H2(f)")
    shown_rates = caps + [result["rate"]]
    if 0.0 < eps < 1.0:
        fl = [min(1.0, max(0.0, channel.normal_approx_rate(bits, f, eps))) for f in fs]
        left.plot(fs, fl, color="tab:blue", linestyle="--",
                  label=f"finite-length limit, n = {bits} bits, failure {eps:.2g}")
        shown_rates += fl
    left.plot([f0], [result["rate"]], marker="o", color="tab:red", linestyle="none",
              label=f"{result['name']}: rate {result['rate']:.3f}")
    left.axvline(f0, color="grey", linewidth=0.6, linestyle=":")
    left.set_xscale("log")
    bottom = max(0.0, min(shown_rates) - 0.02)
    left.set_ylim(bottom, min(1.0, max(shown_rates)) + 0.02 * (1.0 - bottom) + 0.002)
    left.set_xlabel("flip probability f")
    left.set_ylabel("rate (data bits per channel bit)")
    left.set_title("rate-error plane")
    left.legend(fontsize=8, loc="best")
    left.grid(True, which="both", alpha=0.25)

    # failure vs flip probability
    fr = analysis.flip_range(f0)
    curve = analysis.failure_curve(model, fr)
    shown = [(f, p) for f, p in zip(fr, curve) if p > 0.0]
    right.plot([f for f, _ in shown], [p for _, p in shown], color="tab:blue", label="exact block failure")
    right.plot([f0], [eps], marker="o", color="tab:red", linestyle="none", label=f"f = {f0:g}")
    for i, s in enumerate(simulated or []):
        lo, hi = s["ci95"]
        y = s["simulated_failure"]
        label = "simulated (C), 95% interval" if i == 0 else None
        if y > 0:
            right.errorbar([s["flip_prob"]], [y], yerr=[[y - lo], [hi - y]], fmt="s", color="tab:green",
                           capsize=3, markersize=4, label=label)
        else:      # no failure seen: only the upper end is informative
            right.errorbar([s["flip_prob"]], [hi], yerr=[[hi * 0.5], [0]], fmt="v", color="tab:green",
                           capsize=3, markersize=4, uplims=False, label=label)
    right.set_xscale("log")
    right.set_yscale("log")
    floor = max(1e-30, min([p for _, p in shown] + [eps if eps > 0 else 1e-30]))
    right.set_ylim(floor, 2.0)
    right.set_xlabel("flip probability f")
    right.set_ylabel("block failure (one codeword)")
    right.set_title(f"{result['name']}: n={result['n']}, k={result['k']}, t={result['t']}")
    right.legend(fontsize=8, loc="lower right")
    right.grid(True, which="both", alpha=0.25)

    fig.tight_layout()
    buf = io.BytesIO()
    # fixed metadata: no date or version in the file, so the same inputs give the same bytes
    meta = {"Software": None} if fmt == "png" else {"Date": None, "Creator": None}
    fig.savefig(buf, format=fmt, metadata=meta)
    return buf.getvalue()


def write(path: str | Path, model, result: dict, simulated: list[dict] | None = None) -> None:
    fmt = format_for(path)
    if fmt is None:
        raise ValueError(f"plot file must end in .png or .svg (got {Path(path).name})")
    data = render(model, result, simulated, fmt)
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.tmp")
    tmp.write_bytes(data)
    tmp.replace(path)
