"""Spec validation: every rule gives one line naming file, table and key; exit 2; nothing written."""
from __future__ import annotations

import pytest

from bitmend import cli

GOOD = """
[code]
name = "probe"
family = "crc-repetition"
[crc]
width = 16
poly = 0x1021
[repetition]
data_bytes = 8
copies = 3
"""

HAMMING = """
[code]
name = "word"
family = "hamming"
[hamming]
data_bits = 32
"""

# (description, spec text, text every error line must contain)
BAD = [
    ("empty file", "", "[code]: missing table"),
    ("TOML syntax error", "[code\nname = 1", "TOML syntax error"),
    ("missing name", GOOD.replace('name = "probe"\n', ""), "[code] name: missing"),
    ("name not a string", GOOD.replace('"probe"', "12"), "[code] name: must be a string"),
    ("upper-case name", GOOD.replace('"probe"', '"Probe"'), "[code] name:"),
    ("path-like name", GOOD.replace('"probe"', '"../../etc/x"'), "[code] name:"),
    ("C keyword as name", GOOD.replace('"probe"', '"register"'), "[code] name: is a C keyword"),
    ("injection in name", GOOD.replace('"probe"', '"p; system(\\"rm\\")"'), "[code] name:"),
    ("name too long", GOOD.replace('"probe"', '"' + "a" * 41 + '"'), "[code] name:"),
    ("unknown family", GOOD.replace('"crc-repetition"', '"turbo"'), "[code] family: must be one of"),
    ("typo in a key", GOOD.replace("copies = 3", "copys = 3"), "[repetition] copys: unknown key"),
    ("unknown table", GOOD + "\n[extra]\nx = 1\n", "[extra]: unknown table"),
    ("missing family table", GOOD.split("[repetition]")[0], "[repetition]: missing table"),
    ("bad type", GOOD.replace("width = 16", 'width = "16"'), "[crc] width: must be an integer"),
    ("bool for int", GOOD.replace("width = 16", "width = true"), "[crc] width: must be an integer"),
    ("width out of range", GOOD.replace("width = 16", "width = 65"), "[crc] width: must be 1..64"),
    ("poly too wide", GOOD.replace("poly = 0x1021", "poly = 0x11021"), "[crc] poly: must be below"),
    ("poly even", GOOD.replace("poly = 0x1021", "poly = 0x1020"), "[crc] poly: must have the x^0 term"),
    ("init too wide", GOOD.replace("poly = 0x1021", "poly = 0x1021\ninit = 0x10000"), "[crc] init: must be below"),
    ("copies zero", GOOD.replace("copies = 3", "copies = 0"), "[repetition] copies: must be 1..64"),
    ("data_bytes too big", GOOD.replace("data_bytes = 8", "data_bytes = 65536"), "[repetition] data_bytes:"),
    ("bad profile", GOOD + '[c]\nprofile = "huge"\n', "[c] profile: must be one of"),
    ("table_attr injection", GOOD + '[c]\ntable_attr = "}; int evil; //"\n', "[c] table_attr:"),
    ("table_attr comment", GOOD + "[c]\ntable_attr = '__attribute__((section(\".x*/\")))'\n", "[c] table_attr:"),
    ("hamming data_bits 0", HAMMING.replace("32", "0"), "[hamming] data_bits: must be 1..1024"),
    ("hamming secded not bool", HAMMING + "secded = 1\n", "[hamming] secded: must be true or false"),
    ("code not a table", 'code = "x"\n', "[code]: must be a table"),
]


@pytest.mark.parametrize("what,text,expect", BAD, ids=[b[0] for b in BAD])
def test_bad_spec_exit_2_names_key_writes_nothing(what, text, expect, tmp_path, capsys):
    spec = tmp_path / "bad.toml"
    spec.write_text(text)
    out = tmp_path / "out"
    out.mkdir()
    keep = out / "probe.h"
    keep.write_text("existing\n")
    rc = cli.main(["generate", str(spec), "-o", str(out), "--depfile", str(out / "deps.d")])
    err = capsys.readouterr().err
    assert rc == 2
    lines = err.strip().splitlines()
    assert lines and all(line.startswith("bad.toml: [") for line in lines), err
    assert any(expect in line for line in lines), err
    assert "Traceback" not in err
    assert sorted(p.name for p in out.iterdir()) == ["probe.h"] and keep.read_text() == "existing\n"


def test_all_problems_reported_at_once(tmp_path, capsys):
    spec = tmp_path / "many.toml"
    spec.write_text(GOOD.replace("width = 16", "width = 0").replace("copies = 3", "copies = 0")
                    .replace('"probe"', '"Probe"'))
    assert cli.main(["generate", str(spec), "-o", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert "[code] name" in err and "[crc] width" in err and "[repetition] copies" in err


def test_got_value_shown(tmp_path, capsys):
    spec = tmp_path / "v.toml"
    spec.write_text(GOOD.replace("width = 16", "width = 99"))
    cli.main(["generate", str(spec), "-o", str(tmp_path)])
    assert "[crc] width: must be 1..64 (got 99)" in capsys.readouterr().err


def test_missing_file(tmp_path, capsys):
    assert cli.main(["generate", str(tmp_path / "nope.toml"), "-o", str(tmp_path)]) == 2
    assert "nope.toml: [file]: cannot read" in capsys.readouterr().err


def test_one_bad_spec_among_good_writes_nothing(tmp_path, capsys):
    good, bad = tmp_path / "good.toml", tmp_path / "bad.toml"
    good.write_text(GOOD)
    bad.write_text(HAMMING.replace("32", "5000"))
    out = tmp_path / "out"
    assert cli.main(["generate", str(good), str(bad), "-o", str(out)]) == 2
    assert not out.exists()


def test_duplicate_names_report_both_paths(tmp_path, capsys):
    """Two specs with the same base name in different folders: the line names both folders."""
    (tmp_path / "one").mkdir()
    (tmp_path / "two").mkdir()
    a, b = tmp_path / "one" / "soil.toml", tmp_path / "two" / "soil.toml"
    a.write_text(GOOD)
    b.write_text(GOOD)
    assert cli.main(["generate", str(a), str(b), "-o", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1
    assert err.startswith(f"{b}: [code] name: same name as in {a}"), err
    assert not (tmp_path / "o").exists()


def test_hex_and_defaults(tmp_path):
    from conftest import make_spec
    spec = make_spec(GOOD)
    assert spec.profile == "fast" and spec.table_attr == ""
    crc = spec.table("crc")
    assert crc.poly == 0x1021 and crc.init == 0 and crc.reflect_in is False
    assert make_spec(HAMMING).table("hamming").secded is True


def test_table_attr_accepted():
    from conftest import make_spec
    text = GOOD + "[c]\ntable_attr = '__attribute__((section(\".ecc\"), aligned(4)))'\n"
    assert make_spec(text).table_attr == '__attribute__((section(".ecc"), aligned(4)))'
