"""SECDED / Hamming word API (data_bits <= 64): P_encode_word / P_decode_word through the C, proven against
the byte API of the same C module and against the model's word functions."""
from __future__ import annotations

import itertools

import numpy as np
import pytest

from bitmend.codes.base import ERR_ARG, ERR_UNCORRECTABLE
from conftest import compile_model, hamming_toml, make_model

RNG = np.random.default_rng(64)


class Word:
    """The module's word functions on Python ints."""

    def __init__(self, model, module):
        self.model, self.mod = model, module
        self.wtype = f"{model.spec.name}_word_t *"

    def encode(self, word: int) -> int:
        return int(self.mod.fn("encode_word")(word))

    def decode(self, word: int, checks: int) -> tuple[int, int, int]:
        w, c = self.mod.ffi.new(self.wtype, word), self.mod.ffi.new("uint8_t *", checks)
        rc = self.mod.fn("decode_word")(w, c)
        return rc, int(w[0]), int(c[0])

    def via_bytes(self, word: int, checks: int) -> tuple[int, int, int]:
        """The byte API of the same C module on the same bits (the reference of the word API)."""
        m = self.model
        rc, d, p = self.mod.decode(m.word_to_bytes(word), m.checks_to_bytes(checks))
        if rc <= 0:
            return rc, word, checks
        return rc, m.bytes_to_word(d), m.bytes_to_checks(p)


CASES = [(8, False, "fast"), (12, True, "tiny"), (16, True, "small"), (32, True, "fast"), (32, True, "small"),
         (32, True, "tiny"), (57, False, "small"), (64, True, "fast"), (64, True, "tiny")]


@pytest.mark.parametrize("k,secded,profile", CASES, ids=[f"{k}{'d' if s else 's'}-{p}" for k, s, p in CASES])
def test_word_api_equals_the_byte_api(k, secded, profile):
    model = make_model(hamming_toml(k, secded, profile))
    w = Word(model, compile_model(model))
    header_type = {8: 8, 12: 16, 16: 16, 32: 32, 57: 64, 64: 64}[k]     # the smallest uintN_t that holds k bits
    assert w.mod.ffi.sizeof(w.wtype[:-2]) * 8 == header_type
    mask, r = (1 << k) - 1, model.r
    words = [0, mask, 1, 1 << (k - 1)] + [int(x) for x in RNG.integers(0, 1 << min(k, 63), 20, dtype=np.uint64)]
    for word in words:
        checks = w.encode(word)
        # encode: the byte API's parity, read as an integer; the model agrees
        assert checks == model.bytes_to_checks(w.mod.encode(model.word_to_bytes(word), model.parity_bytes)[1])
        assert checks == model.encode_word(word) < (1 << r)
        assert w.decode(word, checks) == (0, word, checks)
        # every single error, data or check bit: corrected, as the byte API does it
        for bit in range(k + r):
            rw = word ^ (1 << (k - 1 - bit)) if bit < k else word
            rc = checks ^ (1 << (r - 1 - (bit - k))) if bit >= k else checks
            got = w.decode(rw, rc)
            assert got == w.via_bytes(rw, rc) == model.decode_word(rw, rc) == (1, word, checks)
        # double errors: every pair for short words, a sample otherwise; SECDED detects each one
        pairs = list(itertools.combinations(range(k + r), 2))
        if len(pairs) > 300:
            pairs = [pairs[i] for i in RNG.choice(len(pairs), 300, replace=False)]
        for a, b in pairs:
            rw, rc = word, checks
            for bit in (a, b):
                if bit < k:
                    rw ^= 1 << (k - 1 - bit)
                else:
                    rc ^= 1 << (r - 1 - (bit - k))
            got = w.decode(rw, rc)
            assert got == w.via_bytes(rw, rc) == model.decode_word(rw, rc)
            if secded:
                assert got == (ERR_UNCORRECTABLE, rw, rc)


def test_bits_above_the_word_are_ignored_and_kept():
    model = make_model(hamming_toml(12, True, "fast"))
    w = Word(model, compile_model(model))
    word = 0xABC
    checks = w.encode(word)
    assert w.encode(0xF000 | word) == checks                          # bits 12..15 of the uint16_t ignored
    high = 0xF000 | word ^ 0x010                                      # one data error under garbage
    assert w.decode(high, 0xC0 | checks) == (1, 0xF000 | word, 0xC0 | checks)
    assert model.decode_word(high, 0xC0 | checks) == (1, 0xF000 | word, 0xC0 | checks)


def test_null_pointers_are_argument_errors():
    model = make_model(hamming_toml(32, True, "fast"))
    mod = compile_model(model)
    c = mod.ffi.new("uint8_t *", 0)
    assert mod.fn("decode_word")(mod.ffi.NULL, c) == ERR_ARG
    assert mod.fn("decode_word")(mod.ffi.new(f"{model.spec.name}_word_t *", 0), mod.ffi.NULL) == ERR_ARG


def test_no_word_api_beyond_64_bits():
    model = make_model(hamming_toml(65, True, "fast"))
    from bitmend import emit
    assert "_encode_word" not in emit.render(model)["h65dfast.h"]
