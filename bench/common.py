"""Helpers shared by the benchmarks: timing, and instruction counts under callgrind."""
from __future__ import annotations

import os
import re
import shutil
import subprocess
import sys
import tempfile
import time
from contextlib import contextmanager
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from bitmend import emit, harness  # noqa: E402


def best_seconds(fn, repeat: int = 5, number: int = 1) -> float:
    """Best wall time of `number` calls of fn over `repeat` rounds, in seconds per call."""
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        for _ in range(number):
            fn()
        best = min(best, (time.perf_counter() - t0) / number)
    return best


@contextmanager
def emitted(model, driver_c: str):
    """A temporary directory holding the model's emitted C and `driver_c` as driver.c; yields
    (directory, the .c file of the model, the driver)."""
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for fname, text in emit.render(model).items():
            (work / fname).write_text(text)
        (work / "driver.c").write_text(driver_c)
        yield work, work / f"{model.spec.name}.c", work / "driver.c"


def callgrind_instructions(model, driver_c: str, args: list[str] | None = None) -> int | None:
    """Total instructions (Ir) of a standalone program: the model's emitted C plus `driver_c` (a main()),
    built with -O2, run under valgrind --tool=callgrind.  None when valgrind is not installed."""
    if shutil.which("valgrind") is None:
        return None
    with emitted(model, driver_c) as (work, source, driver):
        exe = work / "bench"
        subprocess.run([harness.compiler(), "-std=c99", "-O2", "-I", str(work), str(source), str(driver),
                        "-o", str(exe)], check=True)
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


def _c_array(ctype: str, name: str, values) -> str:
    return f"static const {ctype} {name}[{len(values)}] = {{{', '.join(str(v) for v in values)}}};"


def codec_drivers(model, msg: bytes, errors: list[tuple[int, int]]) -> tuple[str, str]:
    """Two drivers of one code's encode/decode on the data block `msg`, with `errors` = (byte offset into
    data || parity, XOR value) planted for the error decode.

    The host driver (callgrind) takes `mode iters`: mode 0 encode, 1 clean decode, 2 copy + plant + decode
    of the damaged word (exit status 3 unless it returns len(errors) corrections), 3 the copy and the
    planting alone (subtracted from mode 2).  The AVR driver (bench/avr.py) reports `encode`, `clean`
    and `errors` cycles, once each, and exits through bench_stop.
    """
    name, k, r = model.spec.name, len(msg), model.parity_len(len(msg))
    arrays = "\n".join([_c_array("uint8_t", "msg", list(msg)),
                        _c_array("uint16_t", "err_at", [o for o, _ in errors]),
                        _c_array("uint8_t", "err_xor", [v for _, v in errors])])
    common = f"""
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include "{name}.h"
#define K {k}u
#define R {r}u
#define E {len(errors)}u
{arrays}
static uint8_t data[K], parity[R], rd[K], rp[R];

static void plant(void)
{{
    unsigned e;

    memcpy(rd, data, K);
    memcpy(rp, parity, R);
    for (e = 0; e < E; e++) {{
        if (err_at[e] < K) rd[err_at[e]] ^= err_xor[e]; else rp[err_at[e] - K] ^= err_xor[e];
    }}
}}
"""
    host = common + f"""
int main(int argc, char **argv)
{{
    long iters = argc > 2 ? atol(argv[2]) : 0, i;
    int mode = argc > 1 ? atoi(argv[1]) : 0;
    volatile int sink = 0;
    int got;

    memcpy(data, msg, K);
    {name}_encode(data, K, parity);
    for (i = 0; i < iters; i++) {{
        if (mode == 0) {{
            sink += {name}_encode(data, K, parity);
        }} else if (mode == 1) {{
            sink += {name}_decode(data, K, parity);
        }} else {{
            plant();
            if (mode == 2) {{
                got = {name}_decode(rd, K, rp);
                if (got != (int)E) return 3;
                sink += got;
            }} else {{
                sink += rd[i % K];
            }}
        }}
    }}
    return sink == -12345;
}}
"""
    target = common + f"""
int main(void)
{{
    volatile int sink = 0;

    memcpy(data, msg, K);
    bench_start();
    BENCH("encode", sink = {name}_encode(data, K, parity));
    BENCH("clean", sink = {name}_decode(data, K, parity));
    plant();
    BENCH("errors", sink = {name}_decode(rd, K, rp));
    bench_report("corrected", (uint32_t)sink);
    bench_stop();
    return 0;
}}
"""
    return host, target


def per_byte(model, host_driver: str, mode: int, iters: int, nbytes: int) -> float | None:
    """Instructions per data byte of one call in `mode` of a codec_drivers host driver: (run with `iters`
    calls - run with 0 calls) / iters / nbytes, the copy and planting (mode 3) taken off mode 2."""
    def per_call(m: int) -> float | None:
        full = callgrind_instructions(model, host_driver, [str(m), str(iters)])
        base = callgrind_instructions(model, host_driver, [str(m), "0"])
        return None if full is None or base is None else (full - base) / iters

    main = per_call(mode)
    if main is not None and mode == 2:
        main -= per_call(3)
    return None if main is None else main / nbytes
