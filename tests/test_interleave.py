"""Interleaved frames ([interleave] depth): the layout against galois's Reed-Solomon encoder, the acceptance
cases through the generated C in every profile, and the spec rules."""
from __future__ import annotations

import numpy as np
import pytest

from bitmend import spec as specmod
from bitmend.codes import build
from conftest import ROOT, compile_model, make_model, make_spec

DOWNLINK = (ROOT / "examples" / "telemetry_downlink.toml").read_text()     # RS(255,223), depth 4


def test_each_codeword_equals_galois():
    # galois.ReedSolomon(255, 223) over GF(2^8) with x^8+x^4+x^3+x^2+1 (0x11D), alpha = x, first root
    # alpha^0: the de-interleaved data and parity of each of the 4 codewords form its codeword
    galois = pytest.importorskip("galois")
    model = make_model(DOWNLINK, profile="fast")
    module = compile_model(model)
    gf = galois.GF(2 ** 8, irreducible_poly=0x11D, compile="python-calculate")
    rs = galois.ReedSolomon(255, 223, field=gf, alpha=gf(2), c=0)
    data = np.random.default_rng(7).integers(0, 256, 892, dtype=np.uint8).tobytes()
    rc, parity = module.encode(data, 128)
    assert rc == 0 and len(parity) == 128
    for i in range(4):
        word = np.asarray(rs.encode(gf(list(data[i::4])))).astype(np.uint8).tobytes()
        assert word == data[i::4] + parity[i::4]


@pytest.mark.parametrize("profile", ["fast", "small", "tiny"])
def test_fade_of_64_bytes_corrected_and_17_in_one_codeword_fail_untouched(profile):
    module = compile_model(make_model(DOWNLINK, profile=profile))
    data = np.random.default_rng(3).integers(0, 256, 892, dtype=np.uint8).tobytes()
    _, parity = module.encode(data, 128)
    frame = bytearray(data + parity)
    for b in range(850, 914):                    # 64 consecutive bytes across the data/parity boundary
        frame[b] ^= 0xFF
    rc, got, got_parity = module.decode(bytes(frame[:892]), bytes(frame[892:]))
    assert (rc, got, got_parity) == (64, data, parity)

    frame = bytearray(data + parity)
    for j in range(17):                          # 17 bytes of codeword 2, at frame bytes 4 j + 2
        frame[4 * (10 + j) + 2] ^= 0x3C
    bad_data, bad_parity = bytes(frame[:892]), bytes(frame[892:])
    rc, got, got_parity = module.decode(bad_data, bad_parity)
    assert (rc, got, got_parity) == (-1, bad_data, bad_parity)
    assert module.check(bad_data, bad_parity) == 1


def test_frame_lengths_and_erasures_in_frame_positions():
    model = make_model(DOWNLINK)
    module = compile_model(model)
    assert list(model.data_lengths())[:3] == [4, 8, 12] and model.properties.data_bytes == 892
    rc, _ = module.encode(bytes(10), 128)        # not a multiple of the depth
    assert rc == -2
    data = bytes(range(256)) * 3 + bytes(124)
    _, parity = module.encode(data, 128)
    # 32 erasures in each codeword: the 128 frame bytes 100..227 (zeroed), all restored
    frame = bytearray(data + parity)
    erased = list(range(100, 228))
    for b in erased:
        frame[b] = 0
    lost = sum(1 for b in erased if data[b])
    rc, got, _ = module.decode_erasures(bytes(frame[:892]), bytes(frame[892:]), erased)
    assert rc == lost and got == data
    # 33 in one codeword: uncorrectable (model and C alike)
    erased = [4 * j + 1 for j in range(33)]
    rc_c = module.decode_erasures(data, parity, erased)[0]
    rc_m = model.decode_erasures(data, parity, erased)[0]
    assert rc_c == rc_m == -1


@pytest.mark.parametrize("text,problem", [
    ('[code]\nname = "x"\nfamily = "hamming"\n[hamming]\ndata_bits = 8\n[interleave]\ndepth = 2\n',
     "[interleave]"),
    ('[code]\nname = "x"\nfamily = "bch"\n[bch]\nm = 8\nt = 2\ndata_bits = 20\n[interleave]\ndepth = 2\n',
     "multiple of 8"),
    ('[code]\nname = "x"\nfamily = "reed-solomon"\n[reed-solomon]\nn = 20\nk = 10\n[interleave]\ndepth = 65\n',
     "[interleave] depth: must be 1..64"),
    ('[code]\nname = "x"\nfamily = "reed-solomon"\n[reed-solomon]\nn = 20\nk = 10\n[interleave]\nlength = 2\n',
     "[interleave] length: unknown key"),
])
def test_spec_rules(text, problem):
    with pytest.raises(specmod.SpecError) as err:
        build(make_spec(text))
    assert problem in str(err.value)


def test_bch_frame_layout_is_bytewise():
    # byte j of codeword i is frame byte j * depth + i, parity too (model level: the C equals the model in
    # the example campaigns)
    text = '[code]\nname = "x"\nfamily = "bch"\n[bch]\nm = 8\nt = 3\ndata_bits = 160\n[interleave]\ndepth = 3\n'
    frame_model = make_model(text)
    one = make_model(text.replace("[interleave]\ndepth = 3\n", ""))
    data = np.random.default_rng(5).integers(0, 256, 60, dtype=np.uint8).tobytes()
    parity = frame_model.encode(data)
    for i in range(3):
        assert parity[i::3] == one.encode(data[i::3])
