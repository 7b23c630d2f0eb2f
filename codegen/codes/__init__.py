"""Code family models: one module per family, registered here by family name."""
from __future__ import annotations

import importlib

from ..spec import Spec
from .base import CodeModel

# family name (the spec's [code] family) -> "module:Class" under codegen.codes
REGISTRY = {
    "crc-repetition": "crc_repetition:CrcRepetition",
    "hamming": "hamming:Hamming",
    "bch": "bch:Bch",
    "reed-solomon": "reed_solomon:ReedSolomon",
}


def build(spec: Spec) -> CodeModel:
    """The model for a validated spec; raises SpecError for problems only the model can see."""
    module, cls = REGISTRY[spec.family].split(":")
    return getattr(importlib.import_module(f"{__name__}.{module}"), cls)(spec)
