"""Shared fixtures: specs from TOML text, models, and compiled C modules (each compiled once per run)."""
from __future__ import annotations

import hashlib
import tomllib
from pathlib import Path

import pytest

from bitmend import emit, harness, spec as specmod
from bitmend.codes import build

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = sorted((ROOT / "examples").glob("*.toml"))


def pkt_spec(copies: int = 3) -> str:
    """A small CRC-8 + repetition spec named pkt (invented data for front-end tests)."""
    return f"""
[code]
name = "pkt"
family = "crc-repetition"
[crc]
width = 8
poly = 0x07
[repetition]
data_bytes = 4
copies = {copies}
"""


def make_spec(toml_text: str, filename: str = "test.toml", profile: str | None = None) -> specmod.Spec:
    """A validated Spec from TOML text (raises SpecError like a file would)."""
    raw = toml_text.encode()
    spec = specmod.parse(tomllib.loads(toml_text), filename, hashlib.sha256(raw).hexdigest())
    return spec.with_profile(profile) if profile else spec


def make_model(toml_text: str, profile: str | None = None):
    return build(make_spec(toml_text, profile=profile))


def compile_model(model) -> harness.Module:
    """The model's emitted C, strict-compiled and loaded (cached by content hash)."""
    return harness.build(model.spec.name, emit.render(model))


def hamming_toml(k: int, secded: bool = True, profile: str = "fast") -> str:
    """Spec text of a Hamming (SEC) or SECDED code over k data bits in one profile."""
    return f"""[code]
name = "h{k}{'d' if secded else 's'}{profile}"
family = "hamming"
[hamming]
data_bits = {k}
secded = {str(secded).lower()}
[c]
profile = "{profile}"
"""


def rs_toml(name: str, n: int, k: int, poly: int = 0x11D, first_root: int = 0, root_step: int = 1) -> str:
    """Spec text of a Reed-Solomon code."""
    return f"""[code]
name = "{name}"
family = "reed-solomon"
[reed-solomon]
n = {n}
k = {k}
field_poly = {poly:#x}
first_root = {first_root}
root_step = {root_step}
"""


@pytest.fixture(scope="session")
def examples() -> list[Path]:
    return EXAMPLES
