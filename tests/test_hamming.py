"""Hamming / SECDED: closed forms, exhaustive single and double errors, model and C."""
from __future__ import annotations

import itertools

import numpy as np
import pytest

from bitmend.codes.hamming import check_bits
from conftest import compile_model, hamming_toml, make_model


# Check-bit counts of the classic memory codes: common practice, no source
# (SECDED (13,8), (22,16), (39,32), (72,64); SEC (71,64) and (38,32)).
@pytest.mark.parametrize("k,secded,r", [(8, True, 5), (16, True, 6), (32, True, 7), (64, True, 8),
                                         (64, False, 7), (32, False, 6), (1, False, 2), (4, False, 3),
                                         (11, False, 4), (1024, True, 12)])
def test_minimum_check_bits(k, secded, r):
    assert check_bits(k, secded) == r
    # closed form: the fewest r with 2^r >= k + r + 1 (one more for SECDED)
    base = r - 1 if secded else r
    assert 2 ** base >= k + base + 1 and 2 ** (base - 1) < k + base


@pytest.mark.parametrize("k", [64, 32, 16, 8])
def test_secded_exhaustive_model(k):
    """(72,64), (39,32), (22,16), (13,8): distinct odd-weight columns, every single error corrected,
    every double error detected, minimum distance 4 (Hsiao's construction, 1970)."""
    m = make_model(hamming_toml(k))
    p = m.properties
    assert (p.n, p.k, p.d) == (k + check_bits(k, True), k, 4)
    H = m.H
    cols = [tuple(H[:, i]) for i in range(p.n)]
    assert len(set(cols)) == p.n and all(sum(c) % 2 == 1 for c in cols)
    assert all(sum(c) >= 3 for c in cols[:k])
    # Hsiao: lightest columns first, so total weight is minimal: all weight-3 columns before any weight-5
    weights = sorted(sum(c) for c in cols[:k])
    r = check_bits(k, True)
    from math import comb
    assert weights[:min(k, comb(r, 3))] == [3] * min(k, comb(r, 3))
    rng = np.random.default_rng(k)
    data = rng.integers(0, 256, p.data_bytes, dtype=np.uint8).tobytes()
    parity = m.encode(data)
    assert m.check(data, parity) == 0
    frame_bits = m.error_units(p.data_bytes)
    for i in frame_bits:
        d, q = _flip(data, parity, [i], p.data_bytes)
        assert m.check(d, q) == 1
        assert m.decode(d, q) == (1, data, parity)
    for i, j in itertools.combinations(frame_bits, 2):
        d, q = _flip(data, parity, [i, j], p.data_bytes)
        assert m.check(d, q) == 1
        assert m.decode(d, q) == (-1, d, q)


def test_hsiao_72_64_rows_balanced():
    """The (72,64) code: 56 weight-3 and 8 weight-5 columns, every row of weight 26 (Hsiao 1970's
    minimum odd-weight-column code: equal row weights; from memory)."""
    m = make_model(hamming_toml(64))
    w = m.H[:, :64].sum(axis=0)
    assert (w == 3).sum() == 56 and (w == 5).sum() == 8
    assert set(m.H[:, :64].sum(axis=1).tolist()) == {26}


def test_sec_64_corrects_every_single_error():
    m = make_model(hamming_toml(64, secded=False))
    assert m.properties.n == 71 and m.properties.d == 3
    data = bytes(range(1, 9))
    parity = m.encode(data)
    for i in m.error_units(8):
        d, q = _flip(data, parity, [i], 8)
        assert m.decode(d, q) == (1, data, parity)


def _flip(data, parity, bits, n):
    frame = bytearray(data + parity)
    for b in bits:
        frame[b // 8] ^= 0x80 >> (b % 8)
    return bytes(frame[:n]), bytes(frame[n:])


@pytest.mark.parametrize("profile", ["fast", "small", "tiny"])
@pytest.mark.parametrize("k", [8, 16, 32, 64])
def test_c_secded_every_single_and_double_error(k, profile):
    """The generated C: every single error corrected, every double error detected with both buffers
    untouched, check flags every error."""
    m = make_model(hamming_toml(k, profile=profile))
    mod = compile_model(m)
    data = bytes((37 * i + 11) & 0xFF for i in range(m.properties.data_bytes))
    rc, parity = mod.encode(data, m.properties.parity_bytes)
    assert rc == 0 and parity == m.encode(data)
    units = m.error_units(len(data))
    for i in units:
        d, q = _flip(data, parity, [i], len(data))
        assert mod.check(d, q) == 1
        assert mod.decode(d, q) == (1, data, parity)
    for i, j in itertools.combinations(units, 2):
        d, q = _flip(data, parity, [i, j], len(data))
        assert mod.check(d, q) == 1
        assert mod.decode(d, q) == (-1, d, q)


@pytest.mark.parametrize("profile", ["fast", "small", "tiny"])
def test_c_sec_64_every_single_error(profile):
    m = make_model(hamming_toml(64, secded=False, profile=profile))
    mod = compile_model(m)
    data = bytes(range(200, 208))
    rc, parity = mod.encode(data, 1)
    assert rc == 0
    for i in m.error_units(8):
        d, q = _flip(data, parity, [i], 8)
        assert mod.decode(d, q) == (1, data, parity)


@pytest.mark.parametrize("profile", ["fast", "small", "tiny"])
def test_c_length_and_null_arguments(profile):
    m = make_model(hamming_toml(32, profile=profile))
    mod = compile_model(m)
    assert mod.encode(bytes(3), 1)[0] == -2
    assert mod.decode(bytes(5), bytes(1))[0] == -2
    assert mod.check(bytes(3), bytes(1)) == -2
    ffi = mod.ffi
    buf = ffi.new("uint8_t[8]")
    assert mod.fn("encode")(ffi.NULL, 4, buf) == -3
    assert mod.fn("decode")(buf, 4, ffi.NULL) == -3
    assert mod.fn("check")(ffi.NULL, 4, buf) == -3


def test_odd_sizes_padding_never_touched():
    """k not a multiple of 8: padding bits of data and parity are ignored and never changed."""
    m = make_model(hamming_toml(13, profile="small"))
    mod = compile_model(m)
    data = bytes([0xAB, 0xC7])          # low 3 bits of byte 1 are padding
    rc, parity = mod.encode(data, m.properties.parity_bytes)
    assert rc == 0 and parity == m.encode(data)
    assert parity[-1] & ((1 << (8 * len(parity) - m.r)) - 1) == 0
    d2 = bytes([0xAB, 0xC0])            # same data bits, other padding
    assert mod.check(d2, parity) == 0 and mod.decode(d2, parity) == (0, d2, parity)
