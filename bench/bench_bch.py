"""Binary BCH: the 512-byte m = 13, t = 8 flash-sector code (examples/flash_page.toml) and the 16-byte m = 8,
t = 3 meter code (examples/meter_reading.toml), every profile.

One table: microseconds per call through cffi, host instructions per data byte under callgrind (gcc -O2;
a zero-iteration run subtracted, and for the error decode the copy and planting of the errors), AVR cycles
per data byte in simavr (the meter code), and galois's decode of the same t-error words in the same run.
"""
from __future__ import annotations

import time

import numpy as np

import avr
from common import ROOT, best_seconds, codec_drivers, per_byte, table

from bitmend import spec as specmod  # noqa: E402
from bitmend.codes import build  # noqa: E402
from bitmend.verify import apply_errors, module_for  # noqa: E402

CODES = [ROOT / "examples" / "flash_page.toml", ROOT / "examples" / "meter_reading.toml"]
WORDS = 32                 # distinct t-error words, each decoded by the C
GALOIS_WORDS = 8           # galois takes milliseconds per word: a few are enough
ITERS = {"fast": 200, "small": 100, "tiny": 5}     # calls per callgrind run (the counts are exact)


def _errors(rng, model, n):
    units = model.error_units(n)
    picks = rng.choice(len(units), model.t, replace=False)
    return tuple((units[i], 1) for i in sorted(picks))


def _galois_us(model, words) -> tuple[float, float]:
    """galois's batched decode of the words (after a warm-up call that JIT-compiles): us per word, and the
    set-up seconds not counted."""
    import galois
    t0 = time.perf_counter()
    field = galois.GF(2 ** model.m, irreducible_poly=model.field_poly)
    ref = galois.BCH(model.order, model.k_parent, extension_field=field, alpha=field(2))
    n = model.properties.data_bytes
    batch = np.array([np.concatenate([np.unpackbits(np.frombuffer(rd, np.uint8)),
                                      np.unpackbits(np.frombuffer(rp, np.uint8))[:model.r]])
                      for _, _, rd, rp in words[:GALOIS_WORDS]])
    cw = galois.GF2(batch)                  # shortened words: galois takes them as they are
    ref.decode(cw[:1], errors=True)
    setup = time.perf_counter() - t0
    t0 = time.perf_counter()
    decoded, nerr = ref.decode(cw, errors=True)
    secs = (time.perf_counter() - t0) / len(batch)
    assert list(nerr) == [model.t] * len(batch)
    for (msg, _, _, _), row in zip(words, np.asarray(decoded)):
        assert np.packbits(row[:8 * n]).tobytes() == msg
    return secs * 1e6, setup


def main() -> None:
    rows = []
    notes = []
    for path in CODES:
        spec = specmod.load(path)
        base = build(spec)
        n, plen = base.properties.data_bytes, base.parity_len(base.properties.data_bytes)
        rng = np.random.default_rng(7)
        words = []
        for _ in range(WORDS):
            msg = rng.integers(0, 256, n, dtype=np.uint8).tobytes()
            par = base.encode(msg)
            rd, rp = apply_errors(base, msg, par, _errors(rng, base, n))
            words.append((msg, par, rd, rp))
        g_us, setup = _galois_us(base, words)
        notes.append(f"galois set-up and JIT warm-up for {spec.name}: {setup:.1f} s, not counted")
        # the host/AVR driver's word: the first one, its errors as (byte, mask)
        msg, par, rd, rp = words[0]
        planted = [(i, a ^ b) for i, (a, b) in enumerate(zip(msg + par, rd + rp)) if a != b]
        host, target = codec_drivers(base, msg, planted)
        for profile in specmod.PROFILES:
            model = build(spec.with_profile(profile))
            mod = module_for(model)
            ffi = mod.ffi
            enc, dec = mod.fn("encode"), mod.fn("decode")
            d_buf, p_buf = ffi.new("uint8_t[]", msg), ffi.new("uint8_t[]", plen)
            t_enc = best_seconds(lambda: enc(d_buf, n, p_buf), repeat=5, number=200)
            t_clean = best_seconds(lambda: dec(d_buf, n, p_buf), repeat=5, number=200)
            srcs = [(ffi.new("uint8_t[]", w[2]), ffi.new("uint8_t[]", w[3])) for w in words]
            wd, wp = ffi.new("uint8_t[]", n), ffi.new("uint8_t[]", plen)
            mm = ffi.memmove

            def copies(decode: bool):
                for sd, sp in srcs:
                    mm(wd, sd, n)
                    mm(wp, sp, plen)
                    if decode:
                        assert dec(wd, n, wp) == model.t
            number = 2 if profile == "tiny" else 10
            t_err = (best_seconds(lambda: copies(True), 3, number)
                     - best_seconds(lambda: copies(False), 3, number)) / WORDS
            ipb = [per_byte(model, host, mode, ITERS[profile], n) for mode in (0, 1, 2)]
            cyc = avr.cycles(model, target) if n <= 64 else None
            if cyc is not None:
                assert cyc["corrected"] == model.t, "the AVR build did not correct the word"
            for i, (op, secs, key) in enumerate((("encode", t_enc, "encode"), ("clean decode", t_clean, "clean"),
                                                 (f"decode, {model.t} errors", t_err, "errors"))):
                rows.append([spec.name, profile, op, model.properties.table_bytes, f"{secs * 1e6:.2f}",
                             "n/a" if ipb[i] is None else f"{ipb[i]:.1f}",
                             "" if cyc is None else f"{cyc[key] / n:.0f}",
                             f"{g_us:.0f}" if i == 2 else ""])
            if ipb[0] and ipb[1]:
                notes.append(f"{spec.name} {profile}: clean decode / encode = {ipb[1] / ipb[0]:.2f} (instructions)")
    print(table(f"BCH: us/call (cffi), host instr/data byte (callgrind, gcc -O2 x86-64), AVR cycles/data byte "
                f"(simavr {avr.MCU}, avr-gcc {' '.join(avr.CFLAGS)}, Timer1, tables in flash), "
                "galois us/word (batched, same words)",
                ["code", "profile", "operation", "table B", "us/call", "instr/B", "AVR cyc/B", "galois us"],
                rows))
    for note in notes:
        print(note)


if __name__ == "__main__":
    main()
