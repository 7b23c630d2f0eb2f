"""The Gilbert-Elliott burst channel (bitmend.channels.burst) against independent computations: the
definition summed over every state sequence for short blocks, a plain bit-by-bit forward recursion, scipy's
binomial where the chain is memoryless, and simulations through the compiled C."""
from __future__ import annotations

import itertools
import json
import math

import numpy as np
import pytest

from bitmend import cli
from bitmend.channels import GilbertElliott, analysis, bsc, simulate
from conftest import EXAMPLES, ROOT, make_model

stats = pytest.importorskip("scipy.stats")


def _memoryless(f: float, bad: float = 0.5) -> GilbertElliott:
    """A chain whose transition rows both equal its stationary law: burst_len = 1 / (1 - pi_bad)."""
    pi_bad = f / bad
    return GilbertElliott(f, 1.0 / (1.0 - pi_bad), bad, 0.0)


# -- memoryless case: scipy.stats.binom ----------------------------------------------------------------------

@pytest.mark.parametrize("f", [0.2, 1e-2, 1e-3, 1e-5])
@pytest.mark.parametrize("n,t", [(63, 0), (255, 3), (4200, 8), (2040, 30)])
def test_memoryless_bits_equal_the_binomial(f, n, t):
    # scipy.stats.binom.sf(t, n, f): P(more than t of n independent flips)
    ref = stats.binom.sf(t, n, f)
    assert _memoryless(f).units_failure(n, 1, t) == pytest.approx(ref, rel=1e-9)


@pytest.mark.parametrize("f", [0.05, 1e-3, 1e-5])
@pytest.mark.parametrize("n,t", [(255, 16), (28, 4), (204, 8)])
def test_memoryless_symbols_equal_the_binomial(f, n, t):
    # scipy.stats.binom.sf(t, n, ps) with ps = 1 - (1 - f)^8 = binom.sf(0, 8, f)
    ps = stats.binom.sf(0, 8, f)
    ch = _memoryless(f)
    assert ch.unit_error(8) == pytest.approx(ps, rel=1e-12)
    assert ch.units_failure(n, 8, t) == pytest.approx(stats.binom.sf(t, n, ps), rel=1e-9)


# -- brute force: every state sequence -----------------------------------------------------------------------

def _brute(ch: GilbertElliott, n_units: int, unit_bits: int, t: int) -> float:
    """P(more than t units hit) from the definition (common practice, no source): the sum over every
    sequence of states of its probability (stationary start, transition matrix per bit) times the chance,
    given the states, that more than t units hold a flip (units independent given the states)."""
    bits = n_units * unit_bits
    P, pi, e = ch.P, ch.pi, ch.flips
    total = 0.0
    for states in itertools.product((0, 1), repeat=bits):
        prob = pi[states[0]]
        for a, b in zip(states, states[1:]):
            prob *= P[a, b]
        counts = np.array([1.0])                      # distribution of hit units so far
        for u in range(n_units):
            clean = math.prod(1.0 - e[s] for s in states[u * unit_bits:(u + 1) * unit_bits])
            counts = np.convolve(counts, [clean, 1.0 - clean])
        total += prob * counts[t + 1:].sum()
    return total


@pytest.mark.parametrize("params", [(0.05, 4.0, 0.5, 0.0), (0.1, 2.5, 0.4, 0.02), (0.02, 12.0, 0.9, 0.001)])
@pytest.mark.parametrize("n_units,unit_bits,t", [(12, 1, 0), (12, 1, 2), (12, 1, 5), (3, 4, 0), (3, 4, 1),
                                                 (2, 6, 1)])
def test_against_brute_force(params, n_units, unit_bits, t):
    ch = GilbertElliott(*params)
    assert ch.units_failure(n_units, unit_bits, t) == pytest.approx(_brute(ch, n_units, unit_bits, t),
                                                                      rel=1e-9)


# -- a plain forward recursion, one bit at a time --------------------------------------------------------------

def _plain_recursion(ch: GilbertElliott, n_units: int, unit_bits: int, t: int) -> float:
    """Forward recursion over (state, units hit, current unit hit) one bit at a time, the failure mass
    moved out as it arises (the textbook recursion; common practice, no source)."""
    P, e = ch.P, ch.flips
    # w[s, c, h]: state s at the next bit, c units hit before the current unit, h: current unit hit
    w = np.zeros((2, t + 1, 2))
    w[:, 0, 0] = ch.pi
    failed = 0.0
    for u in range(n_units):
        for b in range(unit_bits):
            nw = np.zeros_like(w)
            for s in range(2):
                stay = w[s, :, 0] * (1 - e[s])          # still clean
                hit = w[s, :, 0] * e[s] + w[s, :, 1]    # hit now or before
                for v in range(2):
                    nw[v, :, 0] += stay * P[s, v]
                    nw[v, :, 1] += hit * P[s, v]
            w = nw
        # close the unit: a hit unit adds one to the count
        failed += w[:, t, 1].sum()
        closed = np.zeros_like(w)
        closed[:, :, 0] = w[:, :, 0]
        closed[:, 1:, 0] += w[:, :-1, 1]
        w = closed
    return failed


@pytest.mark.parametrize("f,L", [(1e-3, 20.0), (1e-4, 100.0), (0.01, 3.0)])
def test_against_plain_recursion(f, L):
    ch = GilbertElliott(f, L)
    for n_units, unit_bits, t in [(255, 8, 16), (60, 1, 3), (152, 1, 3)]:
        ref = _plain_recursion(ch, n_units, unit_bits, t)
        assert ch.units_failure(n_units, unit_bits, t) == pytest.approx(ref, rel=1e-9)


def test_tiny_failures_are_not_rounding_noise():
    # short bursts at a low rate: failures far below 1e-16 still agree with the plain recursion
    ch = GilbertElliott(1e-6, 2.0)
    got = ch.units_failure(255, 8, 16)
    assert 0.0 < got < 1e-30
    assert got == pytest.approx(_plain_recursion(ch, 255, 8, 16), rel=1e-9)


def test_bursts_hurt_more_than_independent_flips():
    # the reason for the model: at the same average flip probability an RS(255,223) block fails far more
    # often on bursts of 20 bits than on independent flips (scipy.stats.binom for the latter)
    ps = stats.binom.sf(0, 8, 1e-3)
    assert GilbertElliott(1e-3, 20.0).units_failure(255, 8, 16) > 1e5 * stats.binom.sf(16, 255, ps)


def test_draws_have_the_average_flip_rate_and_mean_burst():
    ch = GilbertElliott(0.01, 10.0, 1.0, 0.0)          # flip every bit of a burst: runs are visible
    rng = np.random.default_rng(3)
    hits = [ch.flip_positions(rng, 20000) for _ in range(40)]
    rate = sum(len(h) for h in hits) / (40 * 20000)
    assert rate == pytest.approx(0.01, rel=0.1)
    runs = [len(r) for h in hits for r in np.split(h, np.flatnonzero(np.diff(h) > 1) + 1) if len(r)]
    assert np.mean(runs) == pytest.approx(10.0, rel=0.15)   # geometric runs of mean burst_len


# -- through the C ----------------------------------------------------------------------------------------

METER = (ROOT / "examples" / "meter_reading.toml").read_text()
ARCHIVE = (ROOT / "examples" / "archive_block.toml").read_text()


@pytest.mark.parametrize("text,f,L", [(METER, 0.004, 12.0), (ARCHIVE, 0.01, 30.0)])
def test_simulation_brackets_the_exact_failure(text, f, L):
    model = make_model(text)
    ch = GilbertElliott(f, L)
    exact = analysis.block_failure(model, ch)
    assert 0.02 < exact < 0.9                       # a figure a small simulation can see
    res = simulate.run(model.spec, ch, 2000, seed=4, progress=False)
    lo, hi = res.ci95
    assert lo <= exact <= hi


def test_cli_burst_json(tmp_path, capsys):
    js = tmp_path / "a.json"
    rc = cli.main(["analyze", str(ROOT / "examples" / "archive_block.toml"), "--flip-prob", "1e-3",
                   "--channel", "burst", "--burst-len", "20", "--json", str(js)])
    assert rc == 0
    data = json.loads(js.read_text())
    assert (data["channel"], data["burst_len"], data["bad_flip"], data["good_flip"]) == ("burst", 20, 0.5, 0)
    assert data["block_failure"] == pytest.approx(GilbertElliott(1e-3, 20.0).units_failure(255, 8, 16),
                                                  rel=1e-12)
    assert data["finite_length_rate"] is None and data["finite_length_note"]
    assert "Gilbert-Elliott" in capsys.readouterr().out


@pytest.mark.parametrize("args,option", [
    (["--channel", "burst"], "--burst-len"),
    (["--channel", "burst", "--burst-len", "0.5"], "--burst-len"),
    (["--channel", "burst", "--burst-len", "4", "--bad-flip", "1.5"], "--bad-flip"),
    (["--channel", "burst", "--burst-len", "4", "--good-flip", "0.01"], "--flip-prob"),
    (["--channel", "burst", "--burst-len", "1.01", "--bad-flip", "0.004"], "--flip-prob"),
])
def test_bad_channel_options_exit_2(args, option, capsys):
    assert cli.main(["analyze", str(EXAMPLES[0]), "--flip-prob", "3e-3", *args]) == 2
    err = capsys.readouterr().err
    assert err.startswith("bitmend: ") and option in err


def test_crc_repetition_under_bursts_is_refused(capsys):
    boot = ROOT / "examples" / "boot_header.toml"
    assert cli.main(["analyze", str(boot), "--flip-prob", "1e-3", "--channel", "burst", "--burst-len", "8"]) == 2
    assert "binary symmetric channel only" in capsys.readouterr().err


# -- interleaved frames ----------------------------------------------------------------------------------

def _plain_frame(ch: GilbertElliott, unit_bits: int, byte_units: list[int], t: int, depth: int):
    """(frame failure, codeword 0 failure) by a plain forward recursion over every bit of the frame, with
    the state (channel state, each codeword's error count, current unit hit) in a dict (common practice,
    no source).  Byte j of codeword i is frame byte j * depth + i; a byte's first units are counted."""
    P, e = ch.P, ch.flips
    dist = {(0, (0,) * depth): ch.pi[0], (1, (0,) * depth): ch.pi[1]}
    failed = 0.0
    for j, units in enumerate(byte_units):
        for i in range(depth):
            # within the byte: (state, counts, hit) with hit = the current unit has a flip
            cur = {(s, c, False): p for (s, c), p in dist.items()}
            for bit in range(8):
                counted = bit < units * unit_bits
                nxt = {}
                for (s, c, hit), p in cur.items():
                    for flip, pf in ((True, e[s]), (False, 1 - e[s])):
                        h = hit or (flip and counted)
                        for v in range(2):
                            key = (v, c, h)
                            nxt[key] = nxt.get(key, 0.0) + p * pf * P[s, v]
                cur = {}
                end_of_unit = counted and (bit + 1) % unit_bits == 0
                for (s, c, h), p in nxt.items():
                    if end_of_unit and h:
                        c = c[:i] + (c[i] + 1,) + c[i + 1:]
                        h = False
                    if c[i] > t:
                        failed += p
                        continue
                    cur[(s, c, h)] = cur.get((s, c, h), 0.0) + p
            dist = {}
            for (s, c, _), p in cur.items():
                dist[(s, c)] = dist.get((s, c), 0.0) + p
    return failed


@pytest.mark.parametrize("unit_bits,byte_units,t,depth", [(8, [1] * 6, 1, 2), (8, [1] * 5, 2, 3),
                                                          (1, [8, 8, 3], 2, 2)])
def test_interleaved_frame_against_plain_recursion(unit_bits, byte_units, t, depth):
    ch = GilbertElliott(0.03, 6.0, 0.5, 0.001)
    r = ch.interleaved_failure(unit_bits, byte_units, t, depth)
    assert r["frame_exact"]
    assert r["frame_failure"] == pytest.approx(_plain_frame(ch, unit_bits, byte_units, t, depth), rel=1e-9)
    # one codeword alone: the same recursion on a frame of depth 1 with the other codewords' bytes as gaps
    # is what the span composition computes; at depth 1 it is the plain units failure
    one = ch.interleaved_failure(unit_bits, byte_units, t, 1)
    assert one["codeword_failure"] == pytest.approx(_plain_frame(ch, unit_bits, byte_units, t, 1), rel=1e-9)
    lo, hi = r["frame_failure_bounds"]
    assert lo <= r["frame_failure"] <= hi


def test_interleaved_memoryless_is_independent_codewords():
    # memoryless chain: codewords independent, frame = 1 - (1 - p)^I with p from scipy.stats.binom
    f = 2e-3
    ch = _memoryless(f)
    r = ch.interleaved_failure(8, [1] * 40, 3, 4)
    p = stats.binom.sf(3, 40, stats.binom.sf(0, 8, f))
    assert r["codeword_failure"] == pytest.approx(p, rel=1e-9)
    assert r["frame_failure"] == pytest.approx(1 - (1 - p) ** 4, rel=1e-9)


def test_interleaving_cuts_the_burst_failure():
    ch = GilbertElliott(1e-3, 20.0)
    plain = ch.units_failure(255, 8, 16)
    r = ch.interleaved_failure(8, [1] * 255, 16, 4, exact=False)
    assert r["codeword_failure"] < plain / 1e4


DOWNLINK = ROOT / "examples" / "telemetry_downlink.toml"


def test_analyze_interleaved_json(tmp_path):
    js = tmp_path / "a.json"
    assert cli.main(["analyze", str(DOWNLINK), "--flip-prob", "1e-3", "--channel", "burst", "--burst-len", "20",
                     "--json", str(js)]) == 0
    data = json.loads(js.read_text())
    assert data["depth"] == 4 and data["frame_exact"] is True
    lo, hi = data["frame_failure_bounds"]
    assert lo == data["codeword_failure"] and lo <= data["frame_failure"] <= hi == pytest.approx(4 * lo)
    assert data["block_failure"] == data["frame_failure"]


def test_interleaved_simulation_brackets_the_exact_frame_failure():
    text = ('[code]\nname = "small_frame"\nfamily = "reed-solomon"\n[reed-solomon]\nn = 24\nk = 16\n'
            '[interleave]\ndepth = 3\n')
    model = make_model(text)
    ch = GilbertElliott(0.02, 12.0)
    exact = analysis.block_failure(model, ch)
    assert 0.02 < exact < 0.9
    res = simulate.run(model.spec, ch, 2000, seed=9, progress=False)
    lo, hi = res.ci95
    assert lo <= exact <= hi


def test_recommend_under_bursts_interleaves_where_the_bsc_pick_misses(tmp_path):
    from bitmend import spec as specmod
    from bitmend.channels import BSC, recommend
    from bitmend.codes import build
    burst = GilbertElliott(1e-3, 20.0)
    target = 1e-9
    bsc_pick = recommend.search(512, BSC(1e-3), target, families=["reed-solomon"]).best
    # the BSC's pick, judged on the bursty channel: far from the target
    model = build(specmod.parse(bsc_pick.doc("fast"), "pick.toml"))
    miss = bsc.repeat_failure(analysis.block_failure(model, burst), bsc_pick.codewords)
    assert miss > 100 * target
    out = recommend.search(512, burst, target, families=["reed-solomon"])
    best = out.best
    assert best.depth > 1 or best.t > bsc_pick.t
    assert best.block_failure <= target
    # held against the exact frame recursion (the search used the union bound, an upper bound)
    model = build(specmod.parse(best.doc("fast"), "best.toml"))
    frames = -(-best.codewords // best.depth)
    assert bsc.repeat_failure(analysis.block_failure(model, burst), frames) <= best.block_failure
    assert out.as_dict()["candidates"][0]["depth"] == best.depth
    text = recommend.spec_text(best, out)
    assert ("[interleave]" in text) == (best.depth > 1)
