"""CRC presets: the package's catalogue table against crccheck and the entries written from memory, the
preset key in specs (contradictions named by key), `bitmend list`, and the README's list of presets."""
from __future__ import annotations

import inspect
import re

import pytest

from bitmend import cli, crc_catalogue
from bitmend.codes.crc_repetition import CHECK_INPUT, Crc
from bitmend.spec import SpecError
from conftest import ROOT, make_model, make_spec
from crc_catalogue import CATALOGUE

PRESETS = crc_catalogue.PRESETS


def crccheck_by_name() -> dict[str, type]:
    """crccheck's classes by the catalogue name their docstring opens with."""
    import crccheck.crc as c

    out = {}
    for _, cls in inspect.getmembers(c, inspect.isclass):
        if issubclass(cls, c.CrcBase) and getattr(cls, "_width", 0) and cls.__doc__:
            out.setdefault(cls.__doc__.strip().splitlines()[0], cls)
    return out


@pytest.mark.parametrize("preset", PRESETS, ids=[p.name for p in PRESETS])
def test_preset_against_crccheck_and_model(preset):
    # Source: crccheck 1.3.1's class of the same catalogue name: parameters, stated check value, and its
    # own computation; then our model's bit-serial definition gives the catalogue's check value.
    cls = crccheck_by_name()[preset.name]
    assert (cls._width, cls._poly, cls._initvalue, cls._reflect_input, cls._reflect_output, cls._xor_output,
            cls._check_result) == tuple(preset[1:8])
    assert cls.calc(CHECK_INPUT) == preset.check
    assert Crc(*preset[1:7]).compute(CHECK_INPUT) == preset.check


def test_presets_cover_every_crccheck_entry_of_width_up_to_64():
    # Every distinct crccheck parameter set of width <= 64 is a preset (crccheck mirrors the catalogue).
    import crccheck.crc as c

    ours = {tuple(p[1:7]) for p in PRESETS}
    for _, cls in inspect.getmembers(c, inspect.isclass):
        if issubclass(cls, c.CrcBase) and 0 < getattr(cls, "_width", 0) <= 64:
            key = (cls._width, cls._poly, cls._initvalue, cls._reflect_input, cls._reflect_output,
                   cls._xor_output)
            assert key in ours, cls.__name__
    assert len({p.name for p in PRESETS}) == len(PRESETS) == 112


@pytest.mark.parametrize("entry", CATALOGUE, ids=[e[0] for e in CATALOGUE])
def test_presets_agree_with_entries_from_memory(entry):
    # tests/crc_catalogue.py: 45 catalogue entries written from memory
    preset = crc_catalogue.find(entry[0])
    assert preset is not None and tuple(preset[1:8]) == entry[1:]


SPEC = """
[code]
name = "probe"
family = "crc-repetition"
[crc]
{crc}
[repetition]
data_bytes = 8
"""


def test_preset_fills_the_parameters_and_the_header_states_the_check():
    model = make_model(SPEC.format(crc='preset = "crc-16/ccitt"\npoly = 0x1021'))   # an alias, any case
    kermit = crc_catalogue.find("CRC-16/KERMIT")
    assert model.spec.table("crc").preset == "CRC-16/KERMIT"
    assert model.crc.compute(CHECK_INPUT) == kermit.check == 0x2189     # catalogue check value
    from bitmend import emit
    header = emit.render(model)["probe.h"]
    assert "probe: CRC-16/KERMIT (poly 0x1021u" in header
    assert re.search(r"#define PROBE_CRC_CHECK\s+0x2189u ", header)


@pytest.mark.parametrize("crc,lines", [
    ('preset = "CRC-16/KERMIT"\npoly = 0x8005\nreflect_in = false',
     ["test.toml: [crc] poly: contradicts preset CRC-16/KERMIT, which has poly = 0x1021 (got \"0x8005\")",
      "test.toml: [crc] reflect_in: contradicts preset CRC-16/KERMIT, which has reflect_in = true (got false)"]),
    ('preset = "CRC-16/KERMITT"',
     ["test.toml: [crc] preset: not a catalogue name ('bitmend list' shows them); close: CRC-16/KERMIT, "
      "CRC-16/CCITT, CRC-16/UMTS (got \"CRC-16/KERMITT\")"]),
    ("preset = 16", ["test.toml: [crc] preset: must be a string (got 16)"]),
])
def test_preset_problems_name_the_key(crc, lines):
    with pytest.raises(SpecError) as err:
        make_spec(SPEC.format(crc=crc))
    assert [str(p) for p in err.value.problems] == lines


def test_preset_error_through_the_cli(tmp_path, capsys):
    spec = tmp_path / "probe.toml"
    spec.write_text(SPEC.format(crc='preset = "CRC-32/ISO-HDLC"\nwidth = 16'))
    assert cli.main(["generate", str(spec), "-o", str(tmp_path / "out")]) == 2
    assert capsys.readouterr().err.splitlines() == [
        "probe.toml: [crc] width: contradicts preset CRC-32/ISO-HDLC, which has width = 32 (got 16)"]
    assert not (tmp_path / "out").exists()


def test_list_prints_families_profiles_and_presets(capsys):
    assert cli.main(["list"]) == 0
    out = capsys.readouterr().out
    for family in ("crc-repetition", "hamming", "bch", "reed-solomon"):
        assert family in out
    assert re.search(r"\[bch\]\s+m\s+integer\s+3\.\.16\s+required", out)
    assert re.search(r"^ tiny\s+no tables, bit-serial$", out, flags=re.M)
    for p in PRESETS:                    # one row per preset with its parameters and check value
        digits = (p.width + 3) // 4
        row = (rf"^ {re.escape(p.name)}\s+{p.width}\s+0x{p.poly:0{digits}X}\s+0x{p.init:0{digits}X}\s+"
               rf"{str(p.reflect_in).lower()}\s+{str(p.reflect_out).lower()}\s+0x{p.xor_out:0{digits}X}\s+"
               rf"0x{p.check:0{digits}X}\b")
        assert re.search(row, out, flags=re.M), p.name


def test_readme_lists_exactly_the_presets():
    readme = (ROOT / "README.md").read_text()
    block = readme.split("<!-- presets -->")[1]
    assert sorted(re.findall(r"`(CRC-[^`]+)`", block)) == sorted(p.name for p in PRESETS)
