"""Tables through the access macros, `table_space = "avr-progmem"`, and the 16-bit guards.

The cross compilers (avr-gcc, simavr) are skipped with the reason when absent; CI installs them.
"""
from __future__ import annotations

import dataclasses
import re
import subprocess

import pytest

from bitmend import cli, emit, harness, spec as specmod, target
from bitmend.codes import build
from conftest import EXAMPLES, make_spec

PROFILES = ["fast", "small", "tiny"]
AVR = target.TARGETS["avr"]


def render(path_or_spec, profile: str, table_space: str = "const") -> tuple[str, dict[str, str]]:
    spec = specmod.load(path_or_spec) if not isinstance(path_or_spec, specmod.Spec) else path_or_spec
    spec = dataclasses.replace(spec.with_profile(profile), table_space=table_space)
    return spec.name, emit.render(build(spec))


def need(tg: target.Target) -> None:
    why = tg.missing()
    if why:
        pytest.skip(f"{tg.name}: {why}")


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_tables_are_read_only_through_the_access_macros(path, profile):
    name, files = render(path, profile)
    source = re.sub(r"^#error .*$", "", files[f"{name}.c"], flags=re.M)      # messages name tables too
    for table in emit.tables(files):
        uses = [m.start() for m in re.finditer(rf"\b{table}\b", source)]
        declaration = source.index(f" {table}[")
        reads = [m.start(1) for m in re.finditer(rf"_TABLE_READ(?:8|16|32|64)\(({table})\b", source)]
        assert sorted(uses) == sorted([declaration + 1] + reads), f"{table}: a use outside the access macros"


def test_attribute_without_reads_stops_the_build(tmp_path):
    """An attribute that moves the tables (avr-gcc's progmem here) without matching reads would read the
    wrong memory: the module refuses to build.  With all four reads it builds."""
    name, files = render(EXAMPLES[0], "fast")
    for fname, text in files.items():
        (tmp_path / fname).write_text(text)
    upper = name.upper()
    attr = f"-D{upper}_TABLE_ATTR=__attribute__((aligned(4)))"
    with pytest.raises(harness.BuildError, match=f"{upper}_TABLE_ATTR is defined without"):
        harness.compile_object(tmp_path / f"{name}.c", tmp_path / "a.o", extra=(attr,))
    reads = tuple(f"-D{upper}_TABLE_READ{b}(t,i)=((t)[i])" for b in (8, 16, 32, 64))
    harness.compile_object(tmp_path / f"{name}.c", tmp_path / "b.o", extra=(attr, *reads))


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_avr_progmem_keeps_every_table_in_flash(path, profile):
    """avr-size -A of the object: the tables in .progmem.data, exactly P_TABLE_BYTES, and no byte in RAM
    (.data, .bss, or .rodata, which avr-gcc copies to RAM)."""
    need(AVR)
    name, files = render(path, profile, "avr-progmem")
    obj = target.compile_object(files, f"{name}.c", AVR.cc, (*AVR.flags, "-Os"))
    sizes = target.sections(obj, AVR.cc)
    ram = {s: b for s, b in sizes.items() if s.startswith((".data", ".bss", ".rodata")) and b}
    assert ram == {}
    assert sizes.get(".progmem.data", 0) == build(specmod.load(path).with_profile(profile)).properties.table_bytes
    assert "__do_copy_data" not in target.undefined(obj, AVR.cc)      # nothing to copy into RAM at start-up


AVR_CRC_MAIN = r"""
#include <avr/interrupt.h>
#include <avr/io.h>
#include <avr/sleep.h>
#include "crc32.h"

static void put(char c)
{
    while ((UCSR0A & (1 << UDRE0)) == 0) {
    }
    UDR0 = (uint8_t)c;
}

int main(void)
{
    static const uint8_t check[9] = {'1', '2', '3', '4', '5', '6', '7', '8', '9'};
    uint32_t crc = crc32_crc(check, sizeof check);
    int i;

    UCSR0B = 1 << TXEN0;
    for (i = 28; i >= 0; i -= 4) {
        put("0123456789abcdef"[(crc >> i) & 15u]);
    }
    put('\n');
    cli();
    sleep_cpu();
    return 0;
}
"""


def test_crc32_check_value_with_the_table_in_flash(tmp_path):
    """CRC-32 of "123456789" is 0xCBF43926 (CRC RevEng catalogue, CRC-32/ISO-HDLC check value), computed
    on an ATmega in simavr with the table read from flash by pgm_read_dword."""
    need(AVR)
    spec = make_spec("""[code]
name = "crc32"
family = "crc-repetition"
[crc]
width = 32
poly = 0x04C11DB7
init = 0xFFFFFFFF
reflect_in = true
reflect_out = true
xor_out = 0xFFFFFFFF
[repetition]
data_bytes = 16
[c]
table_space = "avr-progmem"
""", "crc32.toml")
    for fname, text in emit.render(build(spec)).items():
        (tmp_path / fname).write_text(text)
    (tmp_path / "main.c").write_text(AVR_CRC_MAIN)
    subprocess.run([AVR.cc, "-mmcu=atmega328p", "-Os", "-std=c99", "main.c", "crc32.c", "-o", "p.elf"],
                   cwd=tmp_path, check=True)
    out = subprocess.run(["simavr", "-m", "atmega328p", "-f", "16000000", "p.elf"], cwd=tmp_path,
                         capture_output=True, text=True, timeout=60)
    text = re.sub(r"\x1b\[[0-9;]*m", "", out.stdout + out.stderr)
    assert re.search(r"^cbf43926", text, flags=re.M), text


BIG_BCH = """[code]
name = "wide_bch"
family = "bch"
[bch]
m = 16
t = 2
data_bits = 256
"""


def test_a_table_too_large_for_16_bits_warns_and_stops_a_16_bit_build(tmp_path, capsys):
    """GF(2^16) exp/log tables are 131 KiB each: generate says so on stderr and exits 0; avr-gcc
    (16-bit size_t) stops at the #error naming the profile that fits."""
    spec = tmp_path / "wide_bch.toml"
    spec.write_text(BIG_BCH)
    assert cli.main(["generate", str(spec), "-o", str(tmp_path / "gen")]) == 0
    out, err = capsys.readouterr()
    assert "wide_bch: profile fast, 266328 table bytes (largest wide_bch_log, 131072)" in out
    assert "wide_bch_exp, wide_bch_log exceed 32767 bytes" in err and "profile 'tiny' fits (4 table bytes)" in err
    need(AVR)
    res = subprocess.run([AVR.cc, *AVR.flags, "-std=c99", "-Os", "-c", "wide_bch.c", "-o", "m.o"],
                         cwd=tmp_path / "gen", capture_output=True, text=True)
    assert res.returncode != 0
    assert 'wide_bch_exp exceeds PTRDIFF_MAX bytes' in res.stderr and 'profile = \\"tiny\\"' in res.stderr
    # the same file builds on a 32-bit host, where the tables fit
    harness.compile_object(tmp_path / "gen" / "wide_bch.c", tmp_path / "gen" / "h.o")


@pytest.mark.parametrize("c_table,expect", [
    ('table_space = "flash"', "[c] table_space: must be one of const, avr-progmem"),
    ("table_attr = '__attribute__((section(\".progmem.data\")))'", "must not name a .progmem section"),
    ("table_space = \"avr-progmem\"\ntable_attr = '__attribute__((section(\".rodata.ecc\")))'",
     "must not name a section with table_space"),
])
def test_table_space_problems_are_spec_errors(c_table, expect, tmp_path, capsys):
    spec = tmp_path / "t.toml"
    spec.write_text(f'[code]\nname = "t"\nfamily = "hamming"\n[hamming]\ndata_bits = 8\n[c]\n{c_table}\n')
    assert cli.main(["generate", str(spec), "-o", str(tmp_path / "gen")]) == 2
    assert expect in capsys.readouterr().err
    assert not (tmp_path / "gen").exists()


def test_avr_progmem_builds_on_other_compilers_with_plain_reads(tmp_path):
    """Off AVR the same file keeps plain constant tables, so host unit tests and verify use it unchanged."""
    name, files = render(EXAMPLES[0], "fast", "avr-progmem")
    assert "PROGMEM" in files[f"{name}.c"]
    for fname, text in files.items():
        (tmp_path / fname).write_text(text)
    harness.compile_object(tmp_path / f"{name}.c", tmp_path / "m.o")
