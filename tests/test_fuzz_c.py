"""libFuzzer + ASan + UBSan on the generated C (issue 13 item 7): one module per family, in every profile.

tests/fuzz/driver.c checks the C contract on every input (see its header comment): lengths refused
exactly, negative returns leave both buffers untouched, a successful decode leaves a word check()
accepts and returns exactly the units it changed, and up to t errors on code bits come back exactly.
The sanitizers catch any access outside the buffers and any undefined behaviour.  Bounded for the suite
(BITMEND_FUZZ_RUNS inputs per target, default 3000); `make fuzz` runs far more.  Targets are cached by
content hash under $BITMEND_CACHE/fuzz.
"""
from __future__ import annotations

import hashlib
import os
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

from bitmend import emit, harness, spec as specmod
from bitmend.codes import build
from conftest import ROOT

DRIVER = Path(__file__).parent / "fuzz" / "driver.c"
RUNS = int(os.environ.get("BITMEND_FUZZ_RUNS", "3000"))
CLANG = shutil.which("clang")
# one example per family
SAMPLES = ["soil_probe", "cal_word", "meter_reading", "beacon_telemetry"]
# -O0 builds in half the time of -O1, which matters for the suite's few thousand inputs, not for make fuzz
OPT = "-O1" if "BITMEND_FUZZ_RUNS" in os.environ else "-O0"
FLAGS = ["-std=c99", "-g", OPT, "-fsanitize=fuzzer,address,undefined", "-fno-sanitize-recover=all"]


def fuzzer_available() -> bool:
    """clang with its fuzzer runtime (libclang-rt-14-dev): a one-line target must link."""
    if CLANG is None:
        return False
    probe = "int LLVMFuzzerTestOneInput(const unsigned char *d, unsigned long n) { (void)d; (void)n; return 0; }"
    res = subprocess.run([CLANG, "-fsanitize=fuzzer", "-x", "c", "-", "-o", os.devnull], input=probe,
                         capture_output=True, text=True)
    return res.returncode == 0


pytestmark = pytest.mark.skipif(not fuzzer_available(), reason="clang's libFuzzer runtime is not installed")


def config(model) -> str:
    """fuzz_config.h for one model: names, lengths, parity length, unit width and the code-bit mask."""
    name, upper = model.spec.name, model.spec.name.upper()
    lens = model.data_lengths()
    full = lens[-1]
    plen = model.parity_len(full)
    ub = model.properties.unit_bits
    mask = bytearray(full + plen)
    for unit in model.error_units(full):
        for bit in range(unit, unit + ub):
            mask[bit // 8] |= 0x80 >> (bit % 8)
    header = emit.render(model)[f"{name}.h"]
    parity = f"{upper}_PARITY_LEN(len)" if f"#define {upper}_PARITY_LEN(" in header else f"{upper}_PARITY_BYTES"
    rows = ",\n    ".join(", ".join(f"0x{b:02X}" for b in mask[i:i + 16]) for i in range(0, len(mask), 16))
    return f"""#include "{name}.h"
#define FUZZ_FN {name}_
#define FUZZ_MACRO {upper}_
#define FUZZ_MIN_LEN {lens[0]}u
#define FUZZ_MAX_LEN {full}u
#define FUZZ_UNIT_BITS {ub}
#define FUZZ_T {model.properties.t}u
#define FUZZ_PARITY_LEN(len) ((size_t)({parity}))
static const uint8_t fuzz_mask[{len(mask)}] = {{
    {rows}
}};
"""


def fuzzer(model, folder: Path) -> Path:
    """The fuzz target of one model, built once per content (module, driver, config, clang)."""
    name = model.spec.name
    files = dict(emit.render(model), **{"fuzz_config.h": config(model), "driver.c": DRIVER.read_text()})
    version = subprocess.run([CLANG, "--version"], capture_output=True, text=True).stdout
    key = hashlib.sha256("\0".join([*files.values(), version, *FLAGS]).encode()).hexdigest()[:20]
    target = harness.cache_root() / "fuzz" / key / "fuzzer"
    if target.exists():
        return target
    work = folder / "build"
    work.mkdir()
    for fname, text in files.items():
        (work / fname).write_text(text)
    cmd = [CLANG, *FLAGS, "-I", str(work), str(work / "driver.c"), str(work / f"{name}.c"), "-o", str(work / "fuzzer")]
    res = subprocess.run(cmd, capture_output=True, text=True)
    assert res.returncode == 0, res.stderr
    target.parent.mkdir(parents=True, exist_ok=True)
    os.replace(work / "fuzzer", target)
    return target


def seed_corpus(model, folder: Path) -> Path:
    """A few starting inputs: full length with 0..t+2 errors, and short lengths."""
    rng = np.random.default_rng(7)
    corpus = folder / "corpus"
    corpus.mkdir()
    full = model.data_lengths()[-1]
    t = model.properties.t
    for i, errors in enumerate(range(t + 3)):
        body = rng.integers(0, 256, full + 4 * errors, dtype=np.uint8).tobytes()
        (corpus / f"full{i}").write_bytes(bytes([0, 0, 1, errors]) + body)
    for i in range(4):
        (corpus / f"short{i}").write_bytes(bytes([0, i, 0, 1]) + rng.integers(0, 256, 40, dtype=np.uint8).tobytes())
    return corpus


@pytest.mark.parametrize("profile", specmod.PROFILES)
@pytest.mark.parametrize("name", SAMPLES)
def test_fuzz_generated_c(name, profile, tmp_path):
    model = build(specmod.load(ROOT / "examples" / f"{name}.toml").with_profile(profile))
    target = fuzzer(model, tmp_path)
    corpus = seed_corpus(model, tmp_path)
    full = model.data_lengths()[-1] + model.parity_len(model.data_lengths()[-1])
    res = subprocess.run([str(target), f"-runs={RUNS}", "-seed=1", f"-max_len={4 + full + 4 * 40}",
                          "-max_total_time=600", str(corpus)], capture_output=True, text=True, cwd=tmp_path,
                         timeout=900)
    assert res.returncode == 0, res.stderr[-3000:]
    done = re.search(r"Done (\d+) runs", res.stderr)
    assert done and int(done.group(1)) >= RUNS, res.stderr[-2000:]
