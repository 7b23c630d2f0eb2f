"""The word-wide C paths on data at every alignment and of every length modulo the step width.

The fast CRC steps a register's width of bytes at a time, the tiny CRC a register's width per word; BCH and
Reed-Solomon step 32 data bits at a time.  Each reads bytes and assembles words itself, so the result must
not depend on where the data sits: every offset 0..7 of the data pointer, every length around multiples
of the step, against the model (whose CRC definition meets the catalogue's check values in test_crc.py,
and whose BCH and RS parity meet galois in test_bch_galois.py / test_reed_solomon_galois.py).
"""
from __future__ import annotations

import numpy as np
import pytest

from conftest import compile_model, make_model, rs_toml
from crc_catalogue import CATALOGUE
from test_bch import bch_toml
from test_crc import spec_text

CRCS = ["CRC-5/USB", "CRC-16/IBM-3740", "CRC-32/ISO-HDLC", "CRC-64/XZ"]
RNG = np.random.default_rng(11)
BYTES = RNG.integers(0, 256, 96, dtype=np.uint8).tobytes()


@pytest.mark.parametrize("profile", ["fast", "small", "tiny"])
@pytest.mark.parametrize("name", CRCS)
def test_crc_any_offset_any_length(name, profile):
    entry = next(e for e in CATALOGUE if e[0] == name)
    model = make_model(spec_text(0, entry), profile)
    mod = compile_model(model)
    buf = mod.ffi.new("uint8_t[]", BYTES)
    crc = mod.fn("crc")
    for offset in range(8):
        for length in range(0, 42):
            data = BYTES[offset:offset + length]
            assert crc(buf + offset, length) == model.crc.compute(data), (offset, length)


WORD_CODES = [bch_toml("b_words", 13, 8, 8 * 40), rs_toml("r_words", 255, 223, 0x187, 112, 11)]


@pytest.mark.parametrize("text", WORD_CODES, ids=["bch", "reed-solomon"])
def test_block_codes_any_offset_any_length(text):
    model = make_model(text, "fast")
    mod = compile_model(model)
    ffi = mod.ffi
    plen = model.parity_len(1)
    for length in [1, 2, 3, 4, 5, 6, 7, 8, 9, 31, 37, 38, 39, 40]:
        data = BYTES[:length]
        parity = model.encode(data)
        for offset in range(4):
            buf = ffi.new("uint8_t[]", bytes(offset) + data)
            out = ffi.new("uint8_t[]", plen)
            assert mod.fn("encode")(buf + offset, length, out) == 0
            assert bytes(ffi.buffer(out, plen)) == parity, (length, offset)
            # one damaged unit in the data: decode from the same offset repairs it
            damaged = bytearray(bytes(offset) + data)
            damaged[offset + length // 2] ^= 0x40
            buf = ffi.new("uint8_t[]", bytes(damaged))
            par = ffi.new("uint8_t[]", parity)
            assert mod.fn("decode")(buf + offset, length, par) == 1
            assert bytes(ffi.buffer(buf, offset + length))[offset:] == data
