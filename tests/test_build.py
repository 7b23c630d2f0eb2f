"""The example firmware project builds with gcc and clang under the strict flags and behaves."""
from __future__ import annotations

import os
import shutil
import subprocess
import sys

import pytest

from conftest import ROOT

COMPILERS = [c for c in ("gcc", "clang") if shutil.which(c)]


def test_both_compilers_present():
    # CI installs both (.ci/run); without them the build checks below would silently shrink
    assert COMPILERS == ["gcc", "clang"]


@pytest.mark.parametrize("cc", COMPILERS)
def test_firmware_example_builds_and_runs(cc, tmp_path):
    work = tmp_path / "examples"
    shutil.copytree(ROOT / "examples", work, ignore=shutil.ignore_patterns("build"))
    bitmend = os.path.join(os.path.dirname(sys.executable), "bitmend")
    res = subprocess.run(["make", "-C", str(work / "firmware"), f"CC={cc}", f"BITMEND={bitmend}", "run"],
                         capture_output=True, text=True)
    assert res.returncode == 0, res.stdout + res.stderr
    assert "-Wconversion" in res.stdout and "-Werror" in res.stdout
    assert "all outcomes as expected" in res.stdout
    assert "UNEXPECTED" not in res.stdout
    # depfiles were written and make is now up to date
    assert list((work / "firmware" / "build" / "gen").glob("*.d"))
    again = subprocess.run(["make", "-q", "-C", str(work / "firmware"), f"CC={cc}", f"BITMEND={bitmend}", "all"])
    assert again.returncode == 0


@pytest.mark.parametrize("cc", COMPILERS)
@pytest.mark.parametrize("profile", ["fast", "small", "tiny"])
def test_generated_c_strict_every_profile(cc, profile, tmp_path):
    """Each example's C in each profile compiles with the strict flags and a few more."""
    from bitmend import emit, harness, spec as specmod
    from bitmend.codes import build
    from conftest import EXAMPLES

    for path in EXAMPLES:
        model = build(specmod.load(path).with_profile(profile))
        for fname, text in emit.render(model).items():
            (tmp_path / fname).write_text(text)
        harness.compile_object(tmp_path / f"{model.spec.name}.c", tmp_path / f"{model.spec.name}.o", cc,
                               ("-O2", "-Wstrict-prototypes", "-Wmissing-prototypes", "-Wundef"))
