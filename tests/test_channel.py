"""bitmend.channels.bsc against outside references: scipy.stats (binom, norm, binomtest), brute-force
enumeration of small channels, and the usual textbook values of the binary entropy."""
from __future__ import annotations

import itertools
import math

import numpy as np
import pytest

from bitmend.channels import bsc as channel
from bitmend.channels.base import wilson_interval

stats = pytest.importorskip("scipy.stats")


# -- entropy and capacity ----------------------------------------------------------------------------------

def test_capacity_at_one_tenth():
    # BSC capacity at f = 0.1 is 0.531 bits per channel use (common practice, no source)
    assert channel.capacity(0.1) == pytest.approx(0.531, abs=5e-4)


def test_entropy_half_bit_near_0_11():
    # H2(0.11) is about one half (common practice, no source)
    assert channel.h2(0.11) == pytest.approx(0.5, abs=1e-3)


@pytest.mark.parametrize("f", [1e-12, 1e-6, 1e-3, 0.05, 0.11, 0.3, 0.5])
def test_entropy_against_scipy(f):
    # scipy.stats.entropy of the distribution (f, 1 - f) in base 2
    assert channel.h2(f) == pytest.approx(stats.entropy([f, 1 - f], base=2), rel=1e-12, abs=1e-15)
    assert channel.h2(f) == pytest.approx(channel.h2(1 - f), rel=1e-12, abs=1e-15)


def test_entropy_ends_and_bad_input():
    assert channel.h2(0.0) == 0.0 and channel.h2(1.0) == 0.0 and channel.h2(0.5) == 1.0
    with pytest.raises(ValueError):
        channel.h2(1.5)


# -- binomial tails --------------------------------------------------------------------------------------

TAIL_CASES = [
    (72, 1, 1e-3), (72, 1, 0.2), (4200, 8, 1e-3), (4200, 26, 1e-3), (4200, 8, 1e-6),
    (204, 8, 0.05), (1632, 20, 1e-4), (100, 30, 1e-3), (1000, 500, 0.3), (1000, 10, 0.3),
    (65535, 100, 1e-3), (8191, 40, 1e-5), (10, 0, 0.5), (5, 4, 0.4),
]


@pytest.mark.parametrize("n,t,p", TAIL_CASES)
def test_tail_against_scipy(n, t, p):
    # scipy.stats.binom.sf / logsf: the survival function P(X > t)
    ref_log = stats.binom.logsf(t, n, p)
    assert channel.log_tail(n, t, p) == pytest.approx(ref_log, rel=1e-10, abs=1e-10)
    ref = stats.binom.sf(t, n, p)
    assert channel.tail(n, t, p) == pytest.approx(ref, rel=1e-9)


@pytest.mark.parametrize("n,t,p", TAIL_CASES)
def test_cdf_against_scipy(n, t, p):
    # scipy.stats.binom.logcdf: P(X <= t)
    assert channel.log_cdf(n, t, p) == pytest.approx(stats.binom.logcdf(t, n, p), rel=1e-10, abs=1e-10)


def test_tiny_tails_are_not_zero():
    # 1e-30 and far smaller: scipy.stats.binom.logsf stays accurate there, a naive 1 - cdf would give 0
    for n, t, p in [(4200, 12, 1e-6), (255, 16, 1e-4), (72, 10, 1e-5), (8191, 60, 1e-6)]:
        ref = stats.binom.logsf(t, n, p)
        assert ref < math.log(1e-30)
        got = channel.log_tail(n, t, p)
        assert got == pytest.approx(ref, rel=1e-10)
        assert 0.0 < channel.tail(n, t, p) < 1e-30 or ref < math.log(1e-300)


def test_tail_edges():
    assert channel.tail(10, 10, 0.3) == 0.0            # more than n errors: impossible
    assert channel.tail(10, -1, 0.3) == 1.0
    assert channel.tail(10, 2, 0.0) == 0.0
    assert channel.tail(10, 2, 1.0) == 1.0
    with pytest.raises(ValueError):
        channel.tail(10, 2, -0.1)


@pytest.mark.parametrize("f,m", [(1e-3, 8), (1e-15, 8), (1e-9, 13), (0.2, 8)])
def test_symbol_error_against_scipy(f, m):
    # 1 - (1 - f)^m = P(Binomial(m, f) > 0), scipy.stats.binom.sf(0, m, f)
    assert channel.symbol_error(f, m) == pytest.approx(stats.binom.sf(0, m, f), rel=1e-12)


def test_symbol_error_without_cancellation():
    # at f = 1e-17 the naive 1 - (1 - f)**8 is exactly 0 in double precision; m f is the first-order value
    f = 1e-17
    assert 1 - (1 - f) ** 8 == 0.0
    assert channel.symbol_error(f, 8) == pytest.approx(8 * f, rel=1e-12)


# -- decoder figures -------------------------------------------------------------------------------------

@pytest.mark.parametrize("n,t,p", [(72, 1, 1e-3), (4200, 8, 1e-3), (204, 8, 0.02), (127, 5, 0.05)])
def test_post_decoding_ber_against_direct_sum(n, t, p):
    # sum over i > t of (i / n) P(i errors), each term from scipy.stats.binom.pmf
    i = np.arange(t + 1, n + 1)
    ref = float(np.sum(i / n * stats.binom.pmf(i, n, p)))
    assert channel.post_decoding_ber(n, t, p) == pytest.approx(ref, rel=1e-9)


@pytest.mark.parametrize("n,p", [(72, 1e-3), (39, 1e-2), (72, 0.05), (137, 1e-6)])
def test_secded_split_against_scipy(n, p):
    # even and odd error counts summed from scipy.stats.binom.pmf
    s = channel.secded_split(n, p)
    even = float(sum(stats.binom.pmf(i, n, p) for i in range(2, n + 1, 2)))
    odd = float(sum(stats.binom.pmf(i, n, p) for i in range(3, n + 1, 2)))
    assert s["detected"] == pytest.approx(even, rel=1e-9)
    assert s["undetected"] == pytest.approx(odd, rel=1e-9)
    assert s["block_failure"] == pytest.approx(stats.binom.sf(1, n, p), rel=1e-9)
    assert s["detected"] + s["undetected"] == pytest.approx(s["block_failure"], rel=1e-9)


@pytest.mark.parametrize("copies", [1, 2, 3, 4, 5, 6, 7])
@pytest.mark.parametrize("f", [1e-4, 0.05, 0.3])
def test_vote_error_against_scipy(copies, f):
    # majority of `copies`; on a tie (even copies) copy 0 decides, so half the tie mass counts
    half = copies // 2
    ref = stats.binom.sf(half, copies, f)
    if copies % 2 == 0:
        ref += 0.5 * stats.binom.pmf(half, copies, f)
    assert channel.vote_error(copies, f) == pytest.approx(ref, rel=1e-10)


def _brute_frame(copies: int, bits: int, f: float) -> float:
    """P(vote wrong somewhere and every copy damaged) by enumerating every flip pattern (copies <= 2:
    every copy damaged).  Independent of the Markov chain: straight from the decoder rule."""
    total = 0.0
    for pattern in itertools.product((0, 1), repeat=copies * bits):
        w = sum(pattern)
        prob = f ** w * (1 - f) ** (copies * bits - w)
        rows = [pattern[c * bits:(c + 1) * bits] for c in range(copies)]
        all_damaged = all(any(r) for r in rows)
        if copies <= 2:
            fails = all_damaged
        else:
            wrong = False
            for j in range(bits):
                flips = sum(r[j] for r in rows)
                if 2 * flips > copies or (2 * flips == copies and rows[0][j]):
                    wrong = True
            fails = wrong and all_damaged
        if fails:
            total += prob
    return total


@pytest.mark.parametrize("copies,bits", [(1, 5), (2, 4), (3, 3), (3, 4), (4, 3), (5, 2)])
@pytest.mark.parametrize("f", [0.02, 0.3])
def test_crc_repetition_frame_against_enumeration(copies, bits, f):
    got = channel.crc_repetition(copies, bits, 16, f)["block_failure"]
    assert got == pytest.approx(_brute_frame(copies, bits, f), rel=1e-10, abs=1e-300)


def test_crc_repetition_tiny_failure_is_sound():
    # at f = 1e-9 the frame failure of 3 copies is about 3 (L f)^2 * (L f) ... far below 1e-20;
    # it must be positive and below both simple bounds: P(vote block wrong) and P(every copy damaged)
    r = channel.crc_repetition(3, 8 * 26, 16, 1e-9)
    assert 0.0 < r["block_failure"] < 1e-20
    assert r["block_failure"] <= r["vote_block_error"]
    assert r["block_failure"] <= r["block_damaged"] ** 3
    # the CRC miss is an estimate, stated as 2^-16 per damaged block checked
    assert r["crc_undetected"] == pytest.approx(2.0 ** -16 * r["vote_block_error"] * 4)


def _hamming(k: int, secded: bool):
    from conftest import make_model
    return make_model(f'[code]\nname = "h"\nfamily = "hamming"\n[hamming]\ndata_bits = {k}\n'
                      f'secded = {"true" if secded else "false"}\n')


def _columns(model) -> list[int]:
    from bitmend.channels.analysis import parity_check_columns
    return parity_check_columns(model)


@pytest.mark.parametrize("k,secded", [(4, True), (8, True), (4, False), (8, False)])
@pytest.mark.parametrize("f", [0.01, 0.2])
def test_syndrome_split_against_every_pattern(k, secded, f):
    # every error pattern through the model's Python decode: a flagged pattern (decode < 0) is detected,
    # an accepted one that returns wrong data is undetected; probabilities f^w (1-f)^(n-w)
    model = _hamming(k, secded)
    n = model.properties.n
    units = model.error_units(model.properties.data_bytes)
    data = b"\xa5" * model.properties.data_bytes
    parity = model.encode(data)
    det = und = 0.0
    for pattern in range(1, 1 << n):
        frame = bytearray(data + parity)
        w = 0
        for j in range(n):
            if pattern >> j & 1:
                bit = units[j]
                frame[bit // 8] ^= 0x80 >> (bit % 8)
                w += 1
        rc, got, _ = model.decode(bytes(frame[:len(data)]), bytes(frame[len(data):]))
        prob = f ** w * (1 - f) ** (n - w)
        if rc < 0:
            det += prob
        elif got != data:
            und += prob
    s = channel.syndrome_split(_columns(model), len(model.H), f, secded)
    assert s["detected"] == pytest.approx(det, rel=1e-9, abs=1e-300)
    assert s["undetected"] == pytest.approx(und, rel=1e-9, abs=1e-300)
    assert s["detected"] + s["undetected"] == pytest.approx(stats.binom.sf(1, n, f), rel=1e-9)


def test_perfect_hamming_never_detects():
    # the (15,11) Hamming code is perfect: every syndrome is zero or a column, so a decoder that
    # corrects one error never flags anything (common practice, no source)
    model = _hamming(11, False)
    assert model.properties.n == 15
    s = channel.syndrome_split(_columns(model), len(model.H), 0.01, False)
    assert s["detected"] == 0.0
    assert s["undetected"] == pytest.approx(stats.binom.sf(1, 15, 0.01), rel=1e-12)


def test_syndrome_split_at_tiny_flip_probability():
    # (72,64) SECDED at f = 1e-9: failure about C(72,2) f^2; undetected about 3-error patterns only
    model = _hamming(64, True)
    s = channel.syndrome_split(_columns(model), len(model.H), 1e-9, True)
    assert s["block_failure"] == pytest.approx(stats.binom.sf(1, 72, 1e-9), rel=1e-9)
    assert 0.0 < s["undetected"] < stats.binom.pmf(3, 72, 1e-9) * 1.0001
    assert s["detected"] == pytest.approx(s["block_failure"], rel=1e-6)


# -- finite-length limit -----------------------------------------------------------------------------------

def _ppv_scipy(n: int, f: float, eps: float) -> float:
    """R* = C - sqrt(V/n) Q^-1(eps) + log2(n) / (2n) (Polyanskiy, Poor, Verdu, IEEE Trans. Inf. Theory
    56(5), 2010), evaluated here with scipy.stats.norm.isf and scipy.stats.entropy."""
    c = 1 - stats.entropy([f, 1 - f], base=2)
    v = f * (1 - f) * np.log2((1 - f) / f) ** 2
    return c - np.sqrt(v / n) * stats.norm.isf(eps) + np.log2(n) / (2 * n)


@pytest.mark.parametrize("n,f,eps", [(72, 1e-3, 2.4e-3), (4200, 1e-3, 1e-12), (1632, 5e-3, 1e-9),
                                     (500, 0.11, 1e-3), (1000, 0.05, 0.3), (8192, 1e-4, 1e-30)])
def test_normal_approximation_against_scipy(n, f, eps):
    assert channel.normal_approx_rate(n, f, eps) == pytest.approx(_ppv_scipy(n, f, eps), rel=1e-12)


@pytest.mark.parametrize("eps", [0.4, 1e-3, 1e-12, 1e-30, 1e-100])
def test_qinv_against_scipy(eps):
    # scipy.stats.norm.isf is the inverse Gaussian tail
    assert channel.qinv(eps) == pytest.approx(stats.norm.isf(eps), rel=1e-12)


def test_normal_approximation_tends_to_capacity():
    f = 0.05
    assert channel.normal_approx_rate(10 ** 9, f, 1e-6) == pytest.approx(channel.capacity(f), abs=1e-3)
    assert channel.normal_approx_rate(1000, f, 1e-6) < channel.capacity(f)
    assert math.isnan(channel.normal_approx_rate(1000, f, 0.0))


# -- intervals ------------------------------------------------------------------------------------------

@pytest.mark.parametrize("k,n", [(0, 100), (3, 1000), (450, 2000), (2000, 2000)])
def test_wilson_against_scipy(k, n):
    # scipy.stats.binomtest(...).proportion_ci(method="wilson")
    ci = stats.binomtest(k, n).proportion_ci(confidence_level=0.95, method="wilson")
    lo, hi = wilson_interval(k, n)
    assert lo == pytest.approx(ci.low, abs=1e-12)
    assert hi == pytest.approx(ci.high, abs=1e-12)
