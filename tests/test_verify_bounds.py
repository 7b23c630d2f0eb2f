"""Bounded work in verify (issue 13 item 5): the case count is stated up front, grows with --budget and
not with n or t, and the cases stream (the generator never holds the whole error space)."""
from __future__ import annotations

import tracemalloc

import numpy as np

from bitmend import cli, verify
from conftest import make_model

BIG_CRC = """[code]
name = "big"
family = "crc-repetition"
[crc]
width = 64
poly = 0x42F0E1EBA9EA3693
[repetition]
data_bytes = 65535
copies = 64
"""
BIG_BCH = '[code]\nname = "bigbch"\nfamily = "bch"\n[bch]\nm = 16\nt = 1000\n'


def test_case_count_follows_the_budget_not_the_code():
    crc, bch = make_model(BIG_CRC), make_model(BIG_BCH)
    assert crc.properties.n == 33558016 and bch.properties.t == 1000
    for model in (crc, bch):
        small, large = verify.case_count(model, 1, 1), verify.case_count(model, 1, 20)
        assert small <= 30 and large <= 1100, (small, large)


def test_cases_stream_in_a_few_megabytes():
    """Every case of the biggest CRC campaign generated (without the C and the model): the error space
    of 33.5 million bit offsets is never materialised."""
    model = make_model(BIG_CRC)
    tracemalloc.start()
    try:
        kinds = {case.kind for case in verify._Cases(model, np.random.default_rng(1), 3).all()}
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert peak < 8 << 20, peak
    assert {"clean", "weight 1", "weight 32", "parity only", "bursts", "weight 35 (beyond t)"} <= kinds


def test_spread_reaches_both_ends():
    assert verify.spread(1, 5, 8) == [1, 2, 3, 4, 5]
    assert verify.spread(1, 1000, 4) == [1, 334, 667, 1000]


def test_verify_states_its_size_first(tmp_path, capsys):
    text = '[code]\nname = "w"\nfamily = "hamming"\n[hamming]\ndata_bits = 16\n'
    spec = tmp_path / "w.toml"
    spec.write_text(text)
    p = make_model(text).properties
    assert cli.main(["verify", str(spec), "--budget", "10"]) == 0
    out = capsys.readouterr().out
    total = int(out.split("total")[1].split()[0])
    assert out.splitlines()[0] == (f"w [fast]: {total} cases, the C against the model; one word in memory at a "
                                   f"time ({p.data_bytes + p.parity_bytes} bytes of data + parity, a few times "
                                   "that in the model's working copies)")
