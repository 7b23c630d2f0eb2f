"""The word-wide remainder tables (gf.step_context) of BCH and Reed-Solomon against the models' divisions.

A Python run of exactly the steps the generated C takes (32-bit words, then single bytes) must give the
parity the model's reference encoder computes by plain division (BCH: byte-wise binary division by g(x);
RS: the sum of unit-message parities, itself checked against galois in test_reed_solomon_galois.py).
"""
from __future__ import annotations

import numpy as np
import pytest

from conftest import make_model, rs_toml
from test_bch import bch_toml


def run_steps(step: dict, data: bytes) -> bytes:
    """The register after `data`, stepped as the C does it, as big-endian bytes."""
    words, table = step["words"], step["table"]
    reg = [0] * words

    def add(base: int, v: int) -> None:
        for plane in step["planes"]:
            reg[plane["i"]] ^= table[plane["offset"] + base + v]

    whole = len(data) // 4 * 4          # 32-bit steps, then the last bytes one by one
    for i in range(0, whole, 4):
        x = reg[0] ^ int.from_bytes(data[i:i + 4], "big")
        reg[:] = reg[1:] + [0]
        for c in step["chunks"]:
            add(c["base"], (x >> c["shift"]) & c["mask"])
    for byte in data[whole:]:
        x = (reg[0] >> 24) ^ byte
        value = int.from_bytes(b"".join(w.to_bytes(4, "big") for w in reg), "big") << 8
        reg[:] = [(value >> (32 * (words - 1 - w))) & 0xFFFFFFFF for w in range(words)]
        for c in step["tail"]:
            add(c["base"], (x >> c["shift"]) & c["mask"])
    return b"".join(w.to_bytes(4, "big") for w in reg)


CODES = [
    ("bch", bch_toml("b13", 13, 8, 4096), "reg_words"),       # 104-bit remainder, byte chunks
    ("bch", bch_toml("b5", 5, 3, 16), "reg_words"),           # 15 bits in one word
    ("bch", bch_toml("b10", 10, 30, 400), "reg_words"),       # 300 bits: ten words (array form), 6/5-bit chunks
    ("rs", rs_toml("r2", 10, 8), "words"),                  # two parity symbols in one word
    ("rs", rs_toml("r5", 30, 25, first_root=1), "words"),   # five symbols, two words
    ("rs", rs_toml("r32", 255, 223, 0x187, 112, 11), "words"),  # the CCSDS parameter set, 7/6-bit chunks
]


@pytest.mark.parametrize("family,text,words_attr", CODES, ids=[c[1].split('"')[1] for c in CODES])
def test_word_steps_give_the_division_remainder(family, text, words_attr):
    model = make_model(text, "fast")
    words = getattr(model, words_attr)
    step = model.step()
    assert step["words"] == words and 4 * len(step["table"]) <= 16384
    rng = np.random.default_rng(5)
    top = model.properties.data_bytes
    for n in sorted({1, 2, 3, 4, 5, 7, 8, top - 1, top} & set(model.data_lengths())):
        data = rng.integers(0, 256, n, dtype=np.uint8).tobytes()
        parity = model.encode(data)
        assert run_steps(step, data)[:len(parity)] == parity, n
