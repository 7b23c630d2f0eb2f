"""Rendering of the C files: Jinja2 environment, deterministic output, atomic writes, depfiles, --check."""
from __future__ import annotations

import os
import tempfile
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import jinja2

from . import __version__
from .codes import build
from .codes.base import CodeModel
from .spec import Problem, Spec, SpecError


def _clit(value: int, bits: int) -> str:
    """A C literal of an unsigned value held in a `bits`-bit type, portable to 16-bit int targets."""
    digits = max(2, (bits + 3) // 4)
    suffix = "u" if bits <= 16 else ("UL" if bits <= 32 else "ULL")
    return f"0x{value:0{digits}X}{suffix}"


def environment() -> jinja2.Environment:
    loader = jinja2.FileSystemLoader(str(resources.files("codegen") / "templates"))
    env = jinja2.Environment(loader=loader, undefined=jinja2.StrictUndefined, trim_blocks=True,
                             lstrip_blocks=True, keep_trailing_newline=True, autoescape=False)
    env.filters["clit"] = _clit
    return env


@dataclass(frozen=True)
class Output:
    path: Path
    text: str


def render(model: CodeModel, env: jinja2.Environment | None = None) -> dict[str, str]:
    """{file name: text} for one model: `<name>.h` and `<name>.c`."""
    env = env or environment()
    spec = model.spec
    ctx = model.template_context()
    ctx.update(version=__version__, spec_file=spec.source_name, spec_sha256=spec.sha256)
    out = {}
    for ext in ("h", "c"):
        text = env.get_template(f"{model.template}.{ext}.j2").render(ctx)
        out[f"{spec.name}.{ext}"] = text
    return out


def plan(specs: list[Spec], outdir: Path) -> list[Output]:
    """Every file the specs produce, rendered in memory; raises SpecError before anything is written."""
    problems: list[Problem] = []
    seen: dict[str, str] = {}
    models = []
    for spec in specs:
        if spec.name in seen:
            problems.append(spec.problem("code", "name", f"same name as in {seen[spec.name]}", spec.name))
            continue
        seen[spec.name] = spec.source_name
        try:
            models.append(build(spec))
        except SpecError as err:
            problems.extend(err.problems)
    if problems:
        raise SpecError(problems)
    env = environment()
    outputs = []
    for model in models:
        for fname, text in render(model, env).items():
            outputs.append(Output(outdir / fname, text))
    return outputs


def stale(outputs: list[Output]) -> list[Path]:
    """Outputs whose file is missing or differs."""
    out = []
    for o in outputs:
        try:
            current = o.path.read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError):
            current = None
        if current != o.text:
            out.append(o.path)
    return out


def write_atomic(path: Path, text: str) -> None:
    """Write via a temporary file in the same folder and rename, so a reader never sees half a file."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def write(outputs: list[Output]) -> list[Path]:
    """Write the outputs whose content changed; returns the paths written."""
    changed = stale(outputs)
    wanted = {o.path: o.text for o in outputs}
    for path in changed:
        write_atomic(path, wanted[path])
    return changed


def depfile_text(specs: list[Spec], outputs: list[Output]) -> str:
    """A make rule per spec: its two outputs depend on the spec file."""
    def esc(p) -> str:
        return str(p).replace(" ", "\\ ")
    lines = []
    for spec in specs:
        targets = [o.path for o in outputs if o.path.stem == spec.name]
        lines.append(f"{' '.join(esc(t) for t in targets)}: {esc(spec.path)}")
        lines.append(f"{esc(spec.path)}:")        # a deleted spec must not break make
    return "\n".join(lines) + "\n"
