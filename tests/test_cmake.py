"""The shipped CMake module: the firmware demo built by examples/cmake from a clean folder, rebuilt after a
spec changes, and a no-op build when nothing did."""
from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from bitmend import cli
from conftest import EXAMPLES, ROOT

BITMEND = Path(sys.executable).parent / "bitmend"


def test_cmake_dir_holds_the_module(capsys):
    assert cli.main(["--cmake-dir"]) == 0
    folder = Path(capsys.readouterr().out.strip())
    assert "function(bitmend_add_spec target spec)" in (folder / "bitmend.cmake").read_text()


@pytest.mark.skipif(shutil.which("cmake") is None, reason="cmake not installed")
def test_cmake_example_builds_clean_and_rebuilds_after_a_spec_change(tmp_path):
    src = tmp_path / "examples"
    (src / "firmware").mkdir(parents=True)
    for spec in EXAMPLES:
        shutil.copy(spec, src / spec.name)
    shutil.copy(ROOT / "examples" / "firmware" / "main.c", src / "firmware" / "main.c")
    shutil.copytree(ROOT / "examples" / "cmake", src / "cmake")
    build = tmp_path / "build"

    def run(*args) -> str:
        res = subprocess.run(args, capture_output=True, text=True, cwd=tmp_path)
        assert res.returncode == 0, res.stdout + res.stderr
        return res.stdout

    run("cmake", "-S", str(src / "cmake"), "-B", str(build), f"-DBITMEND_EXECUTABLE={BITMEND}")
    first = run("cmake", "--build", str(build))
    assert all(f"bitmend: {spec.stem} from" in first for spec in EXAMPLES)
    assert run(str(build / "demo")).endswith("all outcomes as expected\n")
    depfile = (build / "bitmend" / "cal_word.d").read_text()
    assert "hamming.c.j2" in depfile and "_common.j2" in depfile     # bitmend's own files count too

    assert "bitmend:" not in run("cmake", "--build", str(build))      # nothing changed: nothing generated
    spec = src / "soil_probe.toml"
    spec.write_text(spec.read_text() + "# moved to the north field\n")
    again = run("cmake", "--build", str(build))
    assert "bitmend: soil_probe from" in again and "bitmend: cal_word" not in again
    import hashlib
    assert hashlib.sha256(spec.read_bytes()).hexdigest() in (build / "bitmend" / "soil_probe.h").read_text()
    assert run(str(build / "demo")).endswith("all outcomes as expected\n")
