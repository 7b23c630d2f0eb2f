"""Reed-Solomon family: C against the model (docs/DESIGN.md §6, erasures included) for every example in every
profile, the C API's edge cases, the header's stated costs, and spec errors through the CLI."""
from __future__ import annotations

import re
import subprocess

import numpy as np
import pytest

from conftest import ROOT, compile_model, make_model, rs_toml

from bitmend import cli, emit, harness, verify
from bitmend.codes.base import ERR_ARG, ERR_LENGTH, ERR_UNCORRECTABLE

EXAMPLES = {p.stem: p for p in (ROOT / "examples").glob("*.toml")
            if 'family = "reed-solomon"' in p.read_text()}
PROFILES = ("fast", "small", "tiny")
KINDS = ["clean", "every data_len", "zeros data", "ones data", "parity only", "first/last unit", "bursts",
         "erasures", "erasures+errors", "erasures+errors (beyond)", "bad erasure list"]


def _example(name: str, profile: str):
    model = make_model(EXAMPLES[name].read_text(), profile=profile)
    return model, compile_model(model)


def test_examples_present():
    assert {"beacon_telemetry", "archive_block"} <= set(EXAMPLES)


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("name", ["beacon_telemetry", "archive_block"])
def test_campaign_c_equals_model(name, profile):
    model, module = _example(name, profile)
    budget = 40 if model.nroots <= 8 else 8
    report = verify.campaign(model, module, seed=5, budget=budget, progress=False)
    assert report.ok, report.table()
    t = model.t
    kinds = KINDS + [f"weight {w}" for w in range(1, t + 1)] + [f"weight {w} (beyond t)" for w in range(t + 1, t + 4)]
    for kind in kinds:
        assert report.cases.get(kind, 0) > 0, kind


@pytest.fixture(scope="module", params=PROFILES)
def beacon(request):
    return _example("beacon_telemetry", request.param)


def _clean(model, rng, length):
    data = rng.integers(0, 256, length, dtype=np.uint8).tobytes()
    return data, model.encode(data)


def test_every_single_symbol_error_corrected(beacon):
    """Every position of the full-length block, every non-zero error value: corrected, count 1."""
    model, c = beacon
    rng = np.random.default_rng(1)
    data, parity = _clean(model, rng, model.k)
    word = data + parity
    fn = c.fn("decode")                      # unguarded for speed; the guarded paths run elsewhere
    d = c.ffi.new("uint8_t[]", len(data))
    p = c.ffi.new("uint8_t[]", len(parity))
    for pos in range(len(word)):
        for value in range(1, 256):
            bad = bytearray(word)
            bad[pos] ^= value
            c.ffi.memmove(d, bytes(bad[:model.k]), model.k)
            c.ffi.memmove(p, bytes(bad[model.k:]), model.nroots)
            assert fn(d, model.k, p) == 1
            assert bytes(c.ffi.buffer(d, model.k)) + bytes(c.ffi.buffer(p, model.nroots)) == word


def test_every_double_error_position_corrected(beacon):
    model, c = beacon
    rng = np.random.default_rng(2)
    for length in (model.k, 3):
        data, parity = _clean(model, rng, length)
        word = data + parity
        for i in range(len(word)):
            for j in range(i + 1, len(word)):
                bad = bytearray(word)
                bad[i] ^= int(rng.integers(1, 256))
                bad[j] ^= int(rng.integers(1, 256))
                assert c.decode(bytes(bad[:length]), bytes(bad[length:])) == (2, data, parity)


def test_erasures_up_to_capacity_corrected(beacon):
    """2s + e <= n - k is always corrected, through decode_erasures, for model and C."""
    model, c = beacon
    rng = np.random.default_rng(3)
    for length in (model.k, 7, 1):
        total = length + model.nroots
        for e in range(0, model.nroots + 1):
            s = (model.nroots - e) // 2
            for _ in range(15):
                data, parity = _clean(model, rng, length)
                bad = bytearray(data + parity)
                pos = rng.choice(total, min(total, e + s), replace=False).tolist()
                for q in pos[e:]:
                    bad[q] ^= int(rng.integers(1, 256))
                for q in pos[:e]:
                    bad[q] ^= int(rng.integers(0, 256))
                rd, rp = bytes(bad[:length]), bytes(bad[length:])
                changed = sum(a != b for a, b in zip(bad, data + parity))
                want = (changed, data, parity)
                assert model.decode_erasures(rd, rp, pos[:e]) == want
                assert c.decode_erasures(rd, rp, pos[:e]) == want


def test_bad_erasure_lists_leave_buffers_untouched(beacon):
    model, c = beacon
    rng = np.random.default_rng(4)
    length = 10
    total = length + model.nroots
    data, parity = _clean(model, rng, length)
    bad = bytearray(data + parity)
    bad[0] ^= 1
    rd, rp = bytes(bad[:length]), bytes(bad[length:])
    for positions in ([3, 3], [total], [0, 65535], list(range(model.nroots + 1))):
        assert c.decode_erasures(rd, rp, positions) == (ERR_ARG, rd, rp)
        assert model.decode_erasures(rd, rp, positions) == (ERR_ARG, rd, rp)
    assert c.decode_erasures(rd, rp, None, count=1) == (ERR_ARG, rd, rp)     # NULL with a count
    assert c.decode_erasures(rd, rp, None, count=0) == (1, data, parity)      # NULL, no erasures
    assert c.decode_erasures(rd, rp, [total - 1]) == (1, data, parity)        # last parity symbol ok
    assert c.decode_erasures(rd, rp, list(range(model.nroots)))[0] >= 0       # exactly n - k: allowed


def test_arguments_and_lengths(beacon):
    model, c = beacon
    ffi = c.ffi
    d = ffi.new("uint8_t[]", model.k + 1)
    p = ffi.new("uint8_t[]", model.nroots)
    pos = ffi.new("uint16_t[]", 1)
    for short in ("encode", "decode", "check"):
        assert c.fn(short)(ffi.NULL, 4, p) == ERR_ARG
        assert c.fn(short)(d, 4, ffi.NULL) == ERR_ARG
        assert c.fn(short)(d, 0, p) == ERR_LENGTH
        assert c.fn(short)(d, model.k + 1, p) == ERR_LENGTH
    assert c.fn("decode_erasures")(ffi.NULL, 4, p, pos, 1) == ERR_ARG
    assert c.fn("decode_erasures")(d, 0, p, pos, 1) == ERR_LENGTH
    assert c.fn("decode_erasures")(d, model.k + 1, p, pos, 1) == ERR_LENGTH
    assert model.decode(bytes(model.k + 1), bytes(model.nroots))[0] == ERR_LENGTH
    with pytest.raises(ValueError):
        model.encode(b"")


def test_failure_leaves_buffers_untouched(beacon):
    model, c = beacon
    rng = np.random.default_rng(6)
    seen = 0
    for _ in range(400):
        data, parity = _clean(model, rng, model.k)
        bad = bytearray(data + parity)
        for q in rng.choice(len(bad), model.t + 2, replace=False):
            bad[q] ^= int(rng.integers(1, 256))
        rd, rp = bytes(bad[:model.k]), bytes(bad[model.k:])
        rc = c.decode(rd, rp)
        if rc[0] < 0:
            seen += 1
            assert rc == (ERR_UNCORRECTABLE, rd, rp)
    assert seen > 100


def test_parity_two_routes_and_check():
    model = make_model(EXAMPLES["archive_block"].read_text())
    rng = np.random.default_rng(7)
    for length in (1, 2, 100, 223):
        data = rng.integers(0, 256, length, dtype=np.uint8).tobytes()
        parity = model.encode(data)
        assert parity == model.long_division_parity(data)
        assert model.check(data, parity) == 0
        assert model.check(data, bytes([parity[0] ^ 1]) + parity[1:]) == 1
        assert model.syndromes(data + parity) == [0] * model.nroots


def test_ccsds_generator_is_self_reciprocal():
    # CCSDS 131.0-B chose the roots beta^112 .. beta^143 (beta = alpha^11) symmetric about beta^0 so that
    # g(x) is self-reciprocal (its coefficients read the same both ways).  From memory.
    model = make_model(EXAMPLES["archive_block"].read_text())
    assert model.generator == model.generator[::-1]
    assert len(model.generator) == 33


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("name", ["beacon_telemetry", "archive_block"])
def test_every_table_placed_by_table_attr(name, profile):
    model = make_model(EXAMPLES[name].read_text(), profile=profile)
    source = emit.render(model)[f"{name}.c"]
    assert source.count(f"{name.upper()}_TABLE_ATTR static const") == len(model.c_tables())


def test_rendering_is_deterministic_and_prefixed():
    model = make_model(EXAMPLES["beacon_telemetry"].read_text(), profile="fast")
    a, b = emit.render(model), emit.render(model)
    assert a == b
    names = re.findall(r"^(?:static )?(?:int|void|uint8_t|unsigned) (\w+)\(", a["beacon_telemetry.c"], re.M)
    assert names and all(n.startswith("beacon_telemetry_") for n in names)


BASE = """[code]
name = "rs_bad"
family = "reed-solomon"
[reed-solomon]
"""


@pytest.mark.parametrize("body, key", [
    ("n = 256\nk = 200\n", "n"),                       # n > 2^8 - 1
    ("n = 40\nk = 40\n", "k"),                         # k >= n
    ("n = 40\nk = 41\n", "k"),
    # 0x11b is irreducible but x is not primitive modulo it (common practice, no source)
    ("n = 40\nk = 30\nfield_poly = 0x11b\n", "field_poly"),
    ("n = 40\nk = 30\nfield_poly = 0x1d\n", "field_poly"),     # degree 4, not 8
    ("n = 40\nk = 30\nroot_step = 3\n", "root_step"),          # gcd(3, 255) = 3
    ("n = 40\nk = 30\nroot_step = 17\n", "root_step"),
    ("n = 40\nk = 30\nsymbol_bits = 4\n", "symbol_bits"),
])
def test_spec_errors_exit_2_naming_the_key(body, key, tmp_path, capsys):
    spec = tmp_path / "rs_bad.toml"
    spec.write_text(BASE + body)
    out = tmp_path / "out"
    rc = cli.main(["generate", str(spec), "-o", str(out)])
    err = capsys.readouterr().err
    assert rc == 2
    assert f"rs_bad.toml: [reed-solomon] {key}:" in err
    assert not out.exists()


def test_spec_error_through_the_console_script(tmp_path):
    spec = tmp_path / "rs_bad.toml"
    spec.write_text(BASE + "n = 300\nk = 310\nroot_step = 5\nfield_poly = 0x100\n")
    res = subprocess.run([str(ROOT / ".venv" / "bin" / "bitmend"), "generate", str(spec), "-o", str(tmp_path / "o")],
                         capture_output=True, text=True)
    assert res.returncode == 2
    for key in ("n", "k", "field_poly", "root_step"):
        assert f"[reed-solomon] {key}:" in res.stderr, res.stderr


@pytest.mark.skipif(subprocess.run(["sh", "-c", "command -v clang"], capture_output=True).returncode != 0,
                    reason="clang not installed")
@pytest.mark.parametrize("profile", PROFILES)
def test_strict_clean_under_clang(profile, tmp_path):
    for name, path in EXAMPLES.items():
        for fname, text in emit.render(make_model(path.read_text(), profile=profile)).items():
            (tmp_path / fname).write_text(text)
        harness.compile_object(tmp_path / f"{name}.c", tmp_path / f"{name}.o", cc="clang")


@pytest.mark.parametrize("profile", ["fast", "tiny"])
@pytest.mark.parametrize("n, k, poly, first_root, root_step", [
    (3, 2, 0x11D, 0, 1),           # n - k = 1: t = 0, one erasure at most
    (4, 2, 0x187, 254, 254),       # t = 1, first root and step at the top of their range
    (20, 1, 0x12D, 3, 2),          # k = 1: every data_len is 1, t = 9, odd n - k
    (255, 250, 0x11D, 300, 256),   # full length, first_root and root_step taken modulo 255
])
def test_campaign_unusual_parameters(n, k, poly, first_root, root_step, profile):
    text = rs_toml("rs_edge", n, k, poly, first_root, root_step)
    model = make_model(text, profile=profile)
    report = verify.campaign(model, compile_model(model), seed=8, budget=12, progress=False)
    assert report.ok, report.table()
    for kind in ("clean", "erasures", "bad erasure list", f"weight {model.t + 1} (beyond t)"):
        assert report.cases.get(kind, 0) > 0, kind
