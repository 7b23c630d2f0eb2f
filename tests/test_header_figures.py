"""The figures each header states against the C itself.

P_STACK_BYTES: gcc -fcallgraph-info=su writes every function's frame and the call edges; the deepest
chain, plus one return address per level, must not exceed the stated bound at -O0, -Os or -O2.
P_TABLE_BYTES: the sizes of the `static const` tables declared in the .c, and every one of them placed
by P_TABLE_ATTR.
"""
from __future__ import annotations

import re
import shutil
import subprocess
from functools import lru_cache

import pytest

from bitmend import emit, spec as specmod
from bitmend.codes import build
from conftest import EXAMPLES

RETURN_ADDRESS = 8
PROFILES = ["fast", "small", "tiny"]


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


def check_stack_bound(model, tmp_path, opts=("-O0", "-Os", "-O2")) -> None:
    """Assert the model's emitted header states a stack bound gcc's call graph stays within."""
    if shutil.which("gcc") is None:
        pytest.skip("gcc needed for -fcallgraph-info")
    files = emit.render(model)
    name = model.spec.name
    for fname, text in files.items():
        (tmp_path / fname).write_text(text)
    stated = int(re.search(rf"#define {name.upper()}_STACK_BYTES\s+(\d+)u", files[f"{name}.h"]).group(1))
    for opt in opts:
        subprocess.run(["gcc", "-std=c99", opt, "-fcallgraph-info=su", "-c", f"{name}.c", "-o", "m.o"],
                       cwd=tmp_path, check=True)
        used = deepest_chain((tmp_path / "m.ci").read_text())
        assert 0 < used <= stated, f"{name} {model.spec.profile} {opt}: gcc says {used} bytes, header {stated}"


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_stated_stack_bound_holds(path, profile, tmp_path):
    check_stack_bound(build(specmod.load(path).with_profile(profile)), tmp_path)


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_stated_table_bytes_are_the_tables(path, profile):
    model = build(specmod.load(path).with_profile(profile))
    name = model.spec.name
    files = emit.render(model)
    declared = emit.tables(files)
    size = sum(declared.values())
    stated = int(re.search(rf"#define {name.upper()}_TABLE_BYTES\s+(\d+)u", files[f"{name}.h"]).group(1))
    assert stated == size == model.properties.table_bytes
    assert files[f"{name}.c"].count(f"{name.upper()}_TABLE_ATTR static const") == len(declared)


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_uniform_macros_state_the_model(path):
    """P_N, P_K, P_T in every family, equal to the model's n, k, t; every #define of the header's macro
    block aligned on one column (common practice, no source: aligned macro lists are read at a glance)."""
    model = build(specmod.load(path))
    name, upper = model.spec.name, model.spec.name.upper()
    header = emit.render(model)[f"{name}.h"]
    p = model.properties
    for short, want in (("N", p.n), ("K", p.k), ("T", p.t)):
        got = re.search(rf"^#define {upper}_{short}\s+(\d+)u\s", header, flags=re.M)
        assert got and int(got.group(1)) == want, (short, want)
    columns = {m.end(2) - m.start(0) for m in
               re.finditer(rf"^#define ({upper}_\w+)( +)\S", header, flags=re.M) if "(" not in m.group(1)}
    assert len(columns) == 1, columns
