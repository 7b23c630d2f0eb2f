"""Binary BCH: the 512-byte m = 13, t = 8 flash-sector code (examples/flash_page.toml), profile fast.

Prints microseconds per call through cffi for encode, clean decode and decode with 8 bit errors, galois's
decode of the same 8-error words in the same run (and the ratio), and host instructions per data byte
under callgrind (a zero-iteration run of the same driver subtracted).
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from common import ROOT, best_seconds, callgrind_instructions, table  # noqa: E402

from codegen import spec as specmod  # noqa: E402
from codegen.codes import build  # noqa: E402
from codegen.verify import apply_errors, module_for  # noqa: E402

SPEC = ROOT / "examples" / "flash_page.toml"
WORDS = 32                 # distinct 8-error words, each decoded by the C and by galois
GALOIS_WORDS = 8           # galois takes tens of milliseconds per word: a few are enough

DRIVER = r"""
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include "NAME.h"

static uint32_t state = 12345u;
static uint32_t next(void) { state = state * 1103515245u + 12345u; return state >> 8; }

int main(int argc, char **argv)
{
    static uint8_t data[NAME_UP_DATA_BYTES], parity[NAME_UP_PARITY_BYTES];
    static uint8_t rd[NAME_UP_DATA_BYTES], rp[NAME_UP_PARITY_BYTES];
    long iters = argc > 2 ? atol(argv[2]) : 0;
    int mode = argc > 1 ? atoi(argv[1]) : 0;
    uint32_t total = NAME_UP_DATA_BYTES * 8u, pos[8];
    volatile int sink = 0;
    long i;
    int e;

    for (i = 0; i < (long)sizeof data; i++) data[i] = (uint8_t)next();
    NAME_encode(data, sizeof data, parity);
    for (e = 0; e < 8; e++) pos[e] = next() % total;          /* may repeat: then fewer errors */
    for (i = 0; i < iters; i++) {
        if (mode == 0) {
            sink += NAME_encode(data, sizeof data, parity);
        } else if (mode == 1) {
            sink += NAME_decode(data, sizeof data, parity);
        } else {
            memcpy(rd, data, sizeof rd);
            memcpy(rp, parity, sizeof rp);
            for (e = 0; e < 8; e++) rd[pos[e] >> 3] ^= (uint8_t)(0x80u >> (pos[e] & 7u));
            sink += NAME_decode(rd, sizeof rd, rp);
        }
    }
    return sink == -12345;
}
"""


def _errors(rng, model, n, count=8):
    units = model.error_units(n)
    picks = rng.choice(len(units), count, replace=False)
    return tuple((units[i], 1) for i in sorted(picks))


def main() -> None:
    spec = specmod.load(SPEC)
    model = build(spec.with_profile("fast"))
    module = module_for(model)
    ffi, lib = module.ffi, module.lib
    enc, dec = module.fn("encode"), module.fn("decode")
    n = model.properties.data_bytes
    plen = model.parity_len(n)
    rng = np.random.default_rng(7)

    data = rng.integers(0, 256, n, dtype=np.uint8).tobytes()
    d_buf = ffi.new("uint8_t[]", data)
    p_buf = ffi.new("uint8_t[]", plen)
    assert enc(d_buf, n, p_buf) == 0
    parity = bytes(ffi.buffer(p_buf, plen))

    t_enc = best_seconds(lambda: enc(d_buf, n, p_buf), repeat=7, number=2000)
    t_clean = best_seconds(lambda: dec(d_buf, n, p_buf), repeat=7, number=2000)

    # 8-error words: the C corrects in place, so each call starts from a fresh copy (its cost measured apart)
    words = []
    for _ in range(WORDS):
        msg = rng.integers(0, 256, n, dtype=np.uint8).tobytes()
        par = model.encode(msg)
        rd, rp = apply_errors(model, msg, par, _errors(rng, model, n))
        words.append((msg, par, rd, rp))
    srcs = [(ffi.new("uint8_t[]", rd), ffi.new("uint8_t[]", rp)) for _, _, rd, rp in words]
    wd, wp = ffi.new("uint8_t[]", n), ffi.new("uint8_t[]", plen)
    mm = ffi.memmove

    def copy_only():
        for sd, sp in srcs:
            mm(wd, sd, n)
            mm(wp, sp, plen)

    def copy_decode():
        for sd, sp in srcs:
            mm(wd, sd, n)
            mm(wp, sp, plen)
            dec(wd, n, wp)

    for (msg, par, rd, rp), (sd, sp) in zip(words, srcs):
        mm(wd, sd, n)
        mm(wp, sp, plen)
        assert dec(wd, n, wp) == 8 and bytes(ffi.buffer(wd, n)) == msg and bytes(ffi.buffer(wp, plen)) == par
    t_copy = best_seconds(copy_only, repeat=7, number=50) / WORDS
    t_err = best_seconds(copy_decode, repeat=7, number=50) / WORDS - t_copy

    # galois: the same words, decoded in one batched call (after a warm-up call that JIT-compiles)
    import galois
    t0 = time.perf_counter()
    field = galois.GF(2 ** model.m, irreducible_poly=model.field_poly)
    ref = galois.BCH(model.order, model.k_parent, extension_field=field, alpha=field(2))
    batch = np.array([np.concatenate([np.unpackbits(np.frombuffer(rd, np.uint8)),
                                      np.unpackbits(np.frombuffer(rp, np.uint8))[:model.r]])
                      for _, _, rd, rp in words[:GALOIS_WORDS]])
    cw = galois.GF2(batch)
    ref.decode(cw[:1], errors=True)
    setup = time.perf_counter() - t0
    t0 = time.perf_counter()
    decoded, nerr = ref.decode(cw, output="codeword", errors=True)
    t_galois = (time.perf_counter() - t0) / GALOIS_WORDS
    assert list(nerr) == [8] * GALOIS_WORDS
    for (msg, par, _, _), row in zip(words, np.asarray(decoded)):
        assert np.packbits(row[:8 * n]).tobytes() == msg

    # host instructions per data byte, callgrind
    iters = 2000
    driver = DRIVER.replace("NAME_UP", spec.name.upper()).replace("NAME", spec.name)
    ipb = {}
    for mode, label in ((0, "encode"), (1, "clean decode"), (2, "decode, 8 errors")):
        base = callgrind_instructions(model, driver, [str(mode), "0"])
        full = callgrind_instructions(model, driver, [str(mode), str(iters)])
        ipb[label] = None if base is None or full is None else (full - base) / (iters * n)
    # the copy and error injection inside mode 2, measured in the same way
    us = lambda s: f"{s * 1e6:.2f}"  # noqa: E731
    fmt = lambda v: "n/a" if v is None else f"{v:.2f}"  # noqa: E731
    rows = [
        ["encode", us(t_enc), f"{n / t_enc / 1e6:.0f}", fmt(ipb["encode"]), "", ""],
        ["clean decode", us(t_clean), f"{n / t_clean / 1e6:.0f}", fmt(ipb["clean decode"]), "", ""],
        ["decode, 8 errors", us(t_err), f"{n / t_err / 1e6:.0f}", fmt(ipb["decode, 8 errors"]),
         f"{t_galois * 1e6:.0f}", f"{t_galois / t_err:.0f}x"],
    ]
    print(table(f"{spec.name}: BCH m={model.m} t={model.t}, {n} data bytes, {plen} parity bytes, profile fast "
                f"({model.properties.table_bytes} table bytes)",
                ["operation", "us/call", "MB/s", "instr/byte", "galois us/word", "speed-up"], rows))
    print(f"clean decode / encode = {t_clean / t_enc:.2f} (time), "
          + (f"{ipb['clean decode'] / ipb['encode']:.2f} (instructions)" if ipb["encode"] else "n/a"))
    # the other profiles, same words, same method (cffi, best of several rounds)
    prow = []
    for profile in ("fast", "small", "tiny"):
        pm = build(spec.with_profile(profile))
        mod = module_for(pm)
        pe, pd = mod.fn("encode"), mod.fn("decode")
        te = best_seconds(lambda: pe(d_buf, n, p_buf), repeat=5, number=500)

        def one_pass():
            for sd, sp in srcs:
                mm(wd, sd, n)
                mm(wp, sp, plen)
                pd(wd, n, wp)
        td = best_seconds(one_pass, repeat=3, number=5 if profile == "tiny" else 20) / WORDS - t_copy
        prow.append([profile, pm.properties.table_bytes, pm.call_depth * 64 + pm.stack_array_bytes(),
                     us(te), us(td)])
    print()
    print(table("profiles (same code, same 8-error words)",
                ["profile", "table bytes", "stack bound", "encode us", "decode 8 errors us"], prow))
    print(f"(8-error words: {WORDS} for the C, {GALOIS_WORDS} for galois {galois.__version__}; "
          f"galois set-up and JIT warm-up {setup:.1f} s not counted; copy of each word {t_copy * 1e6:.2f} us "
          f"subtracted; instr/byte for 8 errors includes a 525-byte copy per call)")


if __name__ == "__main__":
    main()
