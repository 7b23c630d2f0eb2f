"""Binary BCH: the model's own maths, spec problems, the textbook generator polynomials, and the generated C
against the model (docs/DESIGN.md §6) for the bundled examples and a few edge-shaped codes."""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from bitmend import cli, emit, verify
from bitmend.codes.base import ERR_ARG, ERR_LENGTH, ERR_UNCORRECTABLE
from bitmend.gf import DEFAULT_PRIMITIVE, bin_mod
from conftest import ROOT, compile_model, make_model

PROFILES = ["fast", "small", "tiny"]
BCH_EXAMPLES = [ROOT / "examples" / "flash_page.toml", ROOT / "examples" / "meter_reading.toml"]


def bch_toml(name: str, m: int, t: int, data_bits: int | None = None, field_poly: int | None = None,
             profile: str = "fast") -> str:
    lines = [f'[code]\nname = "{name}"\nfamily = "bch"\n[bch]\nm = {m}\nt = {t}']
    if data_bits is not None:
        lines.append(f"data_bits = {data_bits}")
    if field_poly is not None:
        lines.append(f"field_poly = {field_poly:#x}")
    lines.append(f'[c]\nprofile = "{profile}"')
    return "\n".join(lines) + "\n"


def bits_of(value: int, width: int) -> str:
    return format(value, f"0{width}b")


# -- generator polynomials vs the published table --------------------------------------------------------

# Lin & Costello, Error Control Coding (2nd ed.), Appendix C, generator polynomials of binary primitive BCH
# codes in octal (highest degree first), built on the primitive polynomials x^4+x+1, x^5+x^2+1, x^6+x+1
# (DEFAULT_PRIMITIVE).  Values from memory; each is also cross-checked against galois below.
TEXTBOOK = [
    # (n, k, t, generator in octal)
    (15, 7, 2, 0o721),          # from memory
    (15, 5, 3, 0o2467),         # from memory
    (31, 21, 2, 0o3551),        # from memory
    (31, 16, 3, 0o107657),      # from memory
    (63, 51, 2, 0o12471),       # from memory
    (63, 45, 3, 0o1701317),     # from memory
]


@pytest.mark.parametrize("n,k,t,octal", TEXTBOOK, ids=[f"{n}_{k}" for n, k, _, _ in TEXTBOOK])
def test_generator_matches_textbook(n, k, t, octal):
    m = n.bit_length()
    model = make_model(bch_toml("gen", m, t))
    assert model.generator == octal
    assert model.k_parent == k and model.r == n - k
    # the parity of a message whose only 1 is its last bit is x^r mod g(x) = g(x) without x^r
    data_len = model.data_bytes
    msg = bytearray(data_len)
    last = model.data_bits - 1
    msg[last // 8] = 0x80 >> (last % 8)
    want_bits = bits_of(octal ^ (1 << model.r), model.r)
    got = model.encode(bytes(msg))
    assert bits_of(int.from_bytes(got, "big"), 8 * len(got))[:model.r] == want_bits
    module = compile_model(model)
    rc, parity = module.encode(bytes(msg), model.parity_len(data_len))
    assert rc == 0 and parity == got


@pytest.fixture(scope="module")
def galois_textbook():
    import galois
    out = {}
    for n, k, _, _ in TEXTBOOK:
        m = n.bit_length()
        # python-calculate: these fields are tiny, and it skips the JIT compilation
        field = galois.GF(2 ** m, irreducible_poly=DEFAULT_PRIMITIVE[m], compile="python-calculate")
        out[(n, k)] = galois.BCH(n, k, extension_field=field, alpha=field(2))
    return out


@pytest.mark.parametrize("n,k,t,octal", TEXTBOOK, ids=[f"{n}_{k}" for n, k, _, _ in TEXTBOOK])
def test_textbook_values_agree_with_galois(galois_textbook, n, k, t, octal):
    # Cross-check of the values from memory: galois.BCH(n, k).generator_poly with the same field
    ref = galois_textbook[(n, k)]
    assert ref.t == t
    assert int("".join(str(int(c)) for c in ref.generator_poly.coeffs), 2) == octal


# -- model internals --------------------------------------------------------------------------------------

def test_remainder_equals_polynomial_division():
    # common practice, no source: systematic parity = (m(x) x^r) mod g(x), by plain long division
    model = make_model(bch_toml("rem", 10, 4, data_bits=77))
    rng = np.random.default_rng(3)
    for _ in range(20):
        data = rng.integers(0, 256, model.data_bytes, dtype=np.uint8).tobytes()
        msg = int.from_bytes(data, "big") >> (8 * model.data_bytes - 77)
        assert model.remainder(data) == bin_mod(msg << model.r, model.generator)


def test_properties_of_flash_page_sector_code():
    model = make_model((ROOT / "examples" / "flash_page.toml").read_text())
    p = model.properties
    assert (p.n, p.k, p.t, p.d) == (4200, 4096, 8, 17)
    assert (p.data_bytes, p.parity_bytes) == (512, 13)
    assert model.r == 104 and model.k_parent == 8087          # 13 * 8 parity bits: every coset has size 13
    assert list(model.data_lengths()) == list(range(1, 513))


def test_unaligned_data_bits_take_one_length_and_skip_pad_bits():
    model = make_model(bch_toml("odd", 6, 2, data_bits=21))    # 3 bytes, 3 pad bits; r = 12: no parity pad
    assert list(model.data_lengths()) == [3]
    units = model.error_units(3)
    assert units == list(range(21)) + list(range(24, 36))


# -- spec problems through the CLI --------------------------------------------------------------------------

@pytest.mark.parametrize("m,t,extra,key", [
    (8, 2, "field_poly = 0x11B", "field_poly"),       # x^8+x^4+x^3+x+1: irreducible, x of order 51 only
                                                      # (common practice, no source)
    (8, 2, "field_poly = 0x1D", "field_poly"),        # wrong degree
    (4, 8, "", "t"),                                  # 2t + 1 = 17 > 15
    (13, 8, "data_bits = 8088", "data_bits"),         # k = 8087
])
def test_spec_errors_exit_2_naming_the_key(tmp_path, capsys, m, t, extra, key):
    spec = tmp_path / "bad.toml"
    spec.write_text(f'[code]\nname = "bad"\nfamily = "bch"\n[bch]\nm = {m}\nt = {t}\n{extra}\n')
    out = tmp_path / "out"
    assert cli.main(["generate", str(spec), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert f"bad.toml: [bch] {key}:" in err, err
    assert len(err.strip().splitlines()) == 1
    assert not out.exists()


@pytest.mark.parametrize("body,keys", [
    ("m = 5\nt = 16\nfield_poly = 0x3F", ["field_poly", "t"]),
    ("m = 5\nt = 3\ndata_bits = 17\nfield_poly = 0x3F", ["field_poly", "data_bits"]),   # k = 16
])
def test_spec_problems_reported_together(tmp_path, capsys, body, keys):
    spec = tmp_path / "worse.toml"
    spec.write_text(f'[code]\nname = "worse"\nfamily = "bch"\n[bch]\n{body}\n')
    assert cli.main(["generate", str(spec), "-o", str(tmp_path / "o")]) == 2
    lines = capsys.readouterr().err.strip().splitlines()
    assert [line.split("[bch] ")[1].split(":")[0] for line in lines] == keys


def test_largest_t_is_a_repetition_code():
    # t = 2^(m-1) - 1: designed distance 2t + 1 = n, the generator is (x^n - 1)/(x - 1): one data bit
    model = make_model(bch_toml("rep", 4, 7))
    assert model.k_parent == 1 and model.generator == (1 << 15) - 1


# -- C against the model --------------------------------------------------------------------------------------

def expected_kinds(t: int) -> set[str]:
    kinds = {"clean", "every data_len", "zeros data", "ones data", "parity only", "first/last unit", "bursts"}
    kinds |= {f"weight {w}" for w in range(1, t + 1)}
    kinds |= {f"weight {w} (beyond t)" for w in range(t + 1, t + 4)}
    return kinds


# Shapes the examples do not reach: the smallest field, a register of one word shorter than a byte of
# parity, unaligned data bits with parity pad bits, more than eight remainder words (array register), m = 16.
EDGE = [
    ("e_m3", 3, 1, None, None),             # (7, 4): 4 data bits in one byte, 3 parity bits
    ("e_m5_full", 5, 3, None, None),        # (31, 16) full length
    ("e_m7_odd", 7, 4, 45, 0x83),           # 45 data bits, field x^7 + x + 1, r = 28 (4 parity pad bits)
    ("e_m13_wide", 13, 24, 600, None),      # r = 312: 10 words, the looped register
    ("e_m16", 16, 3, 96, None),             # 64 Ki-entry exp/log tables
]


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("name,m,t,data_bits,poly", EDGE, ids=[e[0] for e in EDGE])
def test_edge_campaign(name, m, t, data_bits, poly, profile):
    model = make_model(bch_toml(name, m, t, data_bits, poly, profile))
    budget = 25 if t < 10 else 8               # 24 weights x budget cases for the wide one
    report = verify.campaign(model, compile_model(model), seed=9, budget=budget, progress=False)
    assert report.ok, report.table()
    assert {k for k, n in report.cases.items() if n > 0} >= expected_kinds(t)


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("name,m,t,data_bits,poly", EDGE, ids=[e[0] for e in EDGE])
def test_edge_stack_bound(name, m, t, data_bits, poly, profile, tmp_path):
    from test_header_figures import check_stack_bound
    check_stack_bound(make_model(bch_toml(name, m, t, data_bits, poly, profile)), tmp_path, ("-O0", "-O2"))


def test_tiny_root_search_by_horner_for_large_t(tmp_path):
    """The tiny profile evaluates the locator by Horner's rule once t > 4 m (m = 6: t = 25 against 24);
    the campaign against the model and the stated stack bound hold on that path."""
    from test_header_figures import check_stack_bound
    model = make_model(bch_toml("e_m6_horner", 6, 25, None, None, "tiny"))
    assert model.horner and not make_model(bch_toml("e_m6_halve", 6, 24, None, None, "tiny")).horner
    assert "Horner" in emit.render(model)["e_m6_horner.c"]
    report = verify.campaign(model, compile_model(model), seed=9, budget=25, progress=False)
    assert report.ok, report.table()
    assert report.cases["weight 25"] > 0 and report.cases["weight 26 (beyond t)"] > 0
    check_stack_bound(model, tmp_path, ("-O0", "-O2"))


def test_wide_register_is_looped_and_edges_are_shaped_as_claimed():
    assert not make_model(bch_toml("w", 13, 24, 600)).unrolled
    assert make_model(bch_toml("w", 13, 24, 600)).reg_words == 10
    odd = make_model(bch_toml("o", 7, 4, 45, 0x83))
    assert odd.r == 28 and odd.parity_bytes == 4 and not odd.aligned


# -- all or nothing, shortened positions, pad bits, arguments ------------------------------------------------

@pytest.fixture(scope="module")
def short10():
    """m = 10, t = 4, 16 data bytes: shortened from k = 983."""
    model = make_model(bch_toml("short10", 10, 4, 128))
    return model, compile_model(model)


def flip(buf: bytes, bit: int) -> bytes:
    out = bytearray(buf)
    out[bit // 8] ^= 0x80 >> (bit % 8)
    return bytes(out)


def parent_decode(model, data: bytes, parity: bytes) -> tuple[int, np.ndarray]:
    """Decode data || parity as a word of the full-length parent code (leading zero data bits added)."""
    parent = make_model(bch_toml("parent", model.m, model.t, None, model.field_poly))
    k = parent.k_parent
    bits = np.zeros(8 * parent.data_bytes, dtype=np.uint8)
    nd = 8 * len(data)
    bits[k - nd:k] = np.unpackbits(np.frombuffer(data, np.uint8))
    status, pdata, _ = parent.decode(np.packbits(bits).tobytes(), parity)
    return status, np.unpackbits(np.frombuffer(pdata, np.uint8))


@pytest.mark.parametrize("extra", [0, 1, 3])
def test_correction_in_a_shortened_position_is_uncorrectable(short10, extra):
    # The received word is the parent codeword x^p + (x^p mod g) with its bit p (a shortened-away position)
    # dropped and `extra` transmitted bits flipped: the nearest parent codeword is 1 + extra <= t away, but
    # it differs in a position that is not transmitted.  Common practice, no source.
    model, module = short10
    rng = np.random.default_rng(extra)
    for data_len in (16, 5):
        ns = 8 * data_len + model.r
        for p in (ns, ns + 1, 700, model.order - 1):
            rem = bin_mod(1 << p, model.generator)
            data, parity = bytes(data_len), model._parity_bytes(rem)
            for bit in rng.choice(ns, extra, replace=False):
                if bit < 8 * data_len:
                    data = flip(data, int(bit))
                else:
                    parity = flip(parity, int(bit) - 8 * data_len)
            assert model.decode(data, parity) == (ERR_UNCORRECTABLE, data, parity)
            assert module.decode(data, parity) == (ERR_UNCORRECTABLE, data, parity)   # guarded buffers
            assert module.check(data, parity) == 1
            # the same word zero-extended to the parent length: the parent code corrects it, bit p included
            status, pdata = parent_decode(model, data, parity)
            assert status == 1 + extra
            k = model.k_parent
            assert pdata[k - 1 - (p - model.r)] == 1              # data bit of degree p


def test_failures_leave_buffers_untouched(short10):
    model, module = short10
    rng = np.random.default_rng(2)
    failures = 0
    for _ in range(300):
        data = rng.integers(0, 256, 16, dtype=np.uint8).tobytes()
        parity = model.encode(data)
        frame = data + parity
        for bit in rng.choice(8 * len(frame), 5 + int(rng.integers(0, 4)), replace=False):
            frame = flip(frame, int(bit))
        rd, rp = frame[:16], frame[16:]
        rc, d2, p2 = module.decode(rd, rp)
        assert (rc, d2, p2) == model.decode(rd, rp)
        if rc < 0:
            failures += 1
            assert (d2, p2) == (rd, rp)
        else:
            assert module.check(d2, p2) == 0       # a result is always a codeword
    assert failures > 200                         # beyond t, a long shortened code almost always fails


def test_check_is_zero_exactly_on_codewords(short10):
    model, module = short10
    rng = np.random.default_rng(4)
    for _ in range(100):
        n = int(rng.integers(1, 17))
        data = rng.integers(0, 256, n, dtype=np.uint8).tobytes()
        parity = model.encode(data)
        assert module.check(data, parity) == 0
        bit = int(rng.integers(0, 8 * n + model.r))
        bad = flip(data + parity, bit)
        assert module.check(bad[:n], bad[n:]) == 1 and model.check(bad[:n], bad[n:]) == 1


def test_pad_bits_are_ignored_and_kept():
    model = make_model(bch_toml("pads", 7, 4, 45, 0x83))     # 3 data pad bits, 4 parity pad bits
    module = compile_model(model)
    data = bytes([0x5A, 0xC3, 0x0F, 0xF0, 0x99, 0xA8])          # last byte: 5 data bits 10101, pad 000
    parity = model.encode(data)
    rc, cparity = module.encode(data, 4)
    assert rc == 0 and cparity == parity and parity[-1] & 0x0F == 0
    # set every pad bit: still a codeword, decode corrects nothing and keeps the pads as they are
    pd, pp = data[:-1] + bytes([data[-1] | 0x07]), parity[:-1] + bytes([parity[-1] | 0x0F])
    assert module.check(pd, pp) == 0 and model.check(pd, pp) == 0
    assert module.decode(pd, pp) == (0, pd, pp) == model.decode(pd, pp)
    # with errors too: corrected bits restored, pad bits untouched
    rd, rp = flip(pd, 3), flip(pp, 20)
    rc, d2, p2 = module.decode(rd, rp)
    assert (rc, d2, p2) == (2, pd, pp) == model.decode(rd, rp)
    # the pad bits of the data do not enter the parity
    assert model.encode(data[:-1] + bytes([data[-1] | 0x07])) == parity


def test_bad_arguments(short10):
    model, module = short10
    ffi = module.ffi
    buf = ffi.new("uint8_t[]", 64)
    for short in ("encode", "decode", "check"):
        fn = module.fn(short)
        assert fn(ffi.NULL, 4, buf) == ERR_ARG
        assert fn(buf, 4, ffi.NULL) == ERR_ARG
        assert fn(buf, 0, buf) == ERR_LENGTH
        assert fn(buf, 17, buf) == ERR_LENGTH
    assert model.decode(bytes(17), bytes(5))[0] == ERR_LENGTH
    assert model.check(b"", bytes(5)) == ERR_LENGTH
    odd = make_model(bch_toml("odd_len", 7, 4, 45, 0x83))
    odd_c = compile_model(odd)
    assert odd_c.fn("encode")(buf, 5, buf) == ERR_LENGTH and odd_c.fn("encode")(buf, 6, buf) == 0
    with pytest.raises(ValueError):
        odd.encode(bytes(5))


def test_header_states_tables_and_stack():
    model = make_model((ROOT / "examples" / "flash_page.toml").read_text())
    from bitmend import emit
    header = emit.render(model)["flash_page.h"]
    assert f"#define FLASH_PAGE_TABLE_BYTES       {model.properties.table_bytes}u" in header
    assert "Stack: at most" in header and "FLASH_PAGE_STACK_BYTES" in header
    # fast: four byte-chunk step tables of 256 rows of 4 words (16 KiB, issue 9's budget 64 KiB in all),
    # exp 8191, log 8192, three 12-row quadratic tables; 16-bit entries
    assert model.properties.table_bytes == 4 * 256 * 16 + 2 * (8191 + 8192 + 3 * 12)
    assert model.properties.table_bytes <= 64 * 1024
