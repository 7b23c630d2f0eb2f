"""The input boundary (issue 13, "What was seen" 1-4, 8, 9): every bad thing a user can type or leave
on disk is one escaped line naming the file and key, exit 2 (1 where a check could not run), no
traceback, no hang, nothing written."""
from __future__ import annotations

import os
import re
import subprocess
import sys

import pytest

from bitmend import cli, harness
from conftest import EXAMPLES

HAMMING = '[code]\nname = "word"\nfamily = "hamming"\n[hamming]\ndata_bits = {bits}\n'
# One problem line: file, [table], optional key, message; nothing but printable text.
LINE = re.compile(r"[^\x00-\x1f\x7f]+: \[[^\]\x00-\x1f]*\]( [^\x00-\x1f]*)?: [^\x00-\x1f]+")


def run(args, capsys):
    """cli.main in this process; (exit status, stderr lines)."""
    rc = cli.main(args)
    err = capsys.readouterr().err
    assert "Traceback" not in err
    return rc, err.splitlines()


def generate_bad(tmp_path, capsys, content: bytes | str, name="bad.toml"):
    """Generate from one bad spec into an empty folder: exit 2, every line well formed, nothing written."""
    spec = tmp_path / name
    spec.write_bytes(content.encode() if isinstance(content, str) else content)
    out = tmp_path / "out"
    rc, lines = run(["generate", str(spec), "-o", str(out), "--depfile", str(tmp_path / "d.d")], capsys)
    assert rc == 2 and lines
    assert all(LINE.fullmatch(line) for line in lines), lines
    assert not out.exists() and not (tmp_path / "d.d").exists()
    return lines


# -- 1. parser limits --------------------------------------------------------------------------------------

def test_integer_beyond_the_digit_limit(tmp_path, capsys):
    lines = generate_bad(tmp_path, capsys, HAMMING.format(bits="1" * 5000))
    assert lines == ["bad.toml: [file]: TOML value error: an integer with more digits than Python converts "
                     "(4300)"]


def test_huge_hex_integer_is_shown_by_size(tmp_path, capsys):
    lines = generate_bad(tmp_path, capsys, HAMMING.format(bits="0x" + "f" * 5000))
    assert lines == ["bad.toml: [hamming] data_bits: must be 1..1024 (got an integer of 20000 bits)"]


@pytest.mark.parametrize("nest", ["[" * 600 + "]" * 600, "{a = " * 600 + "1" + "}" * 600])
def test_deep_nesting(tmp_path, capsys, nest):
    lines = generate_bad(tmp_path, capsys, f"x = {nest}\n")
    assert lines == ["bad.toml: [file]: TOML value error: arrays or inline tables nested too deeply"]


def test_not_utf8(tmp_path, capsys):
    assert generate_bad(tmp_path, capsys, b"[code]\nname = \"\xff\"\n") == ["bad.toml: [file]: not UTF-8 text "
                                                                          "(byte 15)"]


# -- 2. user text is escaped and shortened -----------------------------------------------------------------

def test_keys_with_control_characters_cannot_forge_lines(tmp_path, capsys):
    text = HAMMING.format(bits=8) + '"a\\nbad.toml: [code] name: forged\\u001b[31m\\r" = 1\n'
    lines = generate_bad(tmp_path, capsys, text)
    assert lines == ['bad.toml: [hamming] a\\nbad.toml: [code] name: forged\\x1b[31m\\r: unknown key '
                     '(known: data_bits, secded)']


def test_long_key_is_shortened(tmp_path, capsys):
    lines = generate_bad(tmp_path, capsys, HAMMING.format(bits=8) + f'{"k" * 5000} = 1\n')
    assert len(lines) == 1 and "k" * 57 + "..." in lines[0] and "k" * 58 not in lines[0]


def test_long_string_value_and_bidi_control_escaped(tmp_path, capsys):
    text = HAMMING.format(bits=8).replace('"word"', '"\u202e' + "x" * 200 + '"')
    lines = generate_bad(tmp_path, capsys, text)
    assert lines == ['bad.toml: [code] name: must be a lower-case C identifier: a-z first, then a-z 0-9 _, at '
                     'most 40 characters (got "\\u202e' + "x" * 51 + '...")']


# -- 3, 4. accept only what compiles ------------------------------------------------------------------------

@pytest.mark.parametrize("n", [0, 3, 6, 9999, 8192])
def test_aligned_needs_a_power_of_two(tmp_path, capsys, n):
    text = HAMMING.format(bits=8) + f'[c]\ntable_attr = "__attribute__((aligned({n})))"\n'
    assert generate_bad(tmp_path, capsys, text) == [
        f"bad.toml: [c] table_attr: aligned(N) needs N a power of two, 1..4096 (got {n})"]


def test_two_sections_refused(tmp_path, capsys):
    """gcc: "section of 'x' conflicts with previous declaration" (found by test_fuzz_spec)."""
    text = HAMMING.format(bits=8) + "[c]\ntable_attr = '__attribute__((section(\".a\"), section(\".b\")))'\n"
    lines = generate_bad(tmp_path, capsys, text)
    assert len(lines) == 1 and lines[0].startswith("bad.toml: [c] table_attr: names more than one section")


@pytest.mark.parametrize("name", ["stdint", "stddef", "string", "math", "stdio", "unistd", "pthread",
                                  "threads", "stdatomic", "endian"])
def test_standard_header_names_refused(tmp_path, capsys, name):
    lines = generate_bad(tmp_path, capsys, HAMMING.format(bits=8).replace('"word"', f'"{name}"'))
    assert lines == [f'bad.toml: [code] name: {name}.h would shadow the standard header <{name}.h> '
                     f'(got "{name}")']


# C17 7.31 future library directions (from memory) and C++'s double underscore
@pytest.mark.parametrize("name,why", [("strip", "string.h"), ("memory_word", "string.h"),
                                      ("isr_block", "ctype.h"), ("token", "ctype.h"), ("ecc", "errno.h"),
                                      ("sigma", "signal.h"), ("uint8", "stdint.h"), ("int_word", "stdint.h"),
                                      ("thrd_x", "standard header"), ("a__b", "double underscore"),
                                      ("tail_", "double underscore")])
def test_reserved_identifiers_refused(tmp_path, capsys, name, why):
    lines = generate_bad(tmp_path, capsys, HAMMING.format(bits=8).replace('"word"', f'"{name}"'))
    assert len(lines) == 1 and "makes reserved identifiers" in lines[0] and why in lines[0], lines


# -- 8. what the spec path names ---------------------------------------------------------------------------

def test_device_file_is_refused_without_reading_it(capsys):
    rc, lines = run(["generate", "/dev/zero", "-o", "/nonexistent/never"], capsys)
    assert rc == 2 and lines == ["zero: [file]: not a regular file (a pipe or a device cannot be a spec)"]


def test_fifo_does_not_hang(tmp_path):
    fifo = tmp_path / "spec.toml"
    os.mkfifo(fifo)
    res = subprocess.run([sys.executable, "-m", "bitmend.cli", "generate", str(fifo), "-o", str(tmp_path / "o")],
                         capture_output=True, text=True, timeout=60)
    assert res.returncode == 2 and "Traceback" not in res.stderr
    assert res.stderr == "spec.toml: [file]: not a regular file (a pipe or a device cannot be a spec)\n"


def test_folder_and_oversized_file(tmp_path, capsys):
    rc, lines = run(["generate", str(tmp_path), "-o", str(tmp_path / "o")], capsys)
    assert rc == 2 and lines == [f"{tmp_path.name}: [file]: is a folder, not a spec file"]
    big = tmp_path / "big.toml"
    big.write_bytes(b"#" * (1 << 20) + b"\n")
    rc, lines = run(["generate", str(big), "-o", str(tmp_path / "o")], capsys)
    assert rc == 2 and lines == [f"big.toml: [file]: larger than 1048576 bytes ({(1 << 20) + 1} bytes)"]


def test_non_utf8_file_names(tmp_path):
    """Undecodable bytes in the spec's and the output's names: written where asked, shown escaped."""
    folder = os.fsencode(tmp_path)
    spec = os.path.join(folder, b"x\xff.toml")
    with open(spec, "wb") as fh:
        fh.write(EXAMPLES[0].read_bytes())
    out = os.path.join(folder, b"o\xfe")
    res = subprocess.run([sys.executable, "-m", "bitmend.cli", "generate", spec, "-o", out], capture_output=True)
    assert res.returncode == 0 and b"Traceback" not in res.stderr
    assert res.stdout.decode("ascii").startswith(f"wrote {tmp_path}/o\\xfe/")
    assert len(os.listdir(out)) == 2
    with open(spec, "ab") as fh:
        fh.write(b"[bogus]\nx = 1\n")
    res = subprocess.run([sys.executable, "-m", "bitmend.cli", "generate", spec, "-o", out + b"2"],
                         capture_output=True)
    assert res.returncode == 2 and res.stderr.decode("ascii").startswith("x\\xff.toml: [bogus]: unknown table")
    assert not os.path.exists(out + b"2")


# -- 9. option values and compiler / cache states ----------------------------------------------------------

@pytest.mark.parametrize("args,expect", [
    (["verify", "{spec}", "--seed", "-1"], "--seed must be 0..2^64-1 (got -1)"),
    (["verify", "{spec}", "--budget", "0"], "--budget must be 1.."),
    (["analyze", "{spec}", "--flip-prob", "0.01", "--simulate", "10", "--seed", "-1"], "--seed must be"),
    (["analyze", "{spec}", "--flip-prob", "nan"], "--flip-prob must be in (0, 0.5)"),
    (["verify", "{spec}", "--seed", "1" * 5000], "invalid int value"),
    (["verify", "{spec}", "--json", "{tmp}"], "is a folder"),
    (["generate", "{spec}", "-o", "{spec}"], "is not a folder"),
    (["analyze", "{spec}", "--flip-prob", "0.01", "--plot", "x\x1b[2J.pdf"], "x\\x1b[2J.pdf"),
])
def test_bad_option_values(tmp_path, capsys, args, expect):
    spec = str(EXAMPLES[0])
    rc, lines = run([a.format(spec=spec, tmp=tmp_path) for a in args], capsys)
    assert rc == 2 and len(lines) == 1 and lines[0].startswith("bitmend: ") and expect in lines[0], lines
    assert "\x1b" not in lines[0]


@pytest.mark.parametrize("cc,expect", [("false", "failed: exit status 1 and no message"),
                                       ("/nonexistent/cc", "cannot run the C compiler '/nonexistent/cc'")])
def test_broken_compiler_is_one_line_exit_1(tmp_path, capsys, monkeypatch, cc, expect):
    monkeypatch.setenv("CC", cc)
    monkeypatch.setenv("BITMEND_CACHE", str(tmp_path / "cache"))
    rc, lines = run(["verify", str(EXAMPLES[0]), "--budget", "5"], capsys)
    assert rc == 1 and len(lines) == 1 and lines[0].startswith("bitmend: ") and expect in lines[0], lines


def test_compile_error_names_compiler_flags_and_first_error(tmp_path):
    c = tmp_path / "x.c"
    c.write_text("int f(void) { return undeclared; }\n")
    with pytest.raises(harness.BuildError) as err:
        harness.compile_object(c, tmp_path / "x.o")
    summary = err.value.summary
    assert "\n" not in summary and "-std=c99" in summary and "-Werror" in summary
    assert "undeclared" in summary and "error" in summary


def test_truncated_cached_module_is_rebuilt(tmp_path, monkeypatch):
    """A damaged cache entry (here: a .so cut short) is built again, not a traceback."""
    from bitmend import spec as specmod
    from bitmend.codes import build
    from conftest import compile_model
    monkeypatch.setenv("BITMEND_CACHE", str(tmp_path / "cache"))
    spec = tmp_path / "word.toml"
    spec.write_text(HAMMING.format(bits=16))
    compile_model(build(specmod.load(spec)))                    # fills the cache
    [so] = list((tmp_path / "cache").glob("cffi/*/*.so"))
    so.unlink()                                                 # a new inode: this process keeps its copy
    so.write_bytes(b"\x7fELF" + bytes(96))
    cmd = [sys.executable, "-m", "bitmend.cli", "verify", str(spec), "--budget", "5"]
    res = subprocess.run(cmd, capture_output=True, text=True)
    assert res.returncode == 0 and "Traceback" not in res.stderr and "OK" in res.stdout
    assert so.stat().st_size > 100
