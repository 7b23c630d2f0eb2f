"""CRC-32 (ISO-HDLC parameters): throughput through cffi and host instructions per byte, per profile."""
from __future__ import annotations

import numpy as np

from common import best_seconds, callgrind_instructions, table

from codegen import emit, harness, spec as specmod  # noqa: E402
from codegen.codes import build  # noqa: E402

SPEC = {
    "code": {"name": "bench_crc32", "family": "crc-repetition"},
    "crc": {"width": 32, "poly": 0x04C11DB7, "init": 0xFFFFFFFF, "reflect_in": True, "reflect_out": True,
            "xor_out": 0xFFFFFFFF},
    "repetition": {"copies": 1, "data_bytes": 4096},
}
BUF = 1 << 20          # bytes per timed call
CG_BUF = 1 << 16       # bytes per call in the instruction count

DRIVER = """
#include <stdlib.h>
#include "bench_crc32.h"
static uint8_t buf[%(n)d];
int main(int argc, char **argv) {
    int i, reps = atoi(argv[1]);
    volatile uint32_t sink = 0;
    for (i = 0; i < %(n)d; i++) buf[i] = (uint8_t)(i * 131u);
    for (i = 0; i < reps; i++) sink ^= bench_crc32_crc(buf, sizeof buf);
    return (int)(sink & 1u);
}
"""


def main() -> None:
    rows = []
    data = np.random.default_rng(1).integers(0, 256, BUF, dtype=np.uint8).tobytes()
    for profile in specmod.PROFILES:
        spec = specmod.parse(SPEC, "bench_crc32.toml").with_profile(profile)
        model = build(spec)
        mod = harness.build(spec.name, emit.render(model))
        buf = mod.ffi.from_buffer("uint8_t[]", data)
        crc = mod.fn("crc")
        secs = best_seconds(lambda: crc(buf, BUF), repeat=5)
        ir = None
        driver = DRIVER % {"n": CG_BUF}
        hi, lo = callgrind_instructions(model, driver, ["4"]), callgrind_instructions(model, driver, ["0"])
        if hi is not None and lo is not None:
            ir = (hi - lo) / (4 * CG_BUF)
        rows.append([profile, model.properties.table_bytes, f"{BUF / secs / 1e6:.1f}",
                     f"{ir:.2f}" if ir is not None else "n/a (no valgrind)"])
    print(table("CRC-32 over 1 MiB (cffi call) and 64 KiB (callgrind, gcc -O2)",
                ["profile", "table bytes", "MB/s", "instr/byte"], rows))


if __name__ == "__main__":
    main()
