"""The host-side API and `bitmend encode` / `decode` over files: the same bytes as the generated C.

The reference is the generated C itself, compiled into a stand-alone program that encodes a file block by
block (not through cffi), and the C through the harness for the model fallback.
"""
from __future__ import annotations

import subprocess

import numpy as np
import pytest

from bitmend import cli, emit, harness, load
from bitmend.host import Code
from conftest import EXAMPLES, ROOT

RNG = np.random.default_rng(12)
SOIL = ROOT / "examples" / "soil_probe.toml"      # CRC-16/KERMIT x 3, 24-byte blocks, shorter last block
CAL = ROOT / "examples" / "cal_word.toml"         # SECDED (39,32): exactly 4-byte blocks


def damaged(code: Code, data: bytes, parity: bytes, flips: int) -> tuple[bytes, bytes]:
    frame = bytearray(data + parity)
    units = code.model.error_units(len(data))
    width = code.properties.unit_bits
    for u in RNG.choice(len(units), min(flips, len(units)), replace=False):
        value = int(RNG.integers(1, 1 << width))
        for i in range(width):
            if value >> (width - 1 - i) & 1:
                frame[(units[u] + i) // 8] ^= 0x80 >> ((units[u] + i) % 8)
    return bytes(frame[:len(data)]), bytes(frame[len(data):])


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_model_fallback_gives_the_c_bytes(path):
    # Reference: the compiled C (harness); the model answers for it when there is no compiler.
    c, model = load(path), load(path, backend="model")
    assert (c.backend, model.backend) == ("c", "model")
    t = c.properties.t
    lengths = sorted({min(c.data_lengths()), c.data_bytes})
    for n in lengths:
        for trial in range(12):
            data = RNG.integers(0, 256, n, dtype=np.uint8).tobytes()
            parity = c.encode(data)
            assert model.encode(data) == parity
            rd, rp = damaged(c, data, parity, trial % (t + 3))
            assert model.decode(rd, rp) == c.decode(rd, rp)
            assert model.check(rd, rp) == c.check(rd, rp)
            status, fixed, _ = c.decode(rd, rp)
            if trial % (t + 3) <= t:
                assert status >= 0 and fixed == data


def test_no_compiler_falls_back_to_the_model():
    code = load(CAL, cc="/nonexistent/cc")
    assert code.backend == "model" and "no working C compiler" in code.through
    with pytest.raises(harness.BuildError, match="cannot run the C compiler"):
        load(CAL, backend="c", cc="/nonexistent/cc")


def test_wrong_lengths_are_value_errors():
    code = load(CAL)
    with pytest.raises(ValueError, match="exactly 4 bytes"):
        code.encode(b"abc")
    with pytest.raises(ValueError, match="0 parity bytes; a 4-byte block has 1"):
        code.decode(b"abcd", b"")


DRIVER = r"""
#include <stdio.h>
#include "NAME.h"
/* Reads data on stdin, writes block || parity for each block of up to PFX_DATA_BYTES bytes. */
int main(void)
{
    static uint8_t block[PFX_DATA_BYTES], parity[PFX_PARITY_BYTES];
    size_t n, plen;

    while ((n = fread(block, 1, sizeof block, stdin)) > 0) {
#ifdef PFX_PARITY_LEN
        plen = PFX_PARITY_LEN(n);
#else
        plen = PFX_PARITY_BYTES;
#endif
        if (NAME_encode(block, n, parity) != 0) {
            return 1;
        }
        fwrite(block, 1, n, stdout);
        fwrite(parity, 1, plen, stdout);
    }
    return 0;
}
"""


def c_encoder(path, tmp_path):
    """A stand-alone program from the spec's generated C that encodes stdin block by block."""
    code = load(path)
    name = code.name
    for fname, text in emit.render(code.model).items():
        (tmp_path / fname).write_text(text)
    (tmp_path / "drv.c").write_text(DRIVER.replace("PFX", name.upper()).replace("NAME", name))
    exe = tmp_path / "enc"
    subprocess.run([harness.compiler(), *harness.STRICT_FLAGS, "-O1", "-I", str(tmp_path), str(tmp_path / "drv.c"),
                    str(tmp_path / f"{name}.c"), "-o", str(exe)], check=True)
    return exe


@pytest.mark.parametrize("path,size", [(SOIL, 1000), (CAL, 1000)], ids=["soil_probe", "cal_word"])
def test_encode_file_is_the_c_programs_output(path, size, tmp_path, capsys):
    image = RNG.integers(0, 256, size, dtype=np.uint8).tobytes()
    (tmp_path / "img.bin").write_bytes(image)
    want = subprocess.run([str(c_encoder(path, tmp_path))], input=image, capture_output=True, check=True).stdout
    assert cli.main(["encode", str(path), str(tmp_path / "img.bin"), str(tmp_path / "img.ecc")]) == 0
    assert (tmp_path / "img.ecc").read_bytes() == want
    # the parity kept apart: the data as is, the parities in order
    assert cli.main(["encode", str(path), str(tmp_path / "img.bin"), str(tmp_path / "d"),
                     "--parity-file", str(tmp_path / "p")]) == 0
    code = load(path)
    block = code.data_bytes
    parities = [want[i * (block + code.parity_len(block)) + block:(i + 1) * (block + code.parity_len(block))]
                for i in range(size // block)]
    if size % block:
        parities.append(want[len(want) - code.parity_len(size % block):])
    assert (tmp_path / "d").read_bytes() == image and (tmp_path / "p").read_bytes() == b"".join(parities)
    capsys.readouterr()


def test_decode_repairs_reports_and_fails_all_or_nothing(tmp_path, capsys):
    image = RNG.integers(0, 256, 1000, dtype=np.uint8).tobytes()     # 41 full blocks and one of 16 bytes
    src, ecc, out = tmp_path / "img.bin", tmp_path / "img.ecc", tmp_path / "back.bin"
    src.write_bytes(image)
    assert cli.main(["encode", str(SOIL), str(src), str(ecc)]) == 0
    frame = bytearray(ecc.read_bytes())
    step = 24 + 54
    frame[5] ^= 0x10                                 # block 0: one bit
    frame[step + 30] ^= 0x03                         # block 1: two bits in copy 1
    frame[41 * step + 3] ^= 0x80                     # the short last block
    ecc.write_bytes(frame)
    capsys.readouterr()
    assert cli.main(["decode", str(SOIL), str(ecc), str(out)]) == 0
    assert out.read_bytes() == image
    lines = capsys.readouterr().out.splitlines()
    assert lines == ["soil_probe through the compiled C: 42 block(s): 39 clean, 3 corrected, 0 uncorrectable",
                     "  block 0 (data bytes 0..23): 1 error(s) corrected",
                     "  block 1 (data bytes 24..47): 2 error(s) corrected",
                     "  block 41 (data bytes 984..999): 1 error(s) corrected"]
    for copy in range(3):                            # block 2: the same bit in every copy
        frame[2 * step + copy * 26 + 1] ^= 0x01
    ecc.write_bytes(frame)
    out.unlink()
    assert cli.main(["decode", str(SOIL), str(ecc), str(out)]) == 1
    err = capsys.readouterr().err
    assert "  block 2 (data bytes 48..71): uncorrectable" in err
    assert err.endswith("bitmend: img.ecc: uncorrectable block(s); nothing written\n".replace("img.ecc", str(ecc)))
    assert not out.exists()


def test_file_input_problems_exit_2_and_write_nothing(tmp_path, capsys):
    (tmp_path / "odd.bin").write_bytes(bytes(10))
    assert cli.main(["encode", str(CAL), str(tmp_path / "odd.bin"), str(tmp_path / "o")]) == 2
    assert capsys.readouterr().err == (f"bitmend: {tmp_path / 'odd.bin'}: 10 bytes leave a last block of 2; "
                                       "cal_word takes blocks of exactly 4 bytes (pad the input to a multiple)\n")
    (tmp_path / "cut.ecc").write_bytes(bytes(7))
    assert cli.main(["decode", str(CAL), str(tmp_path / "cut.ecc"), str(tmp_path / "o")]) == 2
    assert "7 bytes are not whole blocks of cal_word (4 data + 1 parity bytes each)" in capsys.readouterr().err
    assert cli.main(["decode", str(CAL), str(tmp_path / "missing"), str(tmp_path / "o")]) == 2
    assert not (tmp_path / "o").exists()


def test_a_device_or_folder_as_input_is_refused_without_reading(tmp_path, capsys):
    # /dev/zero never ends: reading it whole would grow until the process is killed
    for source in ("/dev/zero", str(tmp_path)):
        assert cli.main(["encode", str(CAL), source, str(tmp_path / "o")]) == 2
        err = capsys.readouterr().err
        assert err.count("\n") == 1 and "[file]: not a regular file or a pipe" in err
    assert not (tmp_path / "o").exists()
