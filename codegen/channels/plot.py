"""Rendering of the figures computed by bitmend.channels.figures (matplotlib, Agg backend): PNG or SVG,
chosen by the file's extension.  No channel or code maths here: every number drawn comes from the
figure data."""
from __future__ import annotations

import io
from pathlib import Path

from .. import emit

FORMATS = {".png": "png", ".svg": "svg"}


def format_for(path: str | Path) -> str | None:
    return FORMATS.get(Path(path).suffix.lower())


def _color(item: dict) -> str:
    """One colour per code, in matplotlib's default cycle."""
    return f"C{item['code'] % 10}"


def render(data: dict, fmt: str = "png") -> bytes:
    """The figure as PNG or SVG bytes from bitmend.channels.figures.compute's output."""
    import matplotlib
    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    plane, failure = data["plane"], data["failure"]
    fig = Figure(figsize=(11, 4.4), dpi=110)
    left, right = fig.subplots(1, 2)

    # rate-error plane
    fs = plane["flip_probs"]
    left.plot(fs, plane["capacity"], color="black", label=plane["capacity_label"])
    shown_rates = list(plane["capacity"])
    for limit in plane["limits"]:
        left.plot(fs, limit["rates"], linestyle="--" if limit["meaningful"] else ":", color=_color(limit),
                  label=limit["label"])
        shown_rates += limit["rates"]
    for code in plane["codes"]:
        left.plot([code["flip_prob"]], [code["rate"]], marker="o", linestyle="none", color=_color(code),
                  label=code["label"])
        left.axvline(code["flip_prob"], color="grey", linewidth=0.6, linestyle=":")
        shown_rates.append(code["rate"])
    left.set_xscale("log")
    bottom = max(0.0, min(shown_rates) - 0.02)
    left.set_ylim(bottom, min(1.0, max(shown_rates)) + 0.02 * (1.0 - bottom) + 0.002)
    left.set_xlabel("flip probability f")
    left.set_ylabel("rate (data bits per channel bit)")
    left.set_title("rate-error plane")
    left.legend(fontsize=8, loc="best")
    left.grid(True, which="both", alpha=0.25)

    # failure vs flip probability
    lows = []
    for curve in failure["curves"]:
        right.plot(curve["flip_probs"], curve["failures"], linestyle="--" if curve["dashed"] else "-",
                   color=_color(curve), label=curve["label"])
        lows += curve["failures"]
    for point in failure["points"]:
        right.plot([point["flip_prob"]], [point["failure"]], marker="o", color=_color(point), linestyle="none",
                   label=point["label"])
        if point["failure"] > 0:
            lows.append(point["failure"])
    labelled = set()
    for s in failure["simulated"]:
        lo, hi = s["ci95"]
        y = s["failure"]
        if s["kind"] == "interval":
            label = "simulated (C), 95% interval"
            right.errorbar([s["flip_prob"]], [y], yerr=[[y - lo], [hi - y]], fmt="s", color=_color(s),
                           capsize=3, markersize=4, label=None if label in labelled else label)
        else:
            label = "simulated (C), no failure: 95% upper bound"
            right.plot([s["flip_prob"]], [hi], marker="v", color=_color(s), linestyle="none",
                       markersize=7, markerfacecolor="none", label=None if label in labelled else label)
        labelled.add(label)
    right.set_xscale("log")
    right.set_yscale("log")
    right.set_ylim(max(1e-30, min(lows + [1e-30])) if lows else 1e-30, 2.0)
    right.set_xlabel("flip probability f")
    right.set_ylabel("block failure (one codeword)")
    right.set_title(failure["title"])
    right.legend(fontsize=8, loc="lower right")
    right.grid(True, which="both", alpha=0.25)

    fig.tight_layout()
    buf = io.BytesIO()
    # fixed metadata: no date or version in the file, so the same inputs give the same bytes
    meta = {"Software": None} if fmt == "png" else {"Date": None, "Creator": None}
    fig.savefig(buf, format=fmt, metadata=meta)
    return buf.getvalue()


def write(path: str | Path, data: dict) -> None:
    fmt = format_for(path)
    if fmt is None:
        raise ValueError(f"plot file must end in .png or .svg (got {Path(path).name})")
    emit.write_atomic(path, render(data, fmt))          # all or nothing, like every other output
