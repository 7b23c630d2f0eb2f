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


def cmd_analyze(args) -> int:
    from .channels import analysis, make, study
    specs = _load_specs(args.specs)
    results = study.run(specs, make("bsc", args.flip_prob), trials=args.simulate, seed=args.seed,
                        plot_file=args.plot)
    print("\n\n".join(analysis.table(r) for r in results))
    if args.plot:
        print(f"wrote {args.plot}")
    if args.json:
        data = results[0] if len(results) == 1 else results
        emit.write_atomic(Path(args.json), json.dumps(data, indent=2) + "\n")
    return EXIT_OK


def cmd_recommend(args) -> int:
    from .channels import make, recommend
    outcome = recommend.search(args.data_bytes, make("bsc", args.flip_prob), args.target, args.families,
                               args.profile)
    print(recommend.table(outcome))
    if args.json:
        emit.write_atomic(Path(args.json), json.dumps(outcome.as_dict(), indent=2) + "\n")
    if args.write and outcome.best is not None:
        path = Path(args.write) / f"{outcome.best.name}.toml"
        emit.write_atomic(path, recommend.spec_text(outcome.best, outcome, args.profile))
        print(f"wrote {path}")
    return EXIT_OK if outcome.candidates else EXIT_FAILED


def _check_args(args) -> str | None:
    """The first bad option value, as a message naming the option; None when all are fine."""
    if getattr(args, "budget", 1) < 1:
        return "--budget must be at least 1"
    f = getattr(args, "flip_prob", None)
    if f is not None and not 0.0 < f < 0.5:
        return f"--flip-prob must be in (0, 0.5) (got {f:g})"
    target = getattr(args, "target", None)
    if target is not None and not 0.0 < target < 1.0:
        return f"--target must be in (0, 1) (got {target:g})"
    data_bytes = getattr(args, "data_bytes", None)
    if data_bytes is not None and data_bytes <= 0:
        return f"--data-bytes must be at least 1 (got {data_bytes})"
    trials = getattr(args, "simulate", None)
    if trials is not None and trials < 1:
        return f"--simulate must be at least 1 (got {trials})"
    plot = getattr(args, "plot", None)
    if plot is not None and Path(plot).suffix.lower() not in (".png", ".svg"):
        return f"--plot must name a .png or .svg file (got {plot})"
    return None


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

    a = sub.add_parser("analyze", help="what the code buys on a binary symmetric channel")
    a.add_argument("specs", nargs="+", metavar="SPEC")
    a.add_argument("--flip-prob", type=float, required=True, metavar="F",
                   help="probability that the channel flips a bit, in (0, 0.5)")
    a.add_argument("--simulate", type=int, metavar="N",
                   help="also run N random channel trials through the compiled C")
    a.add_argument("--seed", type=int, default=1, help="random seed of the simulation (default 1)")
    a.add_argument("--plot", metavar="FILE", help="draw the figures into FILE (.png or .svg)")
    a.add_argument("--json", metavar="FILE", help="also write the figures as JSON")
    a.set_defaults(func=cmd_analyze)

    r = sub.add_parser("recommend", help="the cheapest code that meets a failure target on a channel")
    r.add_argument("--data-bytes", type=int, required=True, metavar="N", help="bytes of data to protect")
    r.add_argument("--flip-prob", type=float, required=True, metavar="F",
                   help="probability that the channel flips a bit, in (0, 0.5)")
    r.add_argument("--target", type=float, required=True, metavar="P",
                   help="largest acceptable failure for the whole data, in (0, 1)")
    r.add_argument("--families", nargs="+", choices=list(specmod.FAMILIES), metavar="FAMILY",
                   help=f"families to search (default all: {', '.join(specmod.FAMILIES)})")
    r.add_argument("--profile", choices=specmod.PROFILES, default="fast",
                   help="C profile whose table sizes count (default fast)")
    r.add_argument("--json", metavar="FILE", help="also write the candidates as JSON")
    r.add_argument("--write", metavar="DIR", help="write the best candidate as a spec file into DIR")
    r.set_defaults(func=cmd_recommend)
    return p


def main(argv: list[str] | None = None) -> int:
    try:
        args = parser().parse_args(argv)
        problem = _check_args(args)
        if problem:
            parser().error(problem)
    except SystemExit as done:                 # --help, --version, usage errors
        return done.code if isinstance(done.code, int) else EXIT_BAD_INPUT
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
