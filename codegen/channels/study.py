"""What `bitmend analyze` does for one or more specs on one channel: the figures of each, optionally a
simulation through the compiled C (and, for the plot, a few smaller ones where failures are common), and
one figure file for all of them."""
from __future__ import annotations

from ..codes import build
from . import analysis, figures
from .base import Channel


def run(specs: list, ch: Channel, trials: int | None = None, seed: int = 1, plot_file=None) -> list[dict]:
    entries = []
    for spec in specs:
        model = build(spec)
        result = analysis.analyze(model, ch)
        simulated = []
        if trials:
            from . import simulate
            sim = simulate.run(spec, ch, trials, seed=seed)
            result.update(sim.as_dict())
            simulated.append({"flip_prob": ch.flip_prob, **sim.as_dict()})
            if plot_file:
                extra = []
                for i, x in enumerate(figures.simulation_points(model, ch)):
                    s = simulate.run(spec, ch.at(x), max(500, trials // 4), seed=seed + 1 + i,
                                     label=f"{spec.name} f={x:.3g}")
                    extra.append({"flip_prob": x, "block_failure": analysis.block_failure(model, ch.at(x)),
                                  **s.as_dict()})
                simulated.extend(extra)
                result["simulated_points"] = extra
        entries.append((model, result, simulated))
    if plot_file:
        from . import plot
        plot.write(plot_file, figures.compute(entries, ch))
    return [result for _, result, _ in entries]
