"""`bitmend footprint` against the toolchain's own figures: arm-none-eabi-size -A and -fstack-usage."""
from __future__ import annotations

import dataclasses
import json
import re
import subprocess

import pytest

from bitmend import cli, emit, footprint, spec as specmod, target
from bitmend.codes import build
from conftest import EXAMPLES

M0 = target.TARGETS["cortex-m0plus"]
CFLAGS = ("-mcpu=cortex-m0plus", "-mthumb", "-Os")
CASES = [("boot_header", "fast"), ("flash_page", "fast"), ("archive_block", "small")]


def need(cc: str) -> None:
    if target.Target("x", cc, ()).missing():
        pytest.skip(f"{cc} not installed")


def by_stem(stem: str):
    return next(p for p in EXAMPLES if p.stem == stem)


@pytest.mark.parametrize("stem,profile", CASES)
def test_figures_agree_with_size_and_stack_usage(stem, profile, tmp_path, capsys):
    """Built apart with the plain toolchain: .text is the functions' code (plus at most 2 bytes of Thumb
    alignment each), .rodata the tables; each API function's stack is its -fstack-usage frame plus the
    largest of its callees' figures along gcc's call graph (-fcallgraph-info=su)."""
    need(M0.cc)
    out = tmp_path / "fp.json"
    assert cli.main(["footprint", str(by_stem(stem)), "--profile", profile, "--json", str(out)]) == 0
    fp = json.loads(out.read_text())[0]
    model = build(specmod.load(by_stem(stem)).with_profile(profile))
    for fname, text in emit.render(model).items():
        (tmp_path / fname).write_text(text)
    subprocess.run([M0.cc, *CFLAGS, "-std=c99", "-fstack-usage", "-fcallgraph-info=su", "-c", f"{stem}.c",
                    "-o", "m.o"], cwd=tmp_path, check=True)
    size = subprocess.run([target.binutil(M0.cc, "size"), "-A", "m.o"], cwd=tmp_path, capture_output=True,
                          text=True, check=True).stdout
    sections = {m.group(1): int(m.group(2)) for m in re.finditer(r"^(\.\S+)\s+(\d+)", size, flags=re.M)}
    assert fp["code_bytes"] <= sections[".text"] <= fp["code_bytes"] + 2 * len(fp["code"])
    assert fp["table_bytes"] == model.properties.table_bytes
    kept = sum(t["bytes"] for t in fp["tables"].values() if t["memory"] == "flash")
    assert kept <= sections.get(".rodata", 0) < kept + 4 * len(fp["tables"])
    frames = {m.group(1): int(m.group(2)) for m in
              re.finditer(r":(\w+)\t(\d+)\t", (tmp_path / "m.su").read_text())}
    edges: dict[str, set] = {}
    for m in re.finditer(r'edge: \{ sourcename: "(?:[^":]*:)?([^"]+)" targetname: "(?:[^":]*:)?([^"]+)"',
                         (tmp_path / "m.ci").read_text()):
        edges.setdefault(m.group(1), set()).add(m.group(2))
    assert set(fp["stack"]) == {n for n in fp["code"] if re.fullmatch(
        rf"{stem}_(encode|decode|check|decode_erasures|crc|crc_start|crc_add|crc_finish)", n)}
    for fn, stack in fp["stack"].items():
        callees = [fp["stack"].get(c, None) for c in edges.get(fn, ()) if c in frames]
        # a static callee's figure is not printed; recompute it the same way from the files
        def chain(f):
            return frames[f] + max((chain(c) for c in edges.get(f, ()) if c in frames), default=0)
        assert stack == chain(fn), fn
        assert stack >= frames[fn] and all(c is None or stack >= frames[fn] + c for c in callees)


def test_the_disassembly_gives_the_call_graph_s_figures():
    """avr-gcc 5 has no -fcallgraph-info: the fallback reads the calls from the object's disassembly.  On
    the M0+ objects both ways must give the same stack for every API function."""
    need(M0.cc)
    for stem, profile in CASES:
        spec = specmod.load(by_stem(stem)).with_profile(profile)
        with_graph = footprint.measure(spec, M0.cc, CFLAGS)
        obj = target.compile_object(emit.render(build(spec)), f"{stem}.c", M0.cc,
                                    (*CFLAGS, "-fstack-usage", "-fcallgraph-info=su"))
        syms = footprint._symbols(obj, M0.cc)
        assert _same_stacks(obj, syms, with_graph), (stem, profile)


def _same_stacks(obj, syms, with_graph) -> bool:
    frames = footprint._frames(obj)
    edges = footprint._edges_from_disassembly(obj, M0.cc, syms)

    def worst(fn):
        return frames.get(fn, 0) + max((worst(c) for c in edges.get(fn, ()) if c in frames), default=0)

    return {fn: worst(fn) for fn in with_graph.stack} == with_graph.stack


def test_avr_tables_in_ram_or_flash_by_table_space(capsys):
    need("avr-gcc")
    for space, memory, section in (("const", "RAM", ".rodata"), ("avr-progmem", "flash", ".progmem.data")):
        spec = dataclasses.replace(specmod.load(by_stem("boot_header")).with_profile("fast"), table_space=space)
        fp = footprint.measure(spec, "avr-gcc", ("-mmcu=atmega328p", "-Os"))
        size = build(spec).properties.table_bytes
        assert fp.tables == {"boot_header_table": {"bytes": size, "section": section, "memory": memory}}
        assert fp.call_graph == "disassembly (objdump -dr)"


def test_a_missing_compiler_is_one_line(capsys):
    assert cli.main(["footprint", str(EXAMPLES[0]), "--cc", "no-such-cc-4711"]) == 2
    assert "--cc no-such-cc-4711: no such compiler on PATH" in capsys.readouterr().err
