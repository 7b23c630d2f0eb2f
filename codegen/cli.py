"""Command-line front end: argument parsing and exit codes only; the work lives in the other modules.

Exit codes: 0 ok, 1 a check failed (mismatch, stale output), 2 bad input.
"""
from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from . import __version__, emit, spec as specmod, verify

EXIT_OK, EXIT_FAILED, EXIT_BAD_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):             # argparse's own exit status is 2 as well
        self.exit(EXIT_BAD_INPUT, f"bitmend: {message}\n")


def _load_specs(paths: list[str]) -> list[specmod.Spec]:
    specs, problems = [], []
    for path in paths:
        try:
            specs.append(specmod.load(path))
        except specmod.SpecError as err:
            problems.extend(err.problems)
    if problems:
        raise specmod.SpecError(problems)
    return specs


def cmd_generate(args) -> int:
    specs = _load_specs(args.specs)
    outdir = Path(args.output)
    outputs = emit.plan(specs, outdir)
    if args.check:
        old = emit.stale(outputs)
        for path in old:
            print(f"stale: {path}")
        if old:
            print(f"bitmend: {len(old)} generated file(s) out of date; run 'bitmend generate' without --check",
                  file=sys.stderr)
            return EXIT_FAILED
        return EXIT_OK
    for path in emit.write(outputs):
        print(f"wrote {path}")
    if args.depfile:
        emit.write_atomic(Path(args.depfile), emit.depfile_text(specs, outputs))
    return EXIT_OK


def cmd_verify(args) -> int:
    specs = _load_specs(args.specs)
    reports = verify.run_specs(specs, seed=args.seed, budget=args.budget, profiles=args.profile)
    for report in reports:
        print(report.table())
    if args.json:
        emit.write_atomic(Path(args.json), json.dumps([r.as_dict() for r in reports], indent=2) + "\n")
    return EXIT_OK if all(r.ok for r in reports) else EXIT_FAILED


def parser() -> argparse.ArgumentParser:
    p = _Parser(prog="bitmend", description="Error-correcting codes for firmware: TOML spec in, C99 out.")
    p.add_argument("--version", action="version", version=f"bitmend {__version__}")
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)

    g = sub.add_parser("generate", help="render the C module of each spec")
    g.add_argument("specs", nargs="+", metavar="SPEC")
    g.add_argument("-o", "--output", required=True, metavar="DIR", help="folder for the .h/.c files")
    g.add_argument("--check", action="store_true", help="write nothing; exit 1 when any file is stale")
    g.add_argument("--depfile", metavar="FILE", help="also write a make rule: outputs depend on the specs")
    g.set_defaults(func=cmd_generate)

    v = sub.add_parser("verify", help="compile the C and compare it bit for bit with the model")
    v.add_argument("specs", nargs="+", metavar="SPEC")
    v.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    v.add_argument("--budget", type=int, default=2000, metavar="N",
                   help="most cases per kind of error pattern (default 2000)")
    v.add_argument("--profile", action="append", choices=specmod.PROFILES,
                   help="profile(s) to verify (default: the spec's own); repeatable")
    v.add_argument("--json", metavar="FILE", help="also write the results as JSON")
    v.set_defaults(func=cmd_verify)
    return p


def main(argv: list[str] | None = None) -> int:
    args = parser().parse_args(argv)
    if getattr(args, "budget", 1) < 1:
        parser().error("--budget must be at least 1")
    try:
        return args.func(args)
    except specmod.SpecError as err:
        for problem in err.problems:
            print(problem, file=sys.stderr)
        return EXIT_BAD_INPUT
    except OSError as err:
        print(f"bitmend: {err.filename or ''}: {err.strerror}", file=sys.stderr)
        return EXIT_BAD_INPUT


if __name__ == "__main__":
    sys.exit(main())
