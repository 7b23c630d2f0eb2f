"""RS(255,223) with the CCSDS parameter set (examples/archive_block.toml), every profile: encode, clean decode
and decode with 16 symbol errors, in microseconds per call through cffi, each against galois's batched
encode / decode of the same words in the same run; and host instructions per data byte under callgrind
(valgrind), a zero-iteration baseline subtracted."""
from __future__ import annotations

import sys

import numpy as np

from common import ROOT, best_seconds, callgrind_instructions, table

sys.path.insert(0, str(ROOT))

from codegen import spec as specmod  # noqa: E402
from codegen.codes import build  # noqa: E402
from codegen.verify import module_for  # noqa: E402

SPEC = ROOT / "examples" / "archive_block.toml"
WORDS = 200            # distinct received words per measurement
ERRORS = 16

# A driver for callgrind: `mode` 0 encode, 1 clean decode, 2 decode with 16 errors, 3 the copy and the
# error planting of mode 2 without the decode (subtracted from mode 2); `iters` calls.
DRIVER = r"""
#include <stdint.h>
#include <stdlib.h>
#include "%(name)s.h"

int main(int argc, char **argv)
{
    static uint8_t data[%(k)d], parity[%(r)d], word[%(k)d], wpar[%(r)d];
    unsigned long iters = strtoul(argv[2], NULL, 10), i;
    int mode = atoi(argv[1]), j, sink = 0;
    uint32_t x = 12345u;

    for (j = 0; j < %(k)d; j++) { x = x * 1103515245u + 12345u; data[j] = (uint8_t)(x >> 16); }
    %(name)s_encode(data, %(k)d, parity);
    for (i = 0; i < iters; i++) {
        if (mode == 0) {
            data[i %% %(k)d] = (uint8_t)i;
            sink += %(name)s_encode(data, %(k)d, parity);
        } else if (mode == 1) {
            sink += %(name)s_decode(data, %(k)d, parity);
        } else {
            for (j = 0; j < %(k)d; j++) word[j] = data[j];
            for (j = 0; j < %(r)d; j++) wpar[j] = parity[j];
            for (j = 0; j < %(e)d; j++) word[(j * 13 + (int)i) %% %(k)d] ^= (uint8_t)(j + 1);
            if (mode == 2) {
                sink += %(name)s_decode(word, %(k)d, wpar);
            } else {
                sink += word[i %% %(k)d];     /* mode 3: the copy and the planted errors alone */
            }
        }
    }
    return sink == -12345;
}
"""


def _instructions(model, mode: int, iters: int) -> float | None:
    """Instructions per data byte of one call: (run with `iters` calls - run with 0 calls) / iters / k."""
    k, r = model.k, model.nroots
    driver = DRIVER % {"name": model.spec.name, "k": k, "r": r, "e": ERRORS}

    def per_call(m: int) -> float | None:
        full = callgrind_instructions(model, driver, [str(m), str(iters)])
        base = callgrind_instructions(model, driver, [str(m), "0"])
        return None if full is None or base is None else (full - base) / iters

    main = per_call(mode)
    if main is None:
        return None
    if mode == 2:
        main -= per_call(3)
    return main / k


def main() -> None:
    import galois

    spec = specmod.load(SPEC)
    base_model = build(spec)
    k, r = base_model.k, base_model.nroots
    rng = np.random.default_rng(7)
    data = rng.integers(0, 256, (WORDS, k), dtype=np.uint8)
    parity = np.array([list(base_model.encode(bytes(row))) for row in data], dtype=np.uint8)
    received = np.concatenate([data, parity], axis=1)
    for w in range(WORDS):
        pos = rng.choice(k + r, ERRORS, replace=False)
        received[w, pos] ^= rng.integers(1, 256, ERRORS, dtype=np.uint8)

    # galois: the same code (CCSDS 131.0-B parameters), batched decode of all words at once
    gf = galois.GF(2 ** 8, irreducible_poly=base_model.field_poly)
    rs = galois.ReedSolomon(255, 223, field=gf, alpha=gf(2) ** base_model.root_step, c=base_model.first_root)
    batch = gf(received.astype(np.int64))
    clean_batch = gf(np.concatenate([data, parity], axis=1).astype(np.int64))
    dec, nerr = rs.decode(batch, errors=True)               # also the JIT warm-up for this shape
    assert (np.asarray(nerr) == ERRORS).all() and np.array_equal(np.asarray(dec), data)
    rs.decode(clean_batch, errors=True)
    galois_us = best_seconds(lambda: rs.decode(batch, errors=True), 3) / WORDS * 1e6
    galois_clean_us = best_seconds(lambda: rs.decode(clean_batch, errors=True), 3) / WORDS * 1e6
    messages = gf(data.astype(np.int64))
    assert np.array_equal(np.asarray(rs.encode(messages))[:, k:], parity)     # the same code
    galois_enc_us = best_seconds(lambda: rs.encode(messages), 3) / WORDS * 1e6

    rows = []
    for profile in ("fast", "small", "tiny"):
        model = build(spec.with_profile(profile))
        mod = module_for(model)
        ffi, lib, name = mod.ffi, mod.lib, model.spec.name
        encode = getattr(lib, f"{name}_encode")
        decode = getattr(lib, f"{name}_decode")
        dbuf = ffi.new("uint8_t[]", bytes(data.reshape(-1)))
        pbuf = ffi.new("uint8_t[]", WORDS * r)
        rbuf = ffi.new("uint8_t[]", bytes(received.reshape(-1)))
        work = ffi.new("uint8_t[]", WORDS * (k + r))

        def enc():
            for w in range(WORDS):
                encode(dbuf + w * k, k, pbuf + w * r)
        enc()
        clean = ffi.new("uint8_t[]", bytes(np.concatenate([data, parity], axis=1).reshape(-1)))

        def dec_clean():
            for w in range(WORDS):
                decode(clean + w * (k + r), k, clean + w * (k + r) + k)

        def restore():
            ffi.memmove(work, rbuf, WORDS * (k + r))

        def dec_errors():
            ffi.memmove(work, rbuf, WORDS * (k + r))
            for w in range(WORDS):
                decode(work + w * (k + r), k, work + w * (k + r) + k)

        restore()                                          # once, checked: every word corrected
        assert all(decode(work + w * (k + r), k, work + w * (k + r) + k) == ERRORS for w in range(WORDS))
        assert bytes(ffi.buffer(work, WORDS * (k + r))) == np.concatenate([data, parity], axis=1).tobytes()

        reps = 5 if profile != "tiny" else 2
        t_enc = best_seconds(enc, reps) / WORDS * 1e6
        t_clean = best_seconds(dec_clean, reps) / WORDS * 1e6
        t_err = (best_seconds(dec_errors, reps) - best_seconds(restore, reps)) / WORDS * 1e6
        ins = [_instructions(model, mode, 200 if profile != "tiny" else 20) for mode in (0, 1, 2)]
        show = ["n/a" if v is None else f"{v:.1f}" for v in ins]
        rows.append([profile, model.properties.table_bytes,
                     f"{t_enc:.2f}", f"{galois_enc_us / t_enc:.0f}x",
                     f"{t_clean:.2f}", f"{galois_clean_us / t_clean:.0f}x", f"{t_clean / t_enc:.2f}",
                     f"{t_err:.2f}", f"{galois_us / t_err:.0f}x", *show])
    print(table(f"RS(255,223) CCSDS parameters, {WORDS} words, {ERRORS} symbol errors each; galois batched "
                f"(same words, same run): encode {galois_enc_us:.0f}, clean decode {galois_clean_us:.0f}, "
                f"decode {galois_us:.0f} us/word",
                ["profile", "table B", "enc us", "vs galois", "clean us", "vs galois", "clean/enc",
                 "dec16 us", "vs galois", "enc ins/B", "clean ins/B", "dec16 ins/B"], rows))


if __name__ == "__main__":
    main()
