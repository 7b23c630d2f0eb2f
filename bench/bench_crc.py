"""CRC-32 (ISO-HDLC parameters, reflected) and CRC-16 (IBM-3740 parameters, not reflected), every profile:
throughput through cffi, host instructions per byte under callgrind (gcc -O2), AVR cycles per byte in simavr."""
from __future__ import annotations

import numpy as np

import avr
from common import best_seconds, callgrind_instructions, table

from bitmend import emit, harness, spec as specmod  # noqa: E402
from bitmend.codes import build  # noqa: E402

# Parameters and check values: the published CRC catalogue (CRC-32/ISO-HDLC, CRC-16/IBM-3740).
CODES = {
    "CRC-32": {"width": 32, "poly": 0x04C11DB7, "init": 0xFFFFFFFF, "reflect_in": True, "reflect_out": True,
               "xor_out": 0xFFFFFFFF},
    "CRC-16": {"width": 16, "poly": 0x1021, "init": 0xFFFF, "reflect_in": False, "reflect_out": False,
               "xor_out": 0},
}
BUF = 1 << 20          # bytes per timed call
CG_BUF = 1 << 16       # bytes per call in the instruction count
AVR_BUF = 256          # bytes per call on the AVR

DRIVER = """
#include <stdlib.h>
#include "bench_crc.h"
static uint8_t buf[%(n)d];
int main(int argc, char **argv) {
    int i, reps = atoi(argv[1]);
    volatile uint32_t sink = 0;
    for (i = 0; i < %(n)d; i++) buf[i] = (uint8_t)(i * 131u);
    for (i = 0; i < reps; i++) sink ^= (uint32_t)bench_crc_crc(buf, sizeof buf);
    return (int)(sink & 1u);
}
"""

AVR_DRIVER = """
#include "bench_crc.h"
static uint8_t buf[%(n)d];
int main(void)
{
    volatile uint32_t sink = 0;
    unsigned i;

    for (i = 0; i < sizeof buf; i++) buf[i] = (uint8_t)(i * 131u);
    bench_start();
    BENCH("empty", sink = (uint32_t)bench_crc_crc(buf, 0));
    BENCH("full", sink = (uint32_t)bench_crc_crc(buf, sizeof buf));
    bench_report("value", sink);
    bench_stop();
    return 0;
}
"""


def main() -> None:
    rows = []
    data = np.random.default_rng(1).integers(0, 256, BUF, dtype=np.uint8).tobytes()
    avr_data = bytes((i * 131) & 0xFF for i in range(AVR_BUF))
    for label, params in CODES.items():
        for profile in specmod.PROFILES:
            text = {"code": {"name": "bench_crc", "family": "crc-repetition"}, "crc": params,
                    "repetition": {"copies": 1, "data_bytes": 4096}}
            spec = specmod.parse(text, "bench_crc.toml").with_profile(profile)
            model = build(spec)
            mod = harness.build(spec.name, emit.render(model))
            buf = mod.ffi.from_buffer("uint8_t[]", data)
            crc = mod.fn("crc")
            secs = best_seconds(lambda: crc(buf, BUF), repeat=5)
            driver = DRIVER % {"n": CG_BUF}
            hi, lo = callgrind_instructions(model, driver, ["4"]), callgrind_instructions(model, driver, ["0"])
            ipb = "n/a (no valgrind)" if hi is None or lo is None else f"{(hi - lo) / (4 * CG_BUF):.2f}"
            cyc = avr.cycles(model, AVR_DRIVER % {"n": AVR_BUF})
            if cyc is None:
                cpb = "n/a (no avr-gcc/simavr)"
            else:
                assert cyc["value"] == model.crc.compute(avr_data), "the AVR build computed a wrong CRC"
                cpb = f"{(cyc['full'] - cyc['empty']) / AVR_BUF:.1f}"
            rows.append([label, profile, model.properties.table_bytes, f"{BUF / secs / 1e6:.0f}", ipb, cpb])
    print(table(f"CRC: MB/s over 1 MiB (cffi call), host instr/byte over 64 KiB (callgrind, gcc -O2 x86-64), "
                f"AVR cycles/byte over {AVR_BUF} B (simavr {avr.MCU}, avr-gcc {' '.join(avr.CFLAGS)}, Timer1, "
                "tables in flash)",
                ["code", "profile", "table bytes", "MB/s", "instr/byte", "AVR cycles/byte"], rows))


if __name__ == "__main__":
    main()
