"""`bitmend prove`'s driver against the bare decoder, on one core, in the same run.

For each example: the driver's patterns per second on one core over a shard of weight-2 patterns (each
pattern decoded on every codeword: CODEWORDS decode calls), and the bare decoder's call rate on exactly the
same received words (a C loop: copy a received word into place, which is the least a decoder that corrects
in place needs before each call, and decode it; nothing else).  The ratio is
driver decode calls per second over bare decode calls per second; issue 11 asks for at least 80 %.
The shard holds as many patterns as keep the bare loop's received words within WORDS_BYTES (a core's
level-2 cache, as the driver's frames stay in cache), all of them when they fit: a real proof's shards
run for about a second, so the bench repeats the shard rather than cutting it short.
Times are this process's CPU time (time.process_time: a core's work, not the wait for a core on a shared
machine), best of ROUNDS alternating rounds, so both figures see the same machine load.
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from common import ROOT, table  # noqa: E402

from bitmend import harness, spec as specmod  # noqa: E402
from bitmend.codes import build  # noqa: E402
from bitmend.prove_driver import CODEWORDS, make_job, runner, shard_decl  # noqa: E402

EXAMPLES = ["flash_page", "meter_reading", "beacon_telemetry", "mem_word"]
WEIGHT = 2
WORDS_BYTES = 256 * 1024     # the bare loop's received words (every pattern on every codeword) at most
ROUNDS = 7
SECONDS = 0.3                # driver time per round

BARE = """\
#include <string.h>
#include "{name}.h"

{decl};

/* `reps` passes over the n_words received words: each copied into `work`, then decoded in place. */
{decl}
{{
    const size_t len = (size_t)data_len + parity_len;
    const uint8_t *end = words + (size_t)n_words * len, *word;
    uint64_t r;
    int sink = 0;
    for (r = 0u; r < reps; r++) {{
        for (word = words; word < end; word += len) {{
            memcpy(work, word, len);
            sink += {name}_decode(work, data_len, work + data_len);
        }}
    }}
    return sink;
}}
"""


def bare_decl(name: str) -> str:
    return (f"int {name}_bench_bare(const uint8_t *words, uint32_t n_words, uint32_t data_len, "
            "uint32_t parity_len, uint64_t reps, uint8_t *work)")


def received_words(job, first: int, count: int) -> bytes:
    """The words the driver decodes for ranks first .. first + count - 1: each pattern on each codeword."""
    size = job.data_len + job.parity_len
    out = bytearray()
    for rank in range(first, first + count):
        for w in range(CODEWORDS):
            frame = bytearray(job.words[w * size:(w + 1) * size])
            for unit, value in job.pattern(WEIGHT, rank):
                off = job.units[unit]
                if job.unit_bits == 1:
                    frame[off // 8] ^= 0x80 >> (off % 8)
                else:
                    frame[off // 8] ^= value
            out += frame
    return bytes(out)


def measure(name: str) -> list:
    model = build(specmod.load(ROOT / "examples" / f"{name}.toml"))
    job = make_job(model, model.properties.data_bytes)
    drive = runner(job)
    files = dict(job.files)
    files[f"{name}_bench.c"] = BARE.format(name=name, decl=bare_decl(name))
    module = harness.build(name, files, extra_cdef=f"{shard_decl(name)};\n{bare_decl(name)};")
    ffi = module.ffi
    total = job.patterns(WEIGHT)
    count = min(total, WORDS_BYTES // (CODEWORDS * (job.data_len + job.parity_len)))
    first = min(total // 2, total - count)
    words = received_words(job, first, count)
    buf = ffi.new("uint8_t[]", words)
    work = ffi.new("uint8_t[]", job.data_len + job.parity_len)
    bare = module.fn("bench_bare")

    def driver(reps: int) -> None:
        for _ in range(reps):
            drive.run(WEIGHT, first, count)

    reps = 1
    while True:                                  # repetitions of the shard for about SECONDS
        t0 = time.process_time()
        driver(reps)
        if time.process_time() - t0 >= SECONDS / 4:
            break
        reps *= 2
    reps *= 4
    calls = reps * count * CODEWORDS
    best_drive = best_bare = float("inf")
    for _ in range(ROUNDS):
        t0 = time.process_time()
        driver(reps)
        best_drive = min(best_drive, time.process_time() - t0)
        t0 = time.process_time()
        bare(buf, count * CODEWORDS, job.data_len, job.parity_len, reps, work)
        best_bare = min(best_bare, time.process_time() - t0)
    per_core = reps * count / best_drive
    drive_calls, bare_calls = calls / best_drive, calls / best_bare
    return [name, f"{len(job.units)} x {job.unit_bits}", f"{per_core:,.0f}", f"{drive_calls:,.0f}",
            f"{bare_calls:,.0f}", f"{100 * drive_calls / bare_calls:.0f} %"]


def main() -> None:
    rows = [measure(name) for name in EXAMPLES]
    print(table(f"prove driver, weight-{WEIGHT} patterns on {CODEWORDS} codewords each, one core "
                f"(CPU time, best of {ROUNDS} alternating rounds)",
                ["example", "units x bits", "patterns/s per core", "driver decodes/s", "bare decodes/s",
                 "driver/bare"], rows))


if __name__ == "__main__":
    main()
