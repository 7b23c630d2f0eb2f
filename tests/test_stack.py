"""The stack bound each header states (P_STACK_BYTES) against gcc's own figures for the host.

gcc -fcallgraph-info=su writes every function's frame and the call edges; the deepest chain, plus one
return address per level, must not exceed the stated bound at -O0, -Os or -O2.
"""
from __future__ import annotations

import re
import shutil
import subprocess
from functools import lru_cache

import pytest

from codegen import emit, spec as specmod
from codegen.codes import build
from conftest import EXAMPLES

pytestmark = pytest.mark.skipif(shutil.which("gcc") is None, reason="gcc needed for -fcallgraph-info")
RETURN_ADDRESS = 8


def deepest_chain(ci_text: str) -> int:
    frames = {m.group(1): int(m.group(2)) for m in
              re.finditer(r'node: \{ title: "([^"]+)" label: "[^"]*\\n(\d+) bytes', ci_text)}
    edges: dict[str, list[str]] = {}
    for m in re.finditer(r'edge: \{ sourcename: "([^"]+)" targetname: "([^"]+)"', ci_text):
        edges.setdefault(m.group(1), []).append(m.group(2))

    @lru_cache(maxsize=None)
    def depth(fn: str) -> int:           # the generated C has no recursion, so this terminates
        return frames.get(fn, 0) + RETURN_ADDRESS + max((depth(c) for c in edges.get(fn, [])), default=0)

    return max(depth(fn) for fn in frames)


@pytest.mark.parametrize("profile", ["fast", "small", "tiny"])
@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_stated_stack_bound_holds(path, profile, tmp_path):
    model = build(specmod.load(path).with_profile(profile))
    files = emit.render(model)
    name = model.spec.name
    for fname, text in files.items():
        (tmp_path / fname).write_text(text)
    stated = int(re.search(rf"#define {name.upper()}_STACK_BYTES\s+(\d+)u", files[f"{name}.h"]).group(1))
    for opt in ("-O0", "-Os", "-O2"):
        subprocess.run(["gcc", "-std=c99", opt, "-fcallgraph-info=su", "-c", f"{name}.c", "-o", "m.o"],
                       cwd=tmp_path, check=True)
        used = deepest_chain((tmp_path / "m.ci").read_text())
        assert 0 < used <= stated, f"{name} {profile} {opt}: gcc says {used} bytes, header says {stated}"
