"""`bitmend prove`: counts per weight against brute force computed here, the same totals on one worker, two
workers and a cluster started by hand, resuming from a state file, Ctrl-C, wrong decodes, the CLI's errors.

One local Dask cluster (two worker processes on 127.0.0.1) serves the module; the tests that need another
cluster start it themselves and stop it by its own process ids.
"""
from __future__ import annotations

import itertools
import json
import math
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from bitmend import cli, cluster, emit, prove, prove_driver, target
from bitmend import spec as specmod
from bitmend.codes import build
from conftest import EXAMPLES, rs_toml

DASK = Path(sys.executable).parent / "dask"

CODES = {
    "h74": '[code]\nname = "h74"\nfamily = "hamming"\n[hamming]\ndata_bits = 4\nsecded = false\n',
    "secded": '[code]\nname = "sd72"\nfamily = "hamming"\n[hamming]\ndata_bits = 64\nsecded = true\n',
    # 18 bytes: frames of three 64-bit words, past the driver's two-word path
    "secded128": '[code]\nname = "sd137"\nfamily = "hamming"\n[hamming]\ndata_bits = 128\nsecded = true\n',
    "bch15": '[code]\nname = "b15"\nfamily = "bch"\n[bch]\nm = 4\nt = 2\n',
    "bch63": '[code]\nname = "b63"\nfamily = "bch"\n[bch]\nm = 6\nt = 2\n',
    "rs4": rs_toml("rs4", 4, 2),
    "rs18": rs_toml("rs18", 18, 16),          # 18-byte frames: the flips path, with symbol values
}


@pytest.fixture(scope="module")
def specs(tmp_path_factory) -> dict[str, Path]:
    folder = tmp_path_factory.mktemp("prove_specs")
    out = {}
    for key, text in CODES.items():
        out[key] = folder / f"{key}.toml"
        out[key].write_text(text)
    return out


@pytest.fixture(scope="module")
def address():
    """A scheduler and two worker processes on 127.0.0.1 for the whole module."""
    with cluster.local(2) as local:
        yield local.scheduler_address


def certify(path, address, max_weight=None, **kw) -> prove.Certificate:
    certs, interrupted = prove.run(specmod.load(path), [specmod.load(path).profile], max_weight,
                                   scheduler=address, progress=False, **kw)
    assert not interrupted and len(certs) == 1
    return certs[0]


def rows(cert_or_dict) -> dict[int, tuple]:
    weights = cert_or_dict["weights"] if isinstance(cert_or_dict, dict) else cert_or_dict.weights
    return {w["weight"]: (w["patterns"], w["corrected"], w["detected"], w["miscorrected"], w["wrong"])
            for w in weights}


# -- brute force, computed here from syndromes ------------------------------------------------------------

def syndrome_split(columns: np.ndarray, weight: int, t: int) -> tuple[int, int]:
    """(miscorrected, detected) for every pattern of `weight` units of a bounded-distance decoder: a pattern
    is miscorrected exactly when its syndrome is the syndrome of some pattern of weight <= t (a zero
    syndrome included: the received word is then itself a codeword).  `columns[i]` is the syndrome of a
    single error in unit i, as one integer (XOR adds syndromes)."""
    within = {0}
    for w in range(1, t + 1):
        for combo in itertools.combinations(range(len(columns)), w):
            within.add(int(np.bitwise_xor.reduce(columns[list(combo)])))
    combos = np.array(list(itertools.combinations(range(len(columns)), weight)))
    synd = np.bitwise_xor.reduce(columns[combos], axis=1)
    mis = int(np.isin(synd, np.array(sorted(within))).sum())
    return mis, len(combos) - mis


def gf_exp(m: int, poly: int) -> list[int]:
    """alpha^i in GF(2^m) built from the primitive polynomial (common practice, no source)."""
    out, x = [], 1
    for _ in range((1 << m) - 1):
        out.append(x)
        x <<= 1
        if x >> m:
            x ^= poly
    return out


def bch_columns(m: int, poly: int, n: int) -> np.ndarray:
    """Syndrome (S1, S3) of a single error at each unit of a full-length t = 2 BCH code, packed in one int;
    unit i (data first, highest degree first) is the coefficient of x^(n - 1 - i)."""
    exp = gf_exp(m, poly)
    order = (1 << m) - 1
    return np.array([exp[(n - 1 - i) % order] << m | exp[3 * (n - 1 - i) % order] for i in range(n)])


def test_hamming_7_4_is_perfect(specs, address):
    # Hamming (7,4) is perfect: every non-zero syndrome is that of one single error, so every pattern of
    # weight 2 or 3 is decoded to another codeword (closed form, common practice, no source).
    columns = np.arange(1, 8)                     # the 7 non-zero 3-bit syndromes, one per unit
    cert = certify(specs["h74"], address, max_weight=3)
    assert rows(cert) == {1: (7, 7, 0, 0, 0), 2: (21, 0, 0, 21, 0), 3: (35, 0, 0, 35, 0)}
    assert syndrome_split(columns, 3, 1) == (35, 0)
    assert cert.complete and cert.wrong == 0


def test_one_certificate_per_profile(specs, address, tmp_path):
    out = tmp_path / "certs.json"
    assert cli.main(["prove", str(specs["h74"]), "--profile", "fast", "--profile", "tiny", "--scheduler", address,
                     "--json", str(out)]) == 0
    certs = json.loads(out.read_text())
    assert [c["profile"] for c in certs] == ["fast", "tiny"]
    for c in certs:                           # the fields of issue 11's certificate
        assert {"spec_file", "spec_sha256", "bitmend", "profile", "compiler", "flags", "data_len", "codewords",
                "elapsed_s", "workers", "weights", "complete"} <= set(c)
        assert c["spec_file"] == "h74.toml" and len(c["codewords"]) == 3 and c["complete"] is True
        assert rows(c) == {1: (7, 7, 0, 0, 0), 2: (21, 0, 0, 21, 0)}


@pytest.mark.parametrize("key, n", [("secded", 72), ("secded128", 137)])
def test_secded_counts(specs, address, key, n):
    # SECDED: every double error has an even non-zero syndrome and is detected (Hsiao, 1970); triple
    # errors split by whether their odd syndrome is a column of H (syndromes from the model's H, which
    # test_hamming.py holds to Hsiao's construction).  (72,64)'s 9-byte frames take the driver's two-word
    # image of the frame, (137,128)'s 18-byte frames its other path (flips).
    model = build(specmod.load(specs[key]))
    columns = np.array([int("".join(map(str, model.H[:, j])), 2) for j in range(n)])
    mis, det = syndrome_split(columns, 3, 1)
    cert = certify(specs[key], address, max_weight=3)
    pairs, triples = math.comb(n, 2), math.comb(n, 3)
    assert rows(cert) == {1: (n, n, 0, 0, 0), 2: (pairs, 0, pairs, 0, 0), 3: (triples, 0, det, mis, 0)}
    assert mis > 0 and det > 0


@pytest.mark.parametrize("key, m, poly, n, weight_5_codewords", [
    ("bch15", 4, 0b10011, 15, 18),     # A5 = 18 for BCH(15,7) (its weight enumerator, from memory)
    ("bch63", 6, 0b1000011, 63, None),
])
def test_bch_t_plus_1(specs, address, key, m, poly, n, weight_5_codewords):
    mis, det = syndrome_split(bch_columns(m, poly, n), 3, 2)
    if weight_5_codewords is not None:
        # each weight-5 codeword holds C(5, 3) weight-3 patterns decoded to it
        assert mis == weight_5_codewords * math.comb(5, 3)
    cert = certify(specs[key], address)
    assert rows(cert) == {1: (n, n, 0, 0, 0), 2: (math.comb(n, 2),) + (math.comb(n, 2), 0, 0, 0),
                          3: (math.comb(n, 3), 0, det, mis, 0)}


def test_reed_solomon_every_symbol_value(specs, address):
    # shortened RS(4,2) over GF(256), x^8+x^4+x^3+x^2+1, roots alpha^0, alpha^1; symbol j (data first) is
    # the coefficient of x^(3 - j).  A weight-2 pattern is miscorrected exactly when its syndrome is that
    # of a single error at one of the 4 transmitted positions.
    exp = np.array(gf_exp(8, 0x11D) * 2)
    log = np.zeros(256, dtype=np.int64)
    log[exp[:255]] = np.arange(255)
    values = np.arange(1, 256)

    def synd(pos, val):                           # (S0, S1) packed: S_i = val * alpha^(i * (3 - pos))
        return val << 8 | exp[(log[val] + (3 - pos)) % 255]

    singles = {int(x) for pos in range(4) for x in synd(pos, values)}
    mis = 0
    for a, b in itertools.combinations(range(4), 2):
        s = synd(a, values)[:, None] ^ synd(b, values)[None, :]
        mis += int(np.isin(s, np.array(sorted(singles))).sum())
    cert = certify(specs["rs4"], address)
    assert rows(cert) == {1: (4 * 255, 4 * 255, 0, 0, 0), 2: (6 * 255 ** 2, 0, 6 * 255 ** 2 - mis, mis, 0)}
    assert 0 < mis < 6 * 255 ** 2
    assert "every one of the 255 non-zero error values" in cert.table()


def test_symbol_miscorrections_in_longer_frames(specs):
    # RS(18,16) over GF(256), x^8+x^4+x^3+x^2+1, roots alpha^0, alpha^1, symbol j the coefficient of
    # x^(17 - j); 18-byte frames take the driver's flips path.  One shard, every value pair on symbols 0
    # and 1, against syndromes computed here.  (S0, S1) is a bijection of the two values, so 16 * 255 pairs
    # have the syndrome of a single error at one of the other 16 positions and are miscorrected (common
    # practice, no source); the rest are detected.
    exp = gf_exp(8, 0x11D)
    log = {x: i for i, x in enumerate(exp)}
    job = prove_driver.make_job(build(specmod.load(specs["rs18"])), 16)
    count = 255 ** 2
    mis = 0
    for rank in range(count):
        (a, va), (b, vb) = job.pattern(2, rank)
        s0 = va ^ vb
        s1 = exp[(log[va] + 17 - a) % 255] ^ exp[(log[vb] + 17 - b) % 255]
        mis += s0 != 0 and s1 != 0 and (log[s1] - log[s0]) % 255 <= 17
    counts, failed = prove_driver.runner(job).run(2, 0, count)
    assert mis == 16 * 255
    assert counts == (0, count - mis, mis, 0) and failed == ()


def test_one_worker_and_two_give_the_same_totals(specs, address, tmp_path):
    two = certify(specs["bch63"], address, shard_seconds=0.01)      # many small shards
    assert two.workers == 2 and two.complete
    out = tmp_path / "one.json"
    assert cli.main(["prove", str(specs["bch63"]), "--workers", "1",
                     "--json", str(out)]) == 0
    one = json.loads(out.read_text())
    assert one["workers"] == 1 and one["complete"] is True
    assert rows(one) == rows(two)


def test_resumed_run_gives_the_same_totals(specs, address, tmp_path):
    state = tmp_path / "state.jsonl"
    # shards of about 2 ms: weight 3's 39,711 patterns make several even at a few million patterns a second
    whole = certify(specs["bch63"], address, max_weight=3, shard_seconds=0.002, state_file=str(state))
    lines = state.read_text().splitlines()
    done = [line for line in lines if '"done"' in line]
    assert len(done) >= 4
    kept = [line for line in lines if '"plan"' in line] + done[:len(done) // 2]
    state.write_text("\n".join(kept) + "\n" + done[-1][:25])      # killed while writing a line
    again = certify(specs["bch63"], address, max_weight=3, state_file=str(state))
    assert rows(again) == rows(whole) and again.complete
    assert all(json.loads(line) for line in state.read_text().splitlines())     # the torn line cut off
    assert again.resumed_shards == len(done) // 2
    assert again.patterns_run == sum(w["patterns"] for w in whole.weights) - sum(
        json.loads(line)["count"] for line in done[:len(done) // 2])


def test_ctrl_c_stops_cleanly(tmp_path):
    """Ctrl-C on a terminal signals the whole process group: the default local cluster's workers ignore it,
    the client stops, shuts its cluster down and leaves no process behind."""
    # the 512-byte sector's code at data_len 16: 232 error bits, 2,054,360 patterns of weight 3 (about ten
    # shards of a second, so the run is still going when the first one is recorded)
    state = tmp_path / "state.jsonl"
    flash = [p for p in EXAMPLES if p.name == "flash_page.toml"][0]
    args = [str(flash), "--data-len", "16", "--max-weight", "3", "--state", str(state)]
    proc = subprocess.Popen([sys.executable, "-m", "bitmend.cli", "prove", *args], start_new_session=True,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        deadline = time.monotonic() + 90
        while '"weight": 3, "first"' not in (state.read_text() if state.exists() else ""):
            assert proc.poll() is None and time.monotonic() < deadline
            time.sleep(0.05)
        os.killpg(proc.pid, signal.SIGINT)
        out, err = proc.communicate(timeout=60)
        with pytest.raises(ProcessLookupError):    # no worker left in the group (zombies reaped by init)
            for _ in range(150):
                os.killpg(proc.pid, 0)
                time.sleep(0.1)
    finally:
        try:
            os.killpg(proc.pid, signal.SIGKILL)    # only what this test started, if anything is left
        except ProcessLookupError:
            pass
        proc.wait()
    assert proc.returncode == cli.EXIT_INTERRUPTED, err
    assert "complete: false" in out and "interrupted" in err and "Traceback" not in err
    # the state holds what the partial certificate counts (resuming from it: test_resumed_run_...)
    records = [json.loads(line) for line in state.read_text().splitlines()]
    done3 = [r for r in records if r.get("done") and r["weight"] == 3]
    shard3 = next(r["shard"] for r in records if r.get("plan") and r["weight"] == 3)
    assert 1 <= len(done3) < math.ceil(math.comb(232, 3) / shard3)          # really stopped half-way
    # t = 8: every pattern of weight <= 3 that ran was corrected (bounded-distance decoding)
    ran = sum(r["count"] for r in done3)
    assert all(r["counts"] == [r["count"], 0, 0, 0] for r in done3)
    assert f"       3      {math.comb(232, 3):>9,} {ran:>14,}" in out


def test_scheduler_and_worker_started_by_hand(specs, tmp_path, monkeypatch, capsys):
    """The README's two commands, on 127.0.0.1, bounded in time, stopped by their process ids."""
    from distributed import Client
    info = tmp_path / "scheduler.json"
    sched = subprocess.Popen([str(DASK), "scheduler", "--host", "127.0.0.1", "--port", "0", "--no-dashboard",
                              "--scheduler-file", str(info), "--idle-timeout", "120s"],
                             stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    worker = None
    try:
        deadline = time.monotonic() + 60
        while not info.exists() or not info.read_text().strip():
            assert sched.poll() is None and time.monotonic() < deadline
            time.sleep(0.1)
        addr = json.loads(info.read_text())["address"]
        assert addr.startswith("tcp://127.0.0.1:")
        monkeypatch.setattr(cluster, "CONNECT_TIMEOUT", "1s")
        assert cli.main(["prove", str(specs["bch15"]), "--scheduler", addr]) == 2      # no worker yet
        assert f"the scheduler at {addr} has no workers" in capsys.readouterr().err
        monkeypatch.undo()
        worker = subprocess.Popen([str(DASK), "worker", addr, "--host", "127.0.0.1", "--nthreads", "1",
                                   "--no-nanny", "--no-dashboard", "--lifetime", "120s"],
                                  stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        with Client(addr, timeout="30s") as client:
            client.wait_for_workers(1, timeout=60)
        out = tmp_path / "cert.json"
        assert cli.main(["prove", str(specs["bch15"]), "--scheduler", addr, "--json", str(out)]) == 0
        got = json.loads(out.read_text())
        assert got["workers"] == 1 and got["scheduler"] == addr and got["complete"] is True
        mis, det = syndrome_split(bch_columns(4, 0b10011, 15), 3, 2)
        assert rows(got)[3] == (455, 0, det, mis, 0)
    finally:
        for proc in (worker, sched):
            if proc is not None:
                proc.terminate()
                try:
                    proc.wait(timeout=20)
                except subprocess.TimeoutExpired:
                    proc.kill()
                    proc.wait()


def break_decoder(monkeypatch, before: str, after: str, name: str = "h74") -> None:
    """<name>_decode wrapped: `before` runs on the received word, `after` once the real decoder returned rc."""
    render = emit.render

    def broken(model, env=None):
        files = dict(render(model, env))
        c = files[f"{name}.c"].replace(f"int {name}_decode(", f"static int {name}_decode_real(", 1)
        files[f"{name}.c"] = c + (f"int {name}_decode(uint8_t *data, size_t data_len, uint8_t *parity)\n"
                                  f"{{\n    int rc;\n    {before}\n"
                                  f"    rc = {name}_decode_real(data, data_len, parity);\n    {after}\n}}\n")
        return files

    monkeypatch.setattr(emit, "render", broken)


@pytest.mark.parametrize("after, wrong, first_lines", [
    # a return that breaks the contract: 2 after correcting one error; every single error (7) and every
    # double one (21, miscorrected by one flip) now returns 2
    ("return rc == 1 ? 2 : rc;", 28, ["weight 1 rank 0: data bit 0", "weight 1 rank 6: parity bit 2",
                                      "weight 2 rank 0: data bit 0, data bit 1"]),
    # a write one byte past the parity buffer (into the driver's padding and guard bytes) on every call
    ("parity[1] = 0;\n    return rc;", 28, ["weight 1 rank 0: data bit 0"]),
])
def test_a_wrong_decoder_is_caught(specs, address, monkeypatch, capsys, after, wrong, first_lines):
    break_decoder(monkeypatch, "", after)
    assert cli.main(["prove", str(specs["h74"]), "--max-weight", "2", "--scheduler", address]) == 1
    out = capsys.readouterr().out
    assert f"{wrong} patterns decoded wrongly" in out
    for line in first_lines:                   # units: 4 data bits, then 3 parity bits
        assert f"! wrong: {line}\n" in out


@pytest.mark.parametrize("after, wrong", [
    ("return rc == 1 ? 2 : rc;", 137),         # every single error's return breaks the contract
    ("parity[2] = 0;\n    return rc;", 137 + 9316),   # a write into the frame's padding on every call
])
def test_a_wrong_decoder_is_caught_in_longer_frames(specs, address, monkeypatch, after, wrong):
    """The same catches on (137,128)'s 18-byte frames, which the driver handles by flips."""
    break_decoder(monkeypatch, "", after, name="sd137")
    cert = certify(specs["secded128"], address, max_weight=2)
    assert cert.wrong == wrong


def test_a_stray_write_is_named_for_its_patterns_alone(specs, address, monkeypatch):
    """A decoder that writes 20 bytes before its data buffer on one received word only.  The driver's guards
    are compared with the guard byte itself, so when the shard runs again pattern by pattern only the
    patterns that produce that word are wrong (a reference copy of the guard within reach of the write
    made every later pattern of the shard look guilty)."""
    trigger = (0x80, 0x00)                     # data bit 0 set, parity 0: the all-zero word's weight-1 rank 0
    job = prove_driver.make_job(build(specmod.load(specs["h74"])), 1)
    words = [job.words[i:i + 2] for i in range(0, len(job.words), 2)]
    culprits = []
    for weight in (1, 2):
        for rank in range(job.patterns(weight)):
            hit = False
            for word in words:
                got = bytearray(word)
                for unit, _ in job.pattern(weight, rank):
                    got[job.units[unit] // 8] ^= 0x80 >> job.units[unit] % 8
                hit |= tuple(got) == trigger
            if hit:
                culprits.append((weight, rank))
    assert culprits[0] == (1, 0) and len(culprits) < 28 // 2
    break_decoder(monkeypatch, f"if (data[0] == {trigger[0]:#x}u && parity[0] == {trigger[1]:#x}u) {{\n"
                               "        data[-20] = 0;\n    }", "return rc;")
    cert = certify(specs["h74"], address, max_weight=2)
    assert cert.wrong == len(culprits)
    assert cert.failures == culprits


ENDIAN_MAIN = """\
#include <stdio.h>
#include "{name}.h"

{decl};

static const uint8_t words[] = {{{words}}};
static const uint32_t units[] = {{{units}}};
static uint8_t scratch[{scratch}];

int main(void)
{{
    uint64_t counts[4], failed[1];
    int rc = {name}_prove_shard(words, {n_words}u, {data_len}u, {parity_len}u, units, {n_units}u, {unit_bits}u,
                                {weight}u, {first}u, {count}u, scratch, sizeof scratch, counts, failed, 0u);
    printf("rc %d counts %lu %lu %lu %lu\\n", rc, (unsigned long)counts[0], (unsigned long)counts[1],
           (unsigned long)counts[2], (unsigned long)counts[3]);
    return 0;
}}
"""


@pytest.mark.parametrize("key, data_len, weight, count", [
    ("secded", 8, 3, None),                    # every weight-3 pattern: detected and miscorrected ones
    ("secded128", 16, 2, None),                # frames of three 64-bit words: flips, not images
    ("rs4", 2, 2, 20000),                      # symbols: masks that carry a value, not a bit
])
def test_a_big_endian_core_counts_the_same(specs, key, data_len, weight, count):
    """The driver XORs patterns in and compares frames 64 bits at a time, with masks it builds byte by byte;
    on big-endian MIPS (under qemu) a shard gives the counts it gives here."""
    mips = target.TARGETS["mips"]
    if mips.missing():
        pytest.skip(mips.missing())
    job = prove_driver.make_job(build(specmod.load(specs[key])), data_len)
    count = count or job.patterns(weight)
    host, _ = prove_driver.runner(job).run(weight, 0, count)
    main = ENDIAN_MAIN.format(
        name=job.name, decl=prove_driver.shard_decl(job.name), words=", ".join(map(str, job.words)),
        units=", ".join(map(str, job.units)), n_words=prove_driver.CODEWORDS, data_len=job.data_len,
        parity_len=job.parity_len, n_units=len(job.units), unit_bits=job.unit_bits, weight=weight, first=0,
        count=count, scratch=prove_driver.scratch_bytes(prove_driver.CODEWORDS, job.data_len + job.parity_len))
    program = target.build_program({**job.files, "endian_main.c": main}, mips.cc, (*mips.flags, "-O2"), True)
    res = subprocess.run([*mips.run, str(program)], capture_output=True, text=True, timeout=120)
    assert res.stdout.split() == ["rc", "0", "counts", *map(str, host)], res.stderr
    assert sum(host) == count and host[3] == 0


# -- the CLI's errors: one line, exit 2, nothing written ----------------------------------------------------

@pytest.mark.parametrize("extra, words", [
    (["--data-len", "0"], "--data-len must be in 1..1"),
    (["--max-weight", "0"], "--max-weight must be in 1..7"),
    (["--max-weight", "8"], "--max-weight must be in 1..7"),
    (["--workers", "0"], "--workers must be at least 1"),
    (["--workers", "2", "--scheduler", "tcp://127.0.0.1:1"], "--workers applies to the local cluster only"),
])
def test_bad_options(specs, tmp_path, capsys, extra, words):
    out = tmp_path / "cert.json"
    assert cli.main(["prove", str(specs["h74"]), *extra, "--json", str(out)]) == 2
    err = capsys.readouterr().err
    assert words in err and len(err.strip().splitlines()) == 1
    assert not out.exists()


def test_too_many_symbol_patterns_are_refused_with_their_cost(tmp_path, capsys):
    beacon = [p for p in EXAMPLES if p.name == "beacon_telemetry.toml"][0]       # RS(28,20), t = 4
    state = tmp_path / "state.jsonl"
    assert cli.main(["prove", str(beacon), "--state", str(state)]) == 2         # default W = t + 1 = 5
    err = capsys.readouterr().err
    assert "--max-weight 5: weight 4 has 8.66e+13 patterns (C(28, 4) x 255^4 error values)" in err
    assert "core-days" in err and "choose --max-weight 3 or less" in err
    assert not state.exists()


def test_bad_spec_and_foreign_state_file(specs, tmp_path, capsys):
    assert cli.main(["prove", str(tmp_path / "missing.toml")]) == 2
    assert "missing.toml: [file]: cannot read" in capsys.readouterr().err
    state = tmp_path / "state.jsonl"
    state.write_text('{"plan": "0123456789abcdef01234567", "weight": 1, "shard": 10}\n')
    assert cli.main(["prove", str(specs["h74"]), "--state", str(state)]) == 2
    assert "state of another proof" in capsys.readouterr().err
    state.write_text("not json\n{}\n")
    assert cli.main(["prove", str(specs["h74"]), "--state", str(state)]) == 2
    assert "line 1 is not a bitmend prove state record" in capsys.readouterr().err
    assert state.read_text() == "not json\n{}\n"


def test_unreachable_scheduler(specs, monkeypatch, capsys):
    monkeypatch.setattr(cluster, "CONNECT_TIMEOUT", "1s")
    assert cli.main(["prove", str(specs["h74"]), "--scheduler", "tcp://127.0.0.1:1"]) == 2
    assert "no scheduler at tcp://127.0.0.1:1" in capsys.readouterr().err
