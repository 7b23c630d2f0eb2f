"""Rendering of the C files: Jinja2 environment, deterministic output, all-or-nothing writes, depfiles,
--check.

Every file a command writes (sources, headers, depfile, JSON, specs) goes through `commit`: each new content
is written to a temporary file in its target folder, then all are renamed into place while signals wait; a
failure or an interrupt before that leaves every target as it was and removes the temporaries.  Runs into
the same folder take turns through a lock on the folder itself.
"""
from __future__ import annotations

import contextlib
import fcntl
import functools
import math
import os
import re
import signal
import tempfile
from collections.abc import Callable
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import jinja2
import jinja2.meta

from . import __version__
from .codes import build
from .codes.base import ARRAY_BYTES_16BIT, CodeModel
from .spec import Problem, Spec, SpecError, show_path


def _clit(value: int, bits: int) -> str:
    """A C literal of an unsigned value held in a `bits`-bit type, portable to 16-bit int targets."""
    digits = max(2, (bits + 3) // 4)
    suffix = "u" if bits <= 16 else ("UL" if bits <= 32 else "ULL")
    return f"0x{value:0{digits}X}{suffix}"


@functools.cache
def environment() -> jinja2.Environment:
    """One environment per process: its templates are compiled once (Jinja2 still reloads a template whose
    file changed)."""
    loader = jinja2.FileSystemLoader(str(resources.files("bitmend") / "templates"))
    env = jinja2.Environment(loader=loader, undefined=jinja2.StrictUndefined, trim_blocks=True,
                             lstrip_blocks=True, keep_trailing_newline=True, autoescape=False)
    env.filters["clit"] = _clit
    return env


@dataclass(frozen=True)
class Output:
    path: Path
    text: str | bytes                   # bytes are written as they are (a plot, an encoded file)
    sources: tuple[Path, ...] = ()      # what the text was made from: spec, templates, version stamp

    @property
    def data(self) -> bytes:
        if isinstance(self.text, bytes):
            return self.text
        # surrogateescape: a non-UTF-8 file name inside a depfile goes out as the bytes it came in as
        return self.text.encode("utf-8", "surrogateescape")


class WriteError(Exception):
    """An output could not be written; names the target (never a temporary).  Nothing was changed."""

    def __init__(self, path, reason: str):
        self.path, self.reason = Path(path), reason
        super().__init__(f"{show_path(path)}: {reason}")


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


def template_files(model: CodeModel, env: jinja2.Environment | None = None,
                   names: tuple[str, ...] | None = None) -> list[Path]:
    """The template files a model's output is rendered from (or `names`), includes and imports followed."""
    env = env or environment()
    todo = list(names) if names is not None else [f"{model.template}.{ext}.j2" for ext in ("h", "c")]
    seen: dict[str, Path] = {}
    while todo:
        name = todo.pop()
        if name in seen:
            continue
        source, filename, _ = env.loader.get_source(env, name)
        seen[name] = Path(filename)
        todo.extend(n for n in jinja2.meta.find_referenced_templates(env.parse(source)) if n)
    return [seen[n] for n in sorted(seen)]


def version_stamp() -> Path:
    """The installed file that holds the package version: upgrading bitmend changes it."""
    return Path(resources.files("bitmend") / "__init__.py")


def plan(specs: list[Spec], outdir: Path, extra: Callable[[CodeModel], dict[str, str]] | None = None,
         extra_templates: tuple[str, ...] = ()) -> list[Output]:
    """Every file the specs produce, rendered in memory; raises SpecError before anything is written.
    `extra(model)` adds more files per model (the self-test), rendered from `extra_templates`."""
    problems: list[Problem] = []
    seen: dict[str, Spec] = {}
    models = []
    for spec in specs:
        if spec.name in seen:
            first = seen[spec.name]
            problems.append(Problem(spec.path, "code", "name", f"same name as in {first.path}", spec.name))
            continue
        seen[spec.name] = spec
        try:
            models.append(build(spec))
        except SpecError as err:
            problems.extend(err.problems)
    if problems:
        raise SpecError(problems)
    env = environment()
    outputs = []
    for model in models:
        sources = (Path(model.spec.path), *template_files(model, env), version_stamp())
        files = render(model, env)
        if extra is not None:
            sources += tuple(template_files(model, env, extra_templates))
            files |= extra(model)
        for fname, text in files.items():
            outputs.append(Output(outdir / fname, text, sources))
    return outputs


def _current(path: Path) -> bytes | None:
    try:
        with open(path, "rb") as fh:
            return fh.read()
    except OSError:
        return None


def stale(outputs: list[Output]) -> list[tuple[Path, str]]:
    """(path, "missing" or "stale") for every output whose file is absent or differs."""
    out = []
    for o in outputs:
        current = _current(o.path)
        if current != o.data:
            out.append((o.path, "missing" if current is None and not o.path.exists() else "stale"))
    return out


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


@contextlib.contextmanager
def _signals_held():
    """Delay SIGINT/SIGTERM/SIGHUP until the block is done, so renames are never cut half-way."""
    held = {signal.SIGINT, signal.SIGTERM, signal.SIGHUP}
    old = signal.pthread_sigmask(signal.SIG_BLOCK, held)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)


@contextlib.contextmanager
def _folder_lock(folder: Path):
    """Exclusive flock on the folder itself: concurrent runs into one folder take turns, and no lock
    file is left among the outputs."""
    fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
    try:
        fcntl.flock(fd, fcntl.LOCK_EX)
        yield
    finally:
        os.close(fd)


def _make_folders(folders) -> list[Path]:
    """Create missing folders; returns the ones created, deepest last."""
    made = []
    for folder in folders:
        missing = []
        for p in (folder, *folder.parents):
            if p.exists():
                break
            missing.append(p)
        for p in reversed(missing):
            try:
                p.mkdir()
            except FileExistsError:
                pass
            except OSError as exc:
                _remove_folders(made)
                raise WriteError(p, f"cannot create the folder: {exc.strerror}") from None
            else:
                made.append(p)
        if not folder.is_dir():
            _remove_folders(made)
            raise WriteError(folder, "is not a folder")
    return made


def _remove_folders(made: list[Path]) -> None:
    for p in reversed(made):
        with contextlib.suppress(OSError):
            p.rmdir()


def _temporary(path: Path, data: bytes, mode: int) -> Path:
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name[:40]}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            os.fchmod(fh.fileno(), mode)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return Path(tmp)


def _rename_all(temps: dict[Path, Path]) -> None:
    """Move every temporary onto its target; on a failure put back every target already replaced."""
    done: list[tuple[Path, Path | None]] = []             # (target, hard link to its old content)
    try:
        for target, tmp in temps.items():
            backup = None
            if target.exists():
                backup = tmp.with_name(tmp.name + ".old")
                try:
                    os.link(target, backup)
                except OSError:
                    backup = None
            done.append((target, backup))
            try:
                os.replace(tmp, target)
            except OSError as exc:
                raise WriteError(target, exc.strerror or str(exc)) from None
    except BaseException:
        for target, backup in reversed(done[:-1]):
            with contextlib.suppress(OSError):
                if backup is not None:
                    os.replace(backup, target)
                else:
                    target.unlink()
        raise
    finally:
        for _, backup in done:
            if backup is not None:
                with contextlib.suppress(OSError):
                    backup.unlink()


def commit(outputs: list[Output]) -> list[Path]:
    """Write every output whose content differs, all or nothing; returns the paths written."""
    seen: dict[str, Path] = {}
    for o in outputs:
        key = os.path.abspath(o.path)
        if key in seen:
            raise WriteError(o.path, "named twice among this run's outputs")
        seen[key] = o.path
    folders = sorted({o.path.parent for o in outputs}, key=os.path.abspath)
    made = _make_folders(folders)
    temps: dict[Path, Path] = {}
    try:
        with contextlib.ExitStack() as locks:
            for folder in folders:
                locks.enter_context(_folder_lock(folder))
            changed = [o for o in outputs if _current(o.path) != o.data]
            for o in changed:
                if o.path.is_dir():
                    raise WriteError(o.path, "is a folder")
            mode = 0o666 & ~_umask()
            for o in changed:
                try:
                    temps[o.path] = _temporary(o.path, o.data, mode)
                except OSError as exc:
                    raise WriteError(o.path, exc.strerror or str(exc)) from None
            with _signals_held():
                _rename_all(temps)
            temps.clear()
        return [o.path for o in changed]
    except BaseException:
        for tmp in temps.values():
            tmp.unlink(missing_ok=True)
        _remove_folders(made)
        raise


def write_atomic(path, text: str | bytes) -> None:
    """One file through `commit`."""
    commit([Output(Path(path), text)])


# -- depfiles ----------------------------------------------------------------------------------------------

# tested against GNU make 4.3 (tests/test_output.py runs make on every case)
_MAKE_REFUSED = re.compile(r"[;=|%\x00-\x1f\x7f]|^~")


def make_escape(path) -> str:
    """A path as GNU make reads it in a rule: `$` doubled, space # : * ? [ escaped with a backslash (and
    the backslashes right before them doubled).  Raises ValueError for what a rule cannot hold: ; = | % (a pattern),
    control characters, a leading ~."""
    text = os.fspath(path)
    bad = _MAKE_REFUSED.search(text)
    if bad:
        raise ValueError(f"make cannot name a file containing {bad.group()!r}")
    text = re.sub(r"(\\*)([ #:*?\[])", lambda m: m.group(1) * 2 + "\\" + m.group(2), text)
    return text.replace("$", "$$")


def depfile_text(outputs: list[Output]) -> str:
    """A make rule per group of outputs made from the same sources (one per spec): the outputs depend on
    the spec, the templates and the package version stamp.  Raises ValueError (see make_escape) for a
    path make cannot name."""
    groups: dict[tuple, list[Path]] = {}
    for o in outputs:
        groups.setdefault(o.sources, []).append(o.path)
    lines, listed = [], set()
    for sources, targets in groups.items():
        lines.append(f"{' '.join(map(make_escape, targets))}: {' '.join(map(make_escape, sources))}")
    for sources in groups:
        for p in sources:
            if p not in listed:                         # a deleted prerequisite must not break make
                listed.add(p)
                lines.append(f"{make_escape(p)}:")
    return "\n".join(lines) + "\n"


_TABLE_DECL = re.compile(r"static const (\w+) (\w+)((?:\[\d+\])+)")
_TYPEDEF = re.compile(r"typedef (\w+) (\w+);")


def tables(files: dict[str, str]) -> dict[str, int]:
    """Bytes of each constant table declared in one rendered module ({file name: text})."""
    text = "\n".join(files.values())
    typedefs = {new: old for old, new in _TYPEDEF.findall(text)}

    def size(ctype: str) -> int:
        while ctype in typedefs:
            ctype = typedefs[ctype]
        return int(re.fullmatch(r"uint(\d+)_t", ctype).group(1)) // 8

    return {name: math.prod(int(n) for n in re.findall(r"\d+", dims)) * size(ctype)
            for ctype, name, dims in _TABLE_DECL.findall(text)}


def table_notes(spec: Spec, outputs: list[Output]) -> tuple[str, str | None]:
    """(what the module's tables cost, a warning when one of them cannot exist on a 16-bit target)."""
    sizes = tables({o.path.name: o.text for o in outputs if o.path.stem == spec.name})
    note = f"{spec.name}: profile {spec.profile}, {sum(sizes.values())} table bytes"
    if sizes:
        largest = max(sizes, key=sizes.get)
        note += f" (largest {largest}, {sizes[largest]})"
    big = [n for n, b in sizes.items() if b > ARRAY_BYTES_16BIT]
    if not big:
        return note, None
    fit, fit_bytes = build(spec).profile_for_16bit()
    return note, (f"{spec.source_name}: warning: {', '.join(big)} exceed {ARRAY_BYTES_16BIT} bytes, more than one "
                  f"array may hold on a 16-bit target (AVR, MSP430), where the C stops with #error; profile "
                  f"{fit!r} fits ({fit_bytes} table bytes)")
