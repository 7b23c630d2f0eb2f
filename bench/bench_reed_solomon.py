"""Reed-Solomon: RS(255,223) with the CCSDS parameter set (examples/archive_block.toml) and the (28,20)
beacon code (examples/beacon_telemetry.toml), every profile.

One table: microseconds per call through cffi, host instructions per data byte under callgrind (gcc -O2;
a zero-iteration run subtracted, and for the error decode the copy and planting of the errors), AVR cycles
per data byte in simavr (the beacon code), and galois's batched encode / decode of the same words in the
same run.
"""
from __future__ import annotations

import numpy as np

import avr
from common import ROOT, best_seconds, codec_drivers, per_byte, table

from bitmend import spec as specmod  # noqa: E402
from bitmend.codes import build  # noqa: E402
from bitmend.verify import module_for  # noqa: E402

CODES = [ROOT / "examples" / "archive_block.toml", ROOT / "examples" / "beacon_telemetry.toml"]
WORDS = 200            # distinct received words per measurement
ITERS = {"fast": 200, "small": 100, "tiny": 10}   # calls per callgrind run (the counts are exact)


def _galois_us(model, data, parity, received) -> list[float]:
    """galois (the same code, shortened words as they are): us per word for encode, clean decode and the
    error decode, batched over the words, after a warm-up call of each."""
    import galois
    gf = galois.GF(2 ** 8, irreducible_poly=model.field_poly)
    rs = galois.ReedSolomon(255, 255 - model.nroots, field=gf, alpha=gf(2) ** model.root_step,
                            c=model.first_root)
    k = data.shape[1]
    clean = gf(np.concatenate([data, parity], axis=1).astype(np.int64))
    damaged = gf(received.astype(np.int64))
    messages = gf(data.astype(np.int64))
    assert np.array_equal(np.asarray(rs.encode(messages))[:, k:], parity)      # the same code
    dec, nerr = rs.decode(damaged, errors=True)
    assert (np.asarray(nerr) == model.t).all() and np.array_equal(np.asarray(dec), data)
    rs.decode(clean, errors=True)
    words = data.shape[0]
    return [best_seconds(fn, 3) / words * 1e6 for fn in (lambda: rs.encode(messages),
                                                         lambda: rs.decode(clean, errors=True),
                                                         lambda: rs.decode(damaged, errors=True))]


def main() -> None:
    rows = []
    for path in CODES:
        spec = specmod.load(path)
        base = build(spec)
        k, r, t = base.k, base.nroots, base.t
        rng = np.random.default_rng(7)
        data = rng.integers(0, 256, (WORDS, k), dtype=np.uint8)
        parity = np.array([list(base.encode(bytes(row))) for row in data], dtype=np.uint8)
        clean = np.concatenate([data, parity], axis=1)
        received = clean.copy()
        for w in range(WORDS):
            pos = rng.choice(k + r, t, replace=False)
            received[w, pos] ^= rng.integers(1, 256, t, dtype=np.uint8)
        galois_us = _galois_us(base, data, parity, received)
        planted = [(int(i), int(clean[0, i] ^ received[0, i])) for i in np.flatnonzero(clean[0] != received[0])]
        host, target = codec_drivers(base, bytes(data[0]), planted)
        for profile in specmod.PROFILES:
            model = build(spec.with_profile(profile))
            mod = module_for(model)
            ffi = mod.ffi
            encode, decode = mod.fn("encode"), mod.fn("decode")
            dbuf = ffi.new("uint8_t[]", bytes(data.reshape(-1)))
            pbuf = ffi.new("uint8_t[]", WORDS * r)
            cbuf = ffi.new("uint8_t[]", bytes(clean.reshape(-1)))
            rbuf = ffi.new("uint8_t[]", bytes(received.reshape(-1)))
            work = ffi.new("uint8_t[]", WORDS * (k + r))

            def enc():
                for w in range(WORDS):
                    encode(dbuf + w * k, k, pbuf + w * r)

            def dec_clean():
                for w in range(WORDS):
                    decode(cbuf + w * (k + r), k, cbuf + w * (k + r) + k)

            def restore():
                ffi.memmove(work, rbuf, WORDS * (k + r))

            def dec_errors():
                restore()
                for w in range(WORDS):
                    decode(work + w * (k + r), k, work + w * (k + r) + k)

            restore()                                      # once, checked: every word corrected
            assert all(decode(work + w * (k + r), k, work + w * (k + r) + k) == t for w in range(WORDS))
            assert bytes(ffi.buffer(work, WORDS * (k + r))) == clean.tobytes()
            reps = 5 if profile != "tiny" else 2
            t_us = [best_seconds(enc, reps) / WORDS * 1e6, best_seconds(dec_clean, reps) / WORDS * 1e6,
                    (best_seconds(dec_errors, reps) - best_seconds(restore, reps)) / WORDS * 1e6]
            ipb = [per_byte(model, host, mode, ITERS[profile], k) for mode in (0, 1, 2)]
            cyc = avr.cycles(model, target) if k <= 64 else None
            if cyc is not None:
                assert cyc["corrected"] == t, "the AVR build did not correct the word"
            for i, (op, key) in enumerate((("encode", "encode"), ("clean decode", "clean"),
                                           (f"decode, {t} errors", "errors"))):
                rows.append([spec.name, profile, op, model.properties.table_bytes, f"{t_us[i]:.2f}",
                             "n/a" if ipb[i] is None else f"{ipb[i]:.1f}",
                             "" if cyc is None else f"{cyc[key] / k:.0f}", f"{galois_us[i]:.0f}"])
    print(table(f"Reed-Solomon: us/call (cffi, {WORDS} words), host instr/data byte (callgrind, gcc -O2 x86-64), "
                f"AVR cycles/data byte (simavr {avr.MCU}, avr-gcc {' '.join(avr.CFLAGS)}, Timer1, tables in flash), "
                "galois us/word (batched, same words)",
                ["code", "profile", "operation", "table B", "us/call", "instr/B", "AVR cyc/B", "galois us"],
                rows))


if __name__ == "__main__":
    main()
