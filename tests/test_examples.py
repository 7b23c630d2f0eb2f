"""Every bundled example, in every profile: the generated C bit-exact against the model (docs/DESIGN.md §6)."""
from __future__ import annotations

import pytest

from bitmend import spec as specmod, verify
from bitmend.codes import build
from conftest import EXAMPLES, compile_model

PROFILES = ["fast", "small", "tiny"]


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_example_campaign(path, profile):
    model = build(specmod.load(path).with_profile(profile))
    t = model.properties.t
    depth = model.spec.depth                      # an interleaved frame costs depth codewords per case
    budget = max(20, 600 // (t + 3)) if depth == 1 else max(8, 600 // ((t + 3) * depth))
    report = verify.campaign(model, compile_model(model), seed=11, budget=budget, progress=False)
    assert report.ok, report.table()
    expected = {"clean", "every data_len", "first/last unit", "bursts"}
    expected |= {f"weight {w}" for w in range(1, t + 1)} | {f"weight {w} (beyond t)" for w in range(t + 1, t + 4)}
    if t:
        expected |= {"parity only", "zeros data", "ones data"}
    if hasattr(model, "decode_erasures"):
        expected |= {"erasures", "erasures+errors", "erasures+errors (beyond)", "bad erasure list"}
    if model.spec.depth > 1:
        expected |= {f"frame bursts <= {model.spec.depth}*t", "one codeword t+1"}
    assert expected <= {k for k, n in report.cases.items() if n > 0}, report.cases
