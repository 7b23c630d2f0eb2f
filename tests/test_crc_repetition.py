"""CRC + repetition: the repairs the frame promises, in the generated C, against the model."""
from __future__ import annotations

import pytest

from conftest import compile_model, make_model


def spec(copies: int, data_bytes: int = 20, profile: str = "fast", width: int = 16) -> str:
    poly = {16: "0x1021", 8: "0x07", 5: "0x05"}[width]
    return f"""
[code]
name = "rep{copies}_{width}_{data_bytes}"
family = "crc-repetition"
[crc]
width = {width}
poly = {poly}
init = 0
reflect_in = true
reflect_out = true
[repetition]
copies = {copies}
data_bytes = {data_bytes}
[c]
profile = "{profile}"
"""


def frame(model, mod, data):
    rc, parity = mod.encode(data, model.parity_len(len(data)))
    assert rc == 0 and parity == model.encode(data)
    return parity


def flip(buf: bytes, bit: int) -> bytes:
    b = bytearray(buf)
    b[bit // 8] ^= 0x80 >> (bit % 8)
    return bytes(b)


def both(model, mod, data, parity):
    got = mod.decode(data, parity)
    assert got == model.decode(data, parity)
    return got


PROFILES = ["fast", "small", "tiny"]


@pytest.mark.parametrize("profile", PROFILES)
def test_destroyed_copy_repaired(profile):
    m = make_model(spec(3, profile=profile))
    mod = compile_model(m)
    data = bytes(range(20))
    parity = frame(m, mod, data)
    block = 20 + 2
    wrecked = parity[:2] + b"\x5a" * block + parity[2 + block:]       # copy 1 overwritten
    rc, d, p = both(m, mod, data, wrecked)
    assert rc > 0 and d == data and p == parity
    assert mod.check(d, p) == 0


@pytest.mark.parametrize("profile", PROFILES)
def test_same_bit_in_two_copies(profile):
    m = make_model(spec(3, profile=profile))
    mod = compile_model(m)
    data = bytes(range(100, 120))
    parity = frame(m, mod, data)
    bad_data = flip(data, 77)
    bad_parity = flip(parity, 8 * (2 + 22) + 77)                       # bit 77 of copy 2
    rc, d, p = both(m, mod, bad_data, bad_parity)
    assert (rc, d, p) == (2, data, parity)


@pytest.mark.parametrize("profile", PROFILES)
def test_scattered_flips(profile):
    m = make_model(spec(5, profile=profile))
    mod = compile_model(m)
    data = b"scattered flips here"
    parity = frame(m, mod, data)
    d, p = data, parity
    flips = [3, 40, 8 * 20 + 5, 8 * 22 + 90, 8 * 44 + 13, 8 * 66 + 150, 8 * 88 + 170]
    for bit in flips:
        if bit < 8 * 20:
            d = flip(d, bit)
        else:
            p = flip(p, bit - 8 * 20)
    rc, d2, p2 = both(m, mod, d, p)
    assert (rc, d2, p2) == (len(flips), data, parity)


@pytest.mark.parametrize("profile", PROFILES)
def test_every_copy_broken_is_uncorrectable_untouched(profile):
    m = make_model(spec(3, profile=profile))
    mod = compile_model(m)
    data = bytes(20)
    parity = frame(m, mod, data)
    d = flip(data, 5)                                                # bit 5 wrong in copies 0 and 1:
    p = flip(flip(parity, 8 * 2 + 5), 8 * (2 + 22) + 100)            # the vote fails, and copy 2 is hit too
    assert both(m, mod, d, p) == (-1, d, p)
    assert mod.check(d, p) == 1


@pytest.mark.parametrize("profile", PROFILES)
def test_two_copies_select_the_clean_one(profile):
    m = make_model(spec(2, profile=profile))
    mod = compile_model(m)
    assert m.properties.t == 1
    data = b"two copies, one bad!"
    parity = frame(m, mod, data)
    assert both(m, mod, flip(data, 0), parity) == (1, data, parity)              # copy 0 bad
    assert both(m, mod, data, flip(parity, 8 * 2 + 33)) == (1, data, parity)     # copy 1 bad


@pytest.mark.parametrize("profile", PROFILES)
def test_one_copy_detects_only(profile):
    m = make_model(spec(1, profile=profile))
    mod = compile_model(m)
    data = bytes(range(20))
    parity = frame(m, mod, data)
    assert both(m, mod, data, parity) == (0, data, parity)
    bad = flip(data, 100)
    assert both(m, mod, bad, parity) == (-1, bad, parity)


@pytest.mark.parametrize("profile", PROFILES)
def test_lengths(profile):
    m = make_model(spec(3, profile=profile))
    mod = compile_model(m)
    assert mod.encode(bytes(21), m.parity_len(20))[0] == -2           # data_len > data_bytes
    assert mod.encode(b"", 8)[0] == -2
    assert mod.decode(bytes(21), bytes(m.parity_len(21)))[0] == -2
    short = b"short"
    parity = frame(m, mod, short)
    assert len(parity) == 2 + 2 * (5 + 2)                                # CRC + (copies-1)(len+CRC)
    assert both(m, mod, flip(short, 7), parity) == (1, short, parity)


def test_odd_width_crc_padding():
    """A 5-bit CRC: stored in one byte, most significant bit first, zero-padded at the end."""
    m = make_model(spec(3, data_bytes=6, width=5, profile="tiny"))
    mod = compile_model(m)
    data = b"abcdef"
    parity = frame(m, mod, data)
    assert parity[0] & 0x07 == 0 and parity[0] >> 3 == m.crc.compute(data)


def test_count_saturates_at_int16_max():
    """A destroyed copy of a 65535-byte block changes more bits than a 16-bit int holds."""
    m = make_model(spec(3, data_bytes=65535, width=8, profile="fast"))
    mod = compile_model(m)
    data = b"\xff" * 65535
    parity = frame(m, mod, data)
    wiped = parity[:1] + bytes(65536) + parity[1 + 65536:]
    rc, d, p = mod.decode(data, wiped)
    assert (rc, d, p) == (32767, data, parity)
