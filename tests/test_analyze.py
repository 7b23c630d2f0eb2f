"""`bitmend analyze`: the figures against an independent scipy computation, simulations through the
compiled C against the exact figures, the plot file, the JSON object and bad arguments."""
from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from codegen import cli
from codegen.channels import BSC, analysis, simulate
from codegen.emit import environment
from conftest import EXAMPLES, ROOT, make_model, make_spec

stats = pytest.importorskip("scipy.stats")

SECDED_72_64 = """
[code]
name = "word72"
family = "hamming"
[hamming]
data_bits = 64
secded = true
"""
BCH_PAGE = """
[code]
name = "page512"
family = "bch"
[bch]
m = 13
t = 8
data_bits = 4096
"""
RS_204_188 = """
[code]
name = "rs204"
family = "reed-solomon"
[reed-solomon]
n = 204
k = 188
"""
SOIL = (ROOT / "examples" / "soil_probe.toml").read_text()


def _family_model(text: str, module: str):
    pytest.importorskip(module)           # temporary guard while a family module is being written
    return make_model(text)


def _needs_c(model) -> None:
    """Skip when the family's C templates are not in the tree yet (a family being written)."""
    names = environment().list_templates()
    for ext in ("h", "c"):
        if f"{model.template}.{ext}.j2" not in names:
            pytest.skip(f"templates/{model.template}.{ext}.j2 not written yet")


# -- independent references (scipy) ------------------------------------------------------------------------

def _capacity(f):
    # 1 - H2(f) with scipy.stats.entropy in base 2
    return 1.0 - stats.entropy([f, 1 - f], base=2)


def _ppv(n_bits, f, eps):
    # Polyanskiy-Poor-Verdu normal approximation, IEEE Trans. Inf. Theory 56(5), 2010, with
    # scipy.stats.norm.isf as Q^-1
    v = f * (1 - f) * np.log2((1 - f) / f) ** 2
    return _capacity(f) - np.sqrt(v / n_bits) * stats.norm.isf(eps) + np.log2(n_bits) / (2 * n_bits)


def _check_against_scipy(result, n, k, t, n_bits, fail):
    assert (result["n"], result["k"], result["t"]) == (n, k, t)
    assert result["rate"] == k / n                                     # exact
    assert result["capacity"] == pytest.approx(_capacity(result["flip_prob"]), rel=1e-13)
    assert result["block_failure"] == pytest.approx(fail, rel=0.02)      # the 2 %
    assert result["block_failure"] == pytest.approx(fail, rel=1e-8)      # and in fact far closer
    ref_fl = _ppv(n_bits, result["flip_prob"], fail)
    assert result["finite_length_rate"] == pytest.approx(ref_fl, rel=0.005)
    assert result["finite_length_rate"] == pytest.approx(ref_fl, rel=1e-9)


@pytest.mark.parametrize("f", [1e-4, 1e-3, 1e-2])
def test_secded_72_64_against_scipy(f):
    r = analysis.analyze(make_model(SECDED_72_64), BSC(f))
    # (72,64) SECDED fails with 2 or more of 72 bits flipped: scipy.stats.binom.sf(1, 72, f)
    _check_against_scipy(r, 72, 64, 1, 72, stats.binom.sf(1, 72, f))
    assert r["detected"] + r["undetected"] == pytest.approx(r["block_failure"], rel=1e-9)
    assert r["detected"] > r["undetected"]


@pytest.mark.parametrize("f", [1e-4, 1e-3, 3e-3])
def test_bch_m13_t8_page_against_scipy(f):
    r = analysis.analyze(_family_model(BCH_PAGE, "codegen.codes.bch"), BSC(f))
    # deg g = 8 * 13 = 104 for t = 8 over GF(2^13): the cosets of 1, 3, ..., 15 are distinct, 13 each
    # (common practice, no source); failure = scipy.stats.binom.sf(8, 4200, f)
    _check_against_scipy(r, 4200, 4096, 8, 4200, stats.binom.sf(8, 4200, f))


@pytest.mark.parametrize("f", [1e-4, 1e-3, 5e-3])
def test_rs_204_188_against_scipy(f):
    r = analysis.analyze(_family_model(RS_204_188, "codegen.codes.reed_solomon"), BSC(f))
    ps = stats.binom.sf(0, 8, f)            # a byte holds at least one flipped bit
    # more than 8 of 204 symbols wrong: scipy.stats.binom.sf(8, 204, ps); 1632 channel bits
    _check_against_scipy(r, 204, 188, 8, 1632, stats.binom.sf(8, 204, ps))
    assert r["unit_bits"] == 8 and r["channel_bits"] == 1632


def test_crc_repetition_figures():
    r = analysis.analyze(make_model(SOIL), BSC(1e-3))
    assert r["family"] == "crc-repetition" and r["t"] == 2
    # both simple bounds from scipy: the joint failure is below P(vote block wrong) and P(all copies damaged)
    bits = 8 * (24 + 2)
    vote = stats.binom.sf(1, 3, 1e-3)
    assert r["block_failure"] <= stats.binom.sf(0, bits, vote)
    assert r["block_failure"] <= stats.binom.sf(0, bits, 1e-3) ** 3
    assert 0 < r["crc_undetected_estimate"] < r["block_failure"]


# -- simulation through the compiled C --------------------------------------------------------------------

SIM_CASES = [
    ("soil", SOIL, None, 0.02),
    ("secded", SECDED_72_64, None, 0.01),
    ("bch", BCH_PAGE, "codegen.codes.bch", 2e-3),
    ("rs", RS_204_188, "codegen.codes.reed_solomon", 5e-3),
]


@pytest.mark.parametrize("label,text,module,f", SIM_CASES, ids=[c[0] for c in SIM_CASES])
def test_simulated_interval_holds_exact_value(label, text, module, f):
    model = _family_model(text, module) if module else make_model(text)
    _needs_c(model)
    exact = analysis.block_failure(model, BSC(f))
    assert 0.05 < exact < 0.6                       # failures are common here: the check has teeth
    res = simulate.run(model.spec, BSC(f), 2000, seed=7, progress=False)
    lo, hi = res.ci95
    assert res.trials == 2000
    assert lo <= exact <= hi, (res, exact)
    assert hi - lo < 0.06


def test_simulation_is_deterministic_and_worker_independent():
    spec = make_spec(SOIL, "soil.toml")
    a = simulate.run(spec, BSC(0.03), 600, seed=11, workers=1, progress=False)
    b = simulate.run(spec, BSC(0.03), 600, seed=11, workers=2, progress=False)
    c = simulate.run(spec, BSC(0.03), 600, seed=12, workers=2, progress=False)
    assert a == b                   # same seed: same counts, however many workers ran the chunks
    assert a.failures > 0
    assert a != c                   # another seed: other trials (fixed seeds, so this cannot flake)


def test_simulated_secded_split_holds_the_exact_split():
    # the C's flagged and silently wrong decodes against analyze's exact split
    from codegen.channels.base import wilson_interval
    model = make_model(SECDED_72_64)
    f = 0.01
    r = analysis.analyze(model, BSC(f))
    res = simulate.run(model.spec, BSC(f), 3000, seed=5, progress=False)
    lo, hi = wilson_interval(res.detected, res.trials)
    assert lo <= r["detected"] <= hi
    lo, hi = wilson_interval(res.undetected, res.trials)
    assert lo <= r["undetected"] <= hi
    assert res.undetected > 10


# -- CLI: JSON, plot, bad arguments -------------------------------------------------------------------------

def test_cli_json_has_the_keys(tmp_path, capsys):
    out = tmp_path / "a.json"
    spec = EXAMPLES[0]
    assert cli.main(["analyze", str(spec), "--flip-prob", "1e-3", "--json", str(out)]) == 0
    data = json.loads(out.read_text())
    for key in ("n", "k", "t", "rate", "capacity", "block_failure", "finite_length_rate",
                "post_decoding_ber", "gap_to_finite_length", "rate_over_capacity"):
        assert key in data
    text = capsys.readouterr().out
    assert "block failure" in text and "finite-length limit" in text


def test_cli_simulate_and_plot_png(tmp_path, capsys):
    spec = tmp_path / "soil.toml"
    spec.write_text(SOIL)
    png = tmp_path / "fig.png"
    js = tmp_path / "a.json"
    rc = cli.main(["analyze", str(spec), "--flip-prob", "0.02", "--simulate", "1500", "--seed", "3",
                   "--plot", str(png), "--json", str(js)])
    assert rc == 0
    raw = png.read_bytes()
    assert raw[:8] == b"\x89PNG\r\n\x1a\n"                    # PNG signature (PNG specification)
    assert len(raw) > 20000
    data = json.loads(js.read_text())
    lo, hi = data["ci95"]
    assert lo <= data["block_failure"] <= hi
    assert data["simulated_trials"] == 1500
    assert data["simulated_points"]                           # extra points where failures are common
    assert "simulated failure" in capsys.readouterr().out


def test_plot_svg(tmp_path):
    from codegen.channels import figures, plot
    model = make_model(SECDED_72_64)
    out = tmp_path / "fig.svg"
    ch = BSC(1e-3)
    plot.write(out, figures.compute([(model, analysis.analyze(model, ch), [])], ch))
    text = out.read_text()
    assert "<svg" in text and text.rstrip().endswith("</svg>")


def _exit_code(argv) -> int:
    """cli.main's exit status, whether it returns it or raises SystemExit (argparse's way)."""
    try:
        return cli.main(argv)
    except SystemExit as done:
        return done.code


@pytest.mark.parametrize("args,option", [
    (["--flip-prob", "0.7"], "--flip-prob"),
    (["--flip-prob", "0"], "--flip-prob"),
    (["--flip-prob", "0.5"], "--flip-prob"),
    (["--flip-prob", "-1e-3"], "--flip-prob"),
    (["--flip-prob", "nan"], "--flip-prob"),
    (["--flip-prob", "1e-3", "--simulate", "0"], "--simulate"),
    (["--flip-prob", "1e-3", "--plot", "fig.jpg"], "--plot"),
])
def test_bad_arguments_exit_2(args, option, capsys):
    assert _exit_code(["analyze", str(EXAMPLES[0]), *args]) == 2
    err = capsys.readouterr().err
    assert err.startswith("bitmend: ") and option in err


def test_bad_spec_exit_2(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text('[code]\nname = "x"\nfamily = "nope"\n')
    assert cli.main(["analyze", str(bad), "--flip-prob", "1e-3"]) == 2
    assert "bad.toml: [code] family" in capsys.readouterr().err


@pytest.mark.parametrize("spec", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_every_example_analyzes(spec):
    from codegen import spec as specmod
    from codegen.codes import build
    model = build(specmod.load(spec))
    r = analysis.analyze(model, BSC(1e-3))
    assert 0.0 <= r["block_failure"] <= 1.0
    assert r["capacity"] == pytest.approx(_capacity(1e-3), rel=1e-13)
    table = analysis.table(r)
    assert Path(spec).stem in table or r["name"] in table
