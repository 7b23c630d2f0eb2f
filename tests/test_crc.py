"""CRC: the model and the generated C against the published catalogue's check values and crccheck."""
from __future__ import annotations

import subprocess

import numpy as np
import pytest

from bitmend import emit, harness
from bitmend.crc_catalogue import PRESETS
from bitmend.codes.crc_repetition import Crc
from conftest import make_model
from crc_catalogue import CATALOGUE, crccheck_entries

CHECK_INPUT = b"123456789"
RANDOM = np.random.default_rng(7).integers(0, 256, 257, dtype=np.uint8).tobytes()


def crc_of(entry) -> Crc:
    return Crc(*entry[1:7])


@pytest.mark.parametrize("entry", CATALOGUE, ids=[e[0] for e in CATALOGUE])
def test_model_check_value_catalogue(entry):
    # Check values: the CRC catalogue (see crc_catalogue.py)
    assert crc_of(entry).compute(CHECK_INPUT) == entry[7]


def test_crccheck_covers_reflect_in_ne_reflect_out():
    assert any(e[4] != e[5] for e in crccheck_entries())
    assert len(crccheck_entries()) >= 100


@pytest.mark.parametrize("entry", crccheck_entries(), ids=[e[0] for e in crccheck_entries()])
def test_model_against_crccheck(entry):
    # Second reference: the crccheck package, its stated check value and its own computation
    import crccheck.crc as c

    crc = crc_of(entry)
    assert crc.compute(CHECK_INPUT) == entry[7]
    assert crc.compute(RANDOM) == getattr(c, entry[0]).calc(RANDOM)


def spec_text(i: int, entry) -> str:
    _, width, poly, init, rin, rout, xout, _ = entry
    return f"""
[code]
name = "crc_{i}"
family = "crc-repetition"
[crc]
width = {width}
poly = {poly:#x}
init = {init:#x}
reflect_in = {str(rin).lower()}
reflect_out = {str(rout).lower()}
xor_out = {xout:#x}
[repetition]
data_bytes = 16
"""


def preset_text(i: int, preset) -> str:
    return f"""
[code]
name = "crc_{i}"
family = "crc-repetition"
[crc]
preset = "{preset.name}"
[repetition]
data_bytes = 16
"""


def _driver(n: int) -> str:
    lines = ["#include <stdio.h>", "#include <stdint.h>"]
    lines += [f'#include "crc_{i}.h"' for i in range(n)]
    lines += [
        f"static const uint8_t check[9] = {{{', '.join(str(b) for b in CHECK_INPUT)}}};",
        f"static const uint8_t rnd[{len(RANDOM)}] = {{{', '.join(str(b) for b in RANDOM)}}};",
        "int main(void) {",
        "    unsigned s, i;",
    ]
    for i in range(n):
        p = f"crc_{i}"
        lines += [
            f"    printf(\"{i} %llx\", (unsigned long long){p}_crc(check, 9u));",
            f"    for (s = 0; s <= 9u; s++) printf(\" %llx\", (unsigned long long){p}_crc_finish("
            f"{p}_crc_add({p}_crc_add({p}_crc_start(), check, s), check + s, 9u - s)));",
            f"    {{ {p}_crc_value_t st = {p}_crc_start(); for (i = 0; i < 9u; i++) st = {p}_crc_add(st, check + i, 1u);"
            f" printf(\" %llx\", (unsigned long long){p}_crc_finish(st)); }}",
            f"    printf(\" %llx\", (unsigned long long){p}_crc(rnd, sizeof rnd));",
            f"    printf(\" %llx\\n\", (unsigned long long){p.upper()}_CRC_CHECK);",
        ]
    lines += ["    return 0;", "}"]
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("profile", ["fast", "small", "tiny"])
def test_generated_c_whole_catalogue(profile, tmp_path):
    """Every catalogue preset (check values: the catalogue, see codegen/crc_catalogue.py) from the generated
    C: one-shot, split at every point, byte by byte, over random data, and the header's P_CRC_CHECK;
    strict flags, one program per profile."""
    entries = PRESETS
    sources = []
    for i, entry in enumerate(entries):
        for fname, text in emit.render(make_model(preset_text(i, entry), profile)).items():
            (tmp_path / fname).write_text(text)
            if fname.endswith(".c"):
                sources.append(str(tmp_path / fname))
    (tmp_path / "main.c").write_text(_driver(len(entries)))
    exe = tmp_path / "crcs"
    subprocess.run([harness.compiler(), *harness.STRICT_FLAGS, "-O1", "-I", str(tmp_path), str(tmp_path / "main.c"),
                    *sources, "-o", str(exe)], check=True)
    out = subprocess.run([str(exe)], check=True, capture_output=True, text=True).stdout.splitlines()
    assert len(out) == len(entries)
    for line, entry in zip(out, entries):
        values = [int(x, 16) for x in line.split()[1:]]
        assert values[:12] == [entry[7]] * 12, (entry[0], profile)        # check value, every way
        assert values[12] == crc_of(entry).compute(RANDOM), (entry[0], profile)
        assert values[13] == entry[7], (entry[0], profile)                  # the header's P_CRC_CHECK


def test_streaming_any_split_through_cffi():
    model = make_model(spec_text(0, CATALOGUE[-1]))
    mod = harness.build(model.spec.name, emit.render(model))
    data = RANDOM[:100]
    whole = mod.crc(data)
    assert whole == model.crc.compute(data)
    rng = np.random.default_rng(3)
    for _ in range(50):
        cuts = sorted(rng.choice(101, 4).tolist())
        pieces = np.diff([0, *cuts, 100]).tolist()
        assert mod.crc(data, pieces) == whole
    assert mod.crc(b"", [0]) == model.crc.compute(b"")


def _register_after(crc: Crc, data: bytes) -> int:
    """The C register after `data` enters a zero register, by the bit-serial definition (Crc.compute with
    init 0 and no output transform; the reflected register holds the CRC bit-reversed)."""
    plain = Crc(crc.width, crc.poly, 0, crc.reflect_in, crc.reflect_in, 0)
    return plain.compute(data) << crc.shift


@pytest.mark.parametrize("entry", CATALOGUE, ids=[e[0] for e in CATALOGUE])
def test_sliced_tables_by_definition(entry):
    # Table j, entry v: a chunk v then j zero chunks into a zero register, checked against the bit-serial
    # definition (whose check values are the catalogue's, above).  Byte chunks: data v, 0 * j.  Nibble
    # chunks: a byte v << 4 (reflected: the low nibble 0 enters first) or v holds nibble v then zero nibble
    # (table 1), or zero nibble then nibble v (table 0).
    crc = crc_of(entry)
    byte_tables = crc.tables(8, crc.slices)
    assert len(byte_tables) == crc.slices and 256 * crc.slices * crc.reg_bits // 8 <= 4096
    for j, tab in enumerate(byte_tables):
        for v in (0, 1, 2, 0x80, 0xA5, 0xFF):
            assert tab[v] == _register_after(crc, bytes([v]) + bytes(j)), (j, v)
    first, second = crc.tables(4, 2)
    for v in range(16):
        one_nibble_last = bytes([v << 4]) if crc.reflect_in else bytes([v])
        one_nibble_first = bytes([v]) if crc.reflect_in else bytes([v << 4])
        assert first[v] == _register_after(crc, one_nibble_last), v
        assert second[v] == _register_after(crc, one_nibble_first), v


WIDTH_LENGTHS = (0, 1, 2, 3, 5, 8, 9, 17, 64, 250)   # around the word steps of every profile
WIDTH_SPLITS = (1, 3, 7, 50)


def _every_width_entries() -> list[tuple]:
    """One CRC per width 1..64 and reflection (reflect_out equal to reflect_in at even widths, the other way
    at odd ones), random odd polynomial, init and xor_out: catalogue-shaped entries without a check value."""
    rng = np.random.default_rng(64)
    entries = []
    for width in range(1, 65):
        for rin in (False, True):
            poly, init, xout = (int(rng.integers(0, 1 << width, dtype=np.uint64)) for _ in range(3))
            entries.append((f"w{width}", width, poly | 1, init, rin, rin == (width % 2 == 0), xout, None))
    return entries


@pytest.mark.parametrize("profile", ["fast", "small", "tiny"])
def test_generated_c_every_width(profile, tmp_path):
    """Every width 1..64, reflected or not, in the generated C against the model's bit-serial definition
    (held against crccheck and the catalogue above): one-shot at data offsets 0..3 and lengths around the
    word steps, and piece by piece split at several points; strict flags, one program per profile."""
    entries = _every_width_entries()
    sources, lines = [], ["#include <stdio.h>", "#include <stdint.h>"]
    for i, entry in enumerate(entries):
        for fname, text in emit.render(make_model(spec_text(i, entry), profile)).items():
            (tmp_path / fname).write_text(text)
            if fname.endswith(".c"):
                sources.append(str(tmp_path / fname))
        lines.append(f'#include "crc_{i}.h"')
    lines += [f"static const uint8_t rnd[{len(RANDOM)}] = {{{', '.join(str(b) for b in RANDOM)}}};",
              "int main(void) {",
              "    static const unsigned lengths[] = {" + ", ".join(map(str, WIDTH_LENGTHS)) + "};",
              "    static const unsigned splits[] = {" + ", ".join(map(str, WIDTH_SPLITS)) + "};",
              "    unsigned o, n;"]
    for i in range(len(entries)):
        p = f"crc_{i}"
        lines += [f"    for (o = 0; o < 4u; o++) for (n = 0; n < {len(WIDTH_LENGTHS)}u; n++)"
                  f" printf(\" %llx\", (unsigned long long){p}_crc(rnd + o, lengths[n]));",
                  f"    for (n = 0; n < {len(WIDTH_SPLITS)}u; n++) printf(\" %llx\", (unsigned long long){p}_crc_finish("
                  f"{p}_crc_add({p}_crc_add({p}_crc_start(), rnd, splits[n]), rnd + splits[n], 100u - splits[n])));",
                  '    printf("\\n");']
    lines += ["    return 0;", "}"]
    (tmp_path / "main.c").write_text("\n".join(lines) + "\n")
    exe = tmp_path / "widths"
    subprocess.run([harness.compiler(), *harness.STRICT_FLAGS, "-O1", "-I", str(tmp_path), str(tmp_path / "main.c"),
                    *sources, "-o", str(exe)], check=True)
    out = subprocess.run([str(exe)], check=True, capture_output=True, text=True).stdout.splitlines()
    assert len(out) == len(entries)
    for line, entry in zip(out, entries):
        crc = crc_of(entry)
        want = [crc.compute(RANDOM[o:o + n]) for o in range(4) for n in WIDTH_LENGTHS]
        want += [crc.compute(RANDOM[:100])] * len(WIDTH_SPLITS)
        assert [int(x, 16) for x in line.split()] == want, (entry[:7], profile)
