"""Helpers shared by the benchmarks: timing, and instruction counts under callgrind."""
from __future__ import annotations

import os
import re
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from codegen import emit, harness  # noqa: E402


def best_seconds(fn, repeat: int = 5, number: int = 1) -> float:
    """Best wall time of `number` calls of fn over `repeat` rounds, in seconds per call."""
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        for _ in range(number):
            fn()
        best = min(best, (time.perf_counter() - t0) / number)
    return best


def callgrind_instructions(model, driver_c: str, args: list[str] | None = None) -> int | None:
    """Total instructions (Ir) of a standalone program: the model's emitted C plus `driver_c` (a main()),
    built with -O2, run under valgrind --tool=callgrind.  None when valgrind is not installed."""
    if shutil.which("valgrind") is None:
        return None
    files = emit.render(model)
    name = model.spec.name
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for fname, text in files.items():
            (work / fname).write_text(text)
        (work / "driver.c").write_text(driver_c)
        exe = work / "bench"
        subprocess.run([harness.compiler(), "-std=c99", "-O2", "-I", str(work), str(work / f"{name}.c"),
                        str(work / "driver.c"), "-o", str(exe)], check=True)
        out = work / "callgrind.out"
        subprocess.run(["valgrind", "--tool=callgrind", f"--callgrind-out-file={out}", str(exe), *(args or [])],
                       check=True, capture_output=True)
        text = out.read_text()
    m = re.search(r"^summary:\s+(\d+)", text, flags=re.M) or re.search(r"^totals:\s+(\d+)", text, flags=re.M)
    return int(m.group(1)) if m else None


def table(title: str, header: list[str], rows: list[list]) -> str:
    widths = [max(len(str(x)) for x in col) for col in zip(header, *rows)]
    line = lambda r: "  ".join(str(x).rjust(w) for x, w in zip(r, widths))  # noqa: E731
    return "\n".join([title, line(header), line(["-" * w for w in widths])] + [line(r) for r in rows])
