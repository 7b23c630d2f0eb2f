"""What a module costs on a core: code bytes per function, table bytes and where they live, worst-case stack
of each API function (`bitmend footprint`).

The figures are the compiler's own: function and table sizes from the object's symbol table (objdump -t,
the same bytes `size -A` sums per section), stack frames from -fstack-usage, the call graph from
-fcallgraph-info=su (gcc 10 and later) or, for older compilers (avr-gcc 5), from the object's
disassembly (objdump -dr: relocations, and the calls the assembler resolved).  The worst case of a function is its frame plus the deepest chain of its
callees, plus the return address a call pushes outside the frame (AVR: 2 bytes; ARM and MIPS keep it in
the frame).  Calls to the C library (memcpy, memset) are not counted; the generated C makes them only as
compiler-generated block copies, which use no stack of their own on these cores' newlib/avr-libc.
"""
from __future__ import annotations

import re
import subprocess
import tempfile
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path

from . import emit
from .codes import build
from .spec import Spec
from .target import binutil, compile_object, sections

DEFAULT_CC = "arm-none-eabi-gcc"
DEFAULT_CFLAGS = ("-mcpu=cortex-m0plus", "-mthumb", "-Os")
RETURN_ADDRESS = {"avr": 2}               # bytes a call pushes outside the callee's frame, by compiler prefix


@dataclass
class Footprint:
    name: str
    profile: str
    table_space: str
    compiler: str
    code: dict = field(default_factory=dict)        # function -> bytes
    tables: dict = field(default_factory=dict)      # table -> {"bytes", "section", "memory"}
    stack: dict = field(default_factory=dict)       # API function -> worst-case bytes
    sections: dict = field(default_factory=dict)    # section -> bytes (size -A)
    call_graph: str = ""                            # where the call graph came from

    @property
    def code_bytes(self) -> int:
        return sum(self.code.values())

    @property
    def table_bytes(self) -> int:
        return sum(t["bytes"] for t in self.tables.values())

    def as_dict(self) -> dict:
        return {"name": self.name, "profile": self.profile, "table_space": self.table_space,
                "compiler": self.compiler, "code_bytes": self.code_bytes, "code": self.code,
                "table_bytes": self.table_bytes, "tables": self.tables, "stack": self.stack,
                "sections": self.sections, "call_graph": self.call_graph}


@lru_cache(maxsize=None)
def supports_callgraph_info(cc: str) -> bool:
    with tempfile.TemporaryDirectory() as tmp:          # the .ci file lands beside the output
        res = subprocess.run([cc, "-fcallgraph-info=su", "-x", "c", "-c", "-", "-o", "probe.o"], input="int x;\n",
                             capture_output=True, text=True, cwd=tmp)
    return res.returncode == 0


def _symbols(obj: Path, cc: str) -> dict[str, tuple[str, str, int, str, int]]:
    """{symbol: (kind F/O, section, size, binding l/g, address)} from objdump -t."""
    res = subprocess.run([binutil(cc, "objdump"), "-t", str(obj)], capture_output=True, text=True, check=True)
    out = {}
    for m in re.finditer(r"^([0-9a-f]+) ([lg]) +([FO]) (\S+)\s+([0-9a-f]+) (\S+)$", res.stdout, flags=re.M):
        out[m.group(6)] = (m.group(3), m.group(4), int(m.group(5), 16), m.group(2), int(m.group(1), 16))
    return out


def _frames(obj: Path) -> dict[str, int]:
    su = obj.with_suffix(".su")
    return {m.group(1): int(m.group(2)) for m in re.finditer(r":([A-Za-z_]\w*)\t(\d+)\t", su.read_text())}


def _edges_from_callgraph(obj: Path) -> dict[str, set[str]]:
    text = obj.with_suffix(".ci").read_text()
    edges: dict[str, set[str]] = {}
    for m in re.finditer(r'edge: \{ sourcename: "(?:[^":]*:)?([^"]+)" targetname: "(?:[^":]*:)?([^"]+)"', text):
        edges.setdefault(m.group(1), set()).add(m.group(2))     # a static function is "file.c:name"
    return edges


def _edges_from_disassembly(obj: Path, cc: str, syms: dict) -> dict[str, set[str]]:
    """Calls and jumps between the object's functions, read from its disassembly (objdump -dr): the target
    of an instruction with a relocation is the relocation's symbol (or `section+offset` of a function's
    first instruction); otherwise the `<function>` objdump names beside it (a call the assembler resolved
    itself, as ARM's bl to a function in the same section)."""
    res = subprocess.run([binutil(cc, "objdump"), "-dr", str(obj)], capture_output=True, text=True, check=True)
    starts = {(sec, addr): n for n, (kind, sec, _size, _bind, addr) in syms.items() if kind == "F"}
    lines = res.stdout.splitlines()
    edges: dict[str, set[str]] = {}
    current = None
    for i, line in enumerate(lines):
        head = re.match(r"^[0-9a-f]+ <([^>]+)>:$", line)
        if head:
            current = head.group(1)
            continue
        reloc = re.search(r"\sR_\w+\s+([.\w]+)(?:\+0x([0-9a-f]+))?$", line)
        if reloc:
            callee = reloc.group(1) if reloc.group(1) in syms else \
                starts.get((reloc.group(1), int(reloc.group(2) or "0", 16)))
        else:
            named = re.search(r"<([A-Za-z_]\w*)>\s*$", line)
            follows = i + 1 < len(lines) and re.search(r"\sR_\w+\s", lines[i + 1])
            callee = named.group(1) if named and not follows else None
        if current and callee in syms and syms[callee][0] == "F" and callee != current:
            edges.setdefault(current, set()).add(callee)
    return edges


def measure(spec: Spec, cc: str = DEFAULT_CC, cflags: tuple[str, ...] = DEFAULT_CFLAGS) -> Footprint:
    """Compile the spec's module with `cc` and `cflags` and read its footprint."""
    model = build(spec)
    files = emit.render(model)
    graph = supports_callgraph_info(cc)
    extra = ("-fstack-usage", "-fcallgraph-info=su") if graph else ("-fstack-usage",)
    obj = compile_object(files, f"{spec.name}.c", cc, (*cflags, *extra))
    syms = _symbols(obj, cc)
    functions = {n for n, (kind, *_rest) in syms.items() if kind == "F"}
    frames = _frames(obj)
    edges = _edges_from_callgraph(obj) if graph else _edges_from_disassembly(obj, cc, syms)
    ret = next((b for prefix, b in RETURN_ADDRESS.items() if Path(cc).name.startswith(prefix)), 0)

    @lru_cache(maxsize=None)
    def worst(fn: str) -> int:              # the generated C has no recursion
        inner = max((worst(c) for c in edges.get(fn, ()) if c in frames), default=0)
        return frames.get(fn, 0) + ret + inner

    avr = Path(cc).name.startswith("avr")
    fp = Footprint(spec.name, spec.profile, spec.table_space, f"{_version(cc)} {' '.join(cflags)}",
                   call_graph="-fcallgraph-info=su" if graph else "disassembly (objdump -dr)")
    fp.sections = sections(obj, cc)
    for name in sorted(functions):
        fp.code[name] = syms[name][2]
    for name, size in emit.tables(files).items():
        if name in syms:
            section = syms[name][1]
            in_ram = section.startswith((".data", ".bss")) or (avr and section.startswith(".rodata"))
            fp.tables[name] = {"bytes": size, "section": section, "memory": "RAM" if in_ram else "flash"}
        else:
            fp.tables[name] = {"bytes": size, "section": "-", "memory": "folded into code"}
    for name in sorted(functions):
        if syms[name][3] == "g":
            fp.stack[name] = worst(name)
    return fp


@lru_cache(maxsize=None)
def _version(cc: str) -> str:
    res = subprocess.run([cc, "-dumpfullversion"], capture_output=True, text=True)
    version = res.stdout.strip() or subprocess.run([cc, "-dumpversion"], capture_output=True, text=True).stdout.strip()
    return f"{Path(cc).name} {version}"


def table(fp: Footprint) -> str:
    lines = [f"{fp.name} (profile {fp.profile}, table_space {fp.table_space}) -- {fp.compiler}",
             f"  {'function':<36}{'code':>7}{'stack':>8}"]
    for name, size in fp.code.items():
        stack = fp.stack.get(name)
        lines.append(f"  {name:<36}{size:>7}{stack if stack is not None else '':>8}")
    lines.append(f"  {'code total':<36}{fp.code_bytes:>7}")
    for name, t in fp.tables.items():
        lines.append(f"  table {name:<30}{t['bytes']:>7}  {t['memory']} ({t['section']})")
    lines.append(f"  stack: frames from -fstack-usage along the call graph ({fp.call_graph}); API functions only")
    return "\n".join(lines)
