"""Code family models: one module per family, registered here by family name."""
from __future__ import annotations

import importlib

from ..spec import Spec, SpecError, load, sort_problems
from .base import CodeModel

# family name (the spec's [code] family) -> "module:Class" under bitmend.codes
REGISTRY = {
    "crc-repetition": "crc_repetition:CrcRepetition",
    "hamming": "hamming:Hamming",
    "bch": "bch:Bch",
    "reed-solomon": "reed_solomon:ReedSolomon",
}


def build(spec: Spec) -> CodeModel:
    """The model for a validated spec; raises SpecError for problems only the model can see."""
    module, cls = REGISTRY[spec.family].split(":")
    model = getattr(importlib.import_module(f"{__name__}.{module}"), cls)(spec)
    if spec.depth > 1:
        from .interleave import Interleaved, InterleavedErasures
        return (InterleavedErasures if hasattr(model, "decode_erasures") else Interleaved)(model)
    return model


def load_specs(paths) -> list[Spec]:
    """Read every spec file.  When any has a problem, every file's model checks run as well (on what could
    be read), so one SpecError lists all problems of all files at once, sorted per file by table."""
    specs, problems = [], []
    for path in paths:
        try:
            specs.append(load(path))
        except SpecError as err:
            problems.extend(err.problems)
            if err.partial is not None:
                specs.append(err.partial)
    if problems:
        for spec in specs:
            try:
                build(spec)
            except SpecError as err:
                problems.extend(err.problems)
        raise SpecError(sort_problems(problems))
    return specs
