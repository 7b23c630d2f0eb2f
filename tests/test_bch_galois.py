"""Binary BCH: the model and the generated C (profile fast) against galois.BCH with the same field, the same
primitive element x and the same shortening (galois's own shortened construction: the first k - s message
bits in, the first n - s codeword bits out).

For each code and data_len: parity of random messages; decoding of up to t errors (always corrected, the
count returned) and of t+1 .. t+4 errors (the same correction as galois, or failure on both sides with the
buffers untouched); check() against galois's detect().
"""
from __future__ import annotations

import numpy as np
import pytest

from bitmend.codes.base import ERR_UNCORRECTABLE
from bitmend.gf import DEFAULT_PRIMITIVE
from conftest import ROOT, compile_model, make_model
from test_bch import bch_toml

# (id, spec text, data lengths to try, words per error weight up to t, words per weight beyond t)
CODES = [
    ("flash_m13_t8", (ROOT / "examples" / "flash_page.toml").read_text(), [512, 37], 1, 2),
    ("meter_m8_t3_poly12B", (ROOT / "examples" / "meter_reading.toml").read_text(), [16, 1], 6, 12),
    ("m8_t5_poly169_odd", bch_toml("g8", 8, 5, 203, 0x169), [26], 4, 10),
    ("m10_t5_short", bch_toml("g10", 10, 5, 64), [8, 3, 1], 3, 6),
    ("m5_t3_full", bch_toml("g5", 5, 3), [2], 8, 25),
    ("m6_t2_poly61_full", bch_toml("g6", 6, 2, None, 0x61), [7], 8, 25),
]


@pytest.fixture(scope="module", params=CODES, ids=[c[0] for c in CODES])
def code(request):
    import galois
    ident, text, lengths, per_t, per_beyond = request.param
    model = make_model(text, "fast")
    # jit for the large fields; python-calculate (no compilation) is quick enough up to GF(2^8) and keeps
    # the suite fast (galois's python mode cannot hold GF(2^10) elements in a GF(2) word's uint8 array)
    mode = "python-calculate" if model.m <= 8 else None
    kwargs = {"compile": mode} if mode else {}
    field = galois.GF(2 ** model.m, irreducible_poly=model.field_poly, **kwargs)
    ref = galois.BCH(model.order, model.k_parent, extension_field=field, alpha=field(2))
    return model, compile_model(model), ref, lengths, per_t, per_beyond


def word_bits(model, data: bytes, parity: bytes) -> np.ndarray:
    return model._word_bits(data, parity).astype(np.int64)


def split(model, bits: np.ndarray, like_data: bytes, like_parity: bytes) -> tuple[bytes, bytes]:
    """Code bits back into buffers, keeping the pad bits of the given buffers."""
    nd = model.data_bits_for(len(like_data))
    d = np.unpackbits(np.frombuffer(like_data, np.uint8))
    p = np.unpackbits(np.frombuffer(like_parity, np.uint8))
    d[:nd], p[:model.r] = bits[:nd], bits[nd:]
    return np.packbits(d).tobytes(), np.packbits(p).tobytes()


def test_field_and_generator_match_galois(code):
    model, _, ref, *_ = code
    assert ref.t == model.t and ref.n == model.order and ref.k == model.k_parent
    assert int("".join(str(int(c)) for c in ref.generator_poly.coeffs), 2) == model.generator
    assert model.field_poly == int(ref.extension_field.irreducible_poly)
    # the model's exp table (printed into the C) is the powers of galois's alpha
    powers = ref.alpha ** np.arange(model.order)
    assert np.array_equal(np.asarray(powers, dtype=np.int64), np.asarray(model.field.exp_list))
    if model.spec.table("bch").field_poly is None:
        assert model.field_poly == DEFAULT_PRIMITIVE[model.m]


def test_parity_matches_galois(code):
    model, module, ref, lengths, *_ = code
    import galois
    rng = np.random.default_rng(21)
    for n in lengths:
        msgs = [rng.integers(0, 256, n, dtype=np.uint8).tobytes() for _ in range(6)]
        msgs += [bytes(n), b"\xff" * n]
        nd = model.data_bits_for(n)
        bits = galois.GF2(np.array([np.unpackbits(np.frombuffer(m, np.uint8))[:nd] for m in msgs]))
        want = np.asarray(ref.encode(bits, output="parity"))
        for msg, row in zip(msgs, want):
            parity = model.encode(msg)
            assert np.array_equal(np.unpackbits(np.frombuffer(parity, np.uint8))[:model.r], row)
            assert module.encode(msg, model.parity_len(n)) == (0, parity)


def test_decoding_matches_galois(code):
    import galois
    model, module, ref, lengths, per_t, per_beyond = code
    rng = np.random.default_rng(33)
    t = model.t
    cases = []            # (weight, data, parity, received data, received parity)
    for n in lengths:
        units = model.error_units(n)
        for w in list(range(1, t + 1)) + list(range(t + 1, t + 5)):
            for _ in range(per_t if w <= t else per_beyond):
                data = rng.integers(0, 256, n, dtype=np.uint8).tobytes()
                parity = model.encode(data)
                frame = bytearray(data + parity)
                for i in rng.choice(len(units), w, replace=False):
                    bit = units[int(i)]
                    frame[bit // 8] ^= 0x80 >> (bit % 8)
                cases.append((w, data, parity, bytes(frame[:n]), bytes(frame[n:])))
    by_len: dict[int, list] = {}
    for case in cases:
        by_len.setdefault(len(case[1]), []).append(case)
    agreed_corrections_beyond_t = 0
    for n, group in by_len.items():
        received = galois.GF2(np.array([word_bits(model, rd, rp) for _, _, _, rd, rp in group]))
        decoded, nerr = ref.decode(received, output="codeword", errors=True)
        detected = ref.detect(received)
        for (w, data, parity, rd, rp), row, count, det in zip(group, np.asarray(decoded), nerr, detected):
            got_model = model.decode(rd, rp)
            got_c = module.decode(rd, rp)                 # guarded buffers: no write outside them
            assert got_c == got_model
            assert module.check(rd, rp) == int(bool(det)) == model.check(rd, rp)
            if w <= t:
                assert count == w and got_model == (w, data, parity)
            if count < 0:
                assert got_model == (ERR_UNCORRECTABLE, rd, rp)
            else:
                assert got_model[0] == count
                assert got_model[1:] == split(model, row.astype(np.int64), rd, rp)
                assert module.check(*got_model[1:]) == 0
                if w > t:
                    agreed_corrections_beyond_t += 1
    if model.order <= 63:
        # short full-length codes decode a good share of t+1.. error words to another codeword
        assert agreed_corrections_beyond_t > 0
