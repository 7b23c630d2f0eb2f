"""Command-line front end: argument parsing and exit codes only; the work lives in the other modules.

Exit codes: 0 ok, 1 a check failed (mismatch, stale output) or could not run (no working C compiler),
2 bad input (spec, option value, an output that cannot be written), 130 interrupted (Ctrl-C),
143 terminated, 141 stdout closed early (`| head`).  Every error is one line on stderr.
"""
from __future__ import annotations

import argparse
import json
import os
import shlex
import shutil
import signal
import stat
import sys
import threading
from pathlib import Path

from . import __version__, emit, harness, selftest, spec as specmod, verify
from .codes import load_specs
from .spec import show_path

EXIT_OK, EXIT_FAILED, EXIT_BAD_INPUT = 0, 1, 2
EXIT_INTERRUPTED, EXIT_PIPE, EXIT_TERMINATED = 130, 141, 143
STDOUT = "-"                                   # as a file name: write to standard output
MAX_SEED = 2**64 - 1
MAX_BUDGET = 10**8


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):             # argparse's own exit status is 2 as well
        self.exit(EXIT_BAD_INPUT, f"bitmend: {specmod.escape(message, 400)}\n")


class _Terminated(Exception):
    """SIGTERM or SIGHUP arrived: unwind like Ctrl-C so temporaries are removed."""


def _load_specs(paths: list[str]) -> list[specmod.Spec]:
    return load_specs(paths)


def _say(args, text: str) -> None:
    """Human-readable output: stdout, or stderr when stdout carries a file's content (`--json -`)."""
    to_stdout = STDOUT not in (getattr(args, "json", None), getattr(args, "depfile", None),
                               getattr(args, "write", None))
    print(text, file=sys.stdout if to_stdout else sys.stderr)


def _deliver(args, outputs: list[emit.Output]) -> list[Path]:
    """Outputs named "-" go to stdout; the rest are committed together (all or nothing)."""
    files = [o for o in outputs if str(o.path) != STDOUT]
    written = emit.commit(files)
    for o in outputs:
        if str(o.path) == STDOUT:
            sys.stdout.write(o.text)
    return written


def _json_output(path: str, value) -> emit.Output:
    return emit.Output(Path(path), json.dumps(value, indent=2) + "\n")


def cmd_generate(args) -> int:
    specs = _load_specs(args.specs)
    if args.profile:
        specs = [s.with_profile(args.profile) for s in specs]
    outdir = Path(args.output)
    vectors = args.self_test_vectors or (selftest.DEFAULT_VECTORS if args.self_test else None)
    extra = (lambda model: selftest.render(model, vectors)) if vectors else None
    outputs = emit.plan(specs, outdir, extra, selftest.TEMPLATES)
    if args.check:
        old = emit.stale(outputs)
        for path, why in old:
            print(f"{why}: {show_path(path)}")
        if old:
            print(f"bitmend: {len(old)} generated file(s) missing or out of date; run 'bitmend generate' "
                  "without --check", file=sys.stderr)
            return EXIT_FAILED
        return EXIT_OK
    extra = []
    if args.depfile:
        try:
            extra.append(emit.Output(Path(args.depfile), emit.depfile_text(outputs)))
        except ValueError as err:
            print(f"bitmend: --depfile: {specmod.escape(str(err), None)}", file=sys.stderr)
            return EXIT_BAD_INPUT
    written = [p for p in _deliver(args, outputs + extra) if p in {o.path for o in outputs}]
    for path in written:
        _say(args, f"wrote {show_path(path)}")
    for spec in specs:
        note, warning = emit.table_notes(spec, outputs)
        if any(path.stem == spec.name for path in written):
            _say(args, note)
        if warning:
            print(warning, file=sys.stderr)
    return EXIT_OK


def cmd_verify(args) -> int:
    specs = _load_specs(args.specs)
    if args.cc or args.cflags is not None or args.run:
        return _verify_on_target(args, specs)
    reports = verify.run_specs(specs, seed=args.seed, budget=args.budget, profiles=args.profile,
                               announce=lambda text: _say(args, text))
    for report in reports:
        _say(args, report.table())
    if args.json:
        _deliver(args, [_json_output(args.json, [r.as_dict() for r in reports])])
    return EXIT_OK if all(r.ok for r in reports) else EXIT_FAILED


def _verify_on_target(args, specs) -> int:
    """verify --cc/--cflags/--run: the self-test cross-built, and run through --run's command."""
    from . import target
    cc = args.cc or harness.compiler()
    try:
        cflags = tuple(shlex.split(args.cflags or ""))
        command = shlex.split(args.run) if args.run else None
    except ValueError as err:
        print(f"bitmend: --cflags/--run: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    if shutil.which(cc) is None:
        print(f"bitmend: --cc {cc}: no such compiler on PATH", file=sys.stderr)
        return EXIT_BAD_INPUT
    if command is not None and (not command or shutil.which(command[0]) is None):
        print(f"bitmend: --run {args.run!r}: no such program on PATH", file=sys.stderr)
        return EXIT_BAD_INPUT
    outcomes = target.verify(specs, cc, cflags, command, args.profile, args.self_test_vectors)
    _say(args, target.table(outcomes, cc, cflags, command))
    if args.json:
        _deliver(args, [_json_output(args.json, [o.as_dict() for o in outcomes])])
    return EXIT_OK if all(o.ok for o in outcomes) else EXIT_FAILED


def cmd_footprint(args) -> int:
    from . import footprint
    specs = _load_specs(args.specs)
    cc = args.cc or footprint.DEFAULT_CC
    try:
        cflags = tuple(shlex.split(args.cflags)) if args.cflags is not None else \
            (footprint.DEFAULT_CFLAGS if args.cc is None else ())
    except ValueError as err:
        print(f"bitmend: --cflags: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    if shutil.which(cc) is None:
        print(f"bitmend: {'--cc ' if args.cc else ''}{cc}: no such compiler on PATH"
              f"{'' if args.cc else ' (the default; give --cc)'}", file=sys.stderr)
        return EXIT_BAD_INPUT
    results = [footprint.measure(spec.with_profile(profile), cc, cflags)
               for spec in specs for profile in (args.profile or specmod.PROFILES)]
    _say(args, "\n\n".join(footprint.table(r) for r in results))
    if args.json:
        _deliver(args, [_json_output(args.json, [r.as_dict() for r in results])])
    return EXIT_OK


def _channel(args):
    from .channels import make
    return make(args.channel, args.flip_prob, args.burst_len, args.bad_flip, args.good_flip)


def cmd_analyze(args) -> int:
    from .channels import analysis, study
    specs = _load_specs(args.specs)
    try:
        results = study.run(specs, _channel(args), trials=args.simulate, seed=args.seed, plot_file=args.plot)
    except ValueError as err:                  # a family the channel does not model
        print(f"bitmend: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    _say(args, analysis.table(results[0]) if len(results) == 1 else analysis.summary(results))
    if args.plot:
        extra = [(r["name"], p) for r in results for p in r.get("simulated_points", [])]
        if extra:
            _say(args, f"the plot adds {len(extra)} smaller simulation(s) where failures are common: "
                 + ", ".join(f"{name} f={p['flip_prob']:.3g} ({p['simulated_trials']} trials)"
                             for name, p in extra))
        _say(args, f"wrote {show_path(args.plot)}")
    if args.json:
        data = results[0] if len(results) == 1 else results
        _deliver(args, [_json_output(args.json, data)])
    return EXIT_OK


def cmd_recommend(args) -> int:
    from .channels import recommend
    outcome = recommend.search(args.data_bytes, _channel(args), args.target, args.families, args.profile)
    _say(args, recommend.table(outcome))
    outputs = [_json_output(args.json, outcome.as_dict())] if args.json else []
    if args.write and outcome.best is not None:
        text = recommend.spec_text(outcome.best, outcome, args.profile)
        path = Path(args.write) / f"{outcome.best.name}.toml" if args.write != STDOUT else Path(STDOUT)
        if str(path) != STDOUT and os.path.lexists(path) and not args.force:
            print(f"bitmend: {show_path(path)}: exists; --force replaces it", file=sys.stderr)
            return EXIT_BAD_INPUT
        outputs.append(emit.Output(path, text))
    for path in _deliver(args, outputs):
        if path.suffix == ".toml":
            _say(args, f"wrote {show_path(path)}")
    return EXIT_OK if outcome.candidates else EXIT_FAILED


def _bytes_in(path: str) -> bytes:
    """The input of encode/decode: stdin for "-", else a regular file or a pipe (a device never ends)."""
    if path == STDOUT:
        return sys.stdin.buffer.read()
    mode = os.stat(path).st_mode
    if stat.S_ISDIR(mode) or stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        raise specmod.SpecError([specmod.Problem(path, "file", "",
                                                 "not a regular file or a pipe (a folder or a device)")])
    return Path(path).read_bytes()


def _bytes_out(outputs: dict[str, bytes]) -> None:
    """Binary outputs, all or nothing ("-" is stdout)."""
    emit.commit([emit.Output(Path(p), d) for p, d in outputs.items() if p != STDOUT])
    if STDOUT in outputs:
        sys.stdout.flush()
        sys.stdout.buffer.write(outputs[STDOUT])


def cmd_encode(args) -> int:
    from . import host
    code = host.load(args.spec, args.profile)
    data = _bytes_in(args.input)
    try:
        blocks, parities = host.encode_blocks(code, data)
    except ValueError as err:
        print(f"bitmend: {show_path(args.input)}: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    if args.parity_file:
        outputs = {args.output: data, args.parity_file: b"".join(parities)}
    else:
        outputs = {args.output: host.interleave(blocks, parities)}
    _bytes_out(outputs)
    where = f"parity in {show_path(args.parity_file)}" if args.parity_file else "parity after each block"
    print(f"{code.name}: {len(blocks)} block(s) of up to {code.data_bytes} bytes encoded through "
          f"{code.through}; {where}",
          file=sys.stderr if STDOUT in outputs else sys.stdout)
    return EXIT_OK


def cmd_decode(args) -> int:
    from . import host
    code = host.load(args.spec, args.profile)
    data = _bytes_in(args.input)
    try:
        if args.parity_file:
            blocks, parities = host.separate(code, data, _bytes_in(args.parity_file))
        else:
            blocks, parities = host.deinterleave(code, data)
    except ValueError as err:
        print(f"bitmend: {show_path(args.input)}: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    result = host.decode_blocks(code, blocks, parities)
    say = sys.stderr if args.output == STDOUT or not result.ok else sys.stdout
    print(f"{code.name} through {code.through}: " + "\n".join(result.summary()), file=say)
    if not result.ok:
        print(f"bitmend: {show_path(args.input)}: uncorrectable block(s); nothing written", file=sys.stderr)
        return EXIT_FAILED
    _bytes_out({args.output: result.data})
    return EXIT_OK


def cmd_list(args) -> int:
    from . import listing, terminal
    terminal.show(*listing.all_tables())
    return EXIT_OK


def cmd_prove(args) -> int:
    from . import cluster, prove
    spec = _load_specs([args.spec])[0]
    try:
        certs, interrupted = prove.run(spec, args.profile or [spec.profile], args.max_weight, args.data_len,
                                       args.scheduler, args.workers, args.state)
    except (prove.ProveError, cluster.Unreachable) as err:
        print(f"bitmend: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    _say(args, "\n\n".join(c.table() for c in certs))
    if args.json:
        data = [c.as_dict() for c in certs]
        _deliver(args, [_json_output(args.json, data if len(data) > 1 else data[0])])
    if interrupted:
        print("bitmend: interrupted" + (f"; run again with --state {args.state} to go on" if args.state else ""),
              file=sys.stderr)
        return EXIT_INTERRUPTED
    return EXIT_FAILED if any(c.wrong for c in certs) else EXIT_OK


def _check_args(args) -> str | None:
    """The first bad option value, as a message naming the option; None when all are fine."""
    budget = getattr(args, "budget", 1)
    if not 1 <= budget <= MAX_BUDGET:
        return f"--budget must be 1..{MAX_BUDGET} (got {budget})"
    vectors = getattr(args, "self_test_vectors", None)
    if vectors is not None and not 1 <= vectors <= selftest.MAX_VECTORS:
        return f"--self-test-vectors must be 1..{selftest.MAX_VECTORS} (got {vectors})"
    seed = getattr(args, "seed", 0)
    if not 0 <= seed <= MAX_SEED:
        return f"--seed must be 0..2^64-1 (got {seed if abs(seed) < 10**30 else 'a huge number'})"
    f = getattr(args, "flip_prob", None)
    if f is not None and not 0.0 < f < 0.5:
        return f"--flip-prob must be in (0, 0.5) (got {f:g})"
    target = getattr(args, "target", None)
    if target is not None and not 1e-300 <= target < 1.0:
        return f"--target must be in [1e-300, 1): smaller failures are not computed (got {target:g})"
    if getattr(args, "channel", None) == "burst":
        if args.burst_len is None:
            return "--channel burst needs --burst-len (mean burst length in bits)"
        if not 1.0 <= args.burst_len <= 1e9:
            return f"--burst-len must be in [1, 1e9] bits (got {args.burst_len:g})"
        if not 0.0 < args.bad_flip <= 1.0:
            return f"--bad-flip must be in (0, 1] (got {args.bad_flip:g})"
        if not 0.0 <= args.good_flip < args.bad_flip:
            return f"--good-flip must be in [0, --bad-flip) (got {args.good_flip:g})"
        if f is not None and not args.good_flip < f < args.bad_flip:
            return f"--flip-prob must lie between --good-flip and --bad-flip (got {f:g})"
        from .channels import GilbertElliott
        most = GilbertElliott.flip_limit(args.burst_len, args.bad_flip, args.good_flip)
        if f is not None and f > most:
            return (f"--flip-prob {f:g} needs bursts longer than --burst-len {args.burst_len:g} "
                    f"(at most {most:.3g} at that length)")
    data_bytes = getattr(args, "data_bytes", None)
    if data_bytes is not None and data_bytes <= 0:
        return f"--data-bytes must be at least 1 (got {data_bytes})"
    trials = getattr(args, "simulate", None)
    if trials is not None and trials < 1:
        return f"--simulate must be at least 1 (got {trials})"
    plot = getattr(args, "plot", None)
    if plot is not None and Path(plot).suffix.lower() not in (".png", ".svg"):
        return f"--plot must name a .png or .svg file (got {show_path(plot)})"
    output = getattr(args, "output", None)
    if getattr(args, "command", None) == "generate" and os.path.exists(output) and not os.path.isdir(output):
        return f"-o {show_path(output)} is not a folder"
    for option in ("json", "depfile"):
        value = getattr(args, option, None)
        if value is not None and value != STDOUT and os.path.isdir(value):
            return f"--{option} {show_path(value)} is a folder; name a file (or - for stdout)"
    return None


def _channel_options(p) -> None:
    p.add_argument("--channel", choices=("bsc", "burst"), default="bsc",
                   help="bsc: independent flips (default); burst: Gilbert-Elliott bursts, --flip-prob their average")
    p.add_argument("--burst-len", type=float, metavar="L", help="burst channel: mean burst length in bits")
    p.add_argument("--bad-flip", type=float, default=0.5, metavar="P",
                   help="burst channel: flip probability inside a burst (default 0.5)")
    p.add_argument("--good-flip", type=float, default=0.0, metavar="P",
                   help="burst channel: flip probability outside bursts (default 0)")


def parser() -> argparse.ArgumentParser:
    p = _Parser(prog="bitmend", description="Error-correcting codes for firmware: TOML spec in, C99 out.")
    p.add_argument("--version", action="version", version=f"bitmend {__version__}")
    p.add_argument("--cmake-dir", nargs=0, action=_CmakeDir,
                   help="print the folder holding bitmend.cmake (bitmend_add_spec) and exit")
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)

    g = sub.add_parser("generate", help="render the C module of each spec")
    g.add_argument("specs", nargs="+", metavar="SPEC")
    g.add_argument("-o", "--output", required=True, metavar="DIR", help="folder for the .h/.c files")
    g.add_argument("--check", action="store_true",
                   help="write nothing; list missing or stale files and exit 1 when there are any")
    g.add_argument("--depfile", metavar="FILE",
                   help="also write a make rule: outputs depend on the specs, templates and bitmend's "
                        "version (- for stdout)")
    g.add_argument("--profile", choices=specmod.PROFILES, help="override every spec's [c] profile")
    g.add_argument("--self-test", action="store_true",
                   help="also write <name>_selftest.c/.h: known-answer vectors and int <name>_selftest(void)")
    g.add_argument("--self-test-vectors", type=int, metavar="N",
                   help=f"vectors in the self-test (default {selftest.DEFAULT_VECTORS}); implies --self-test")
    g.set_defaults(func=cmd_generate)

    v = sub.add_parser("verify", help="compile the C and compare it bit for bit with the model")
    v.add_argument("specs", nargs="+", metavar="SPEC")
    v.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    v.add_argument("--budget", type=int, default=2000, metavar="N",
                   help="most cases per kind of error pattern (default 2000)")
    v.add_argument("--profile", action="append", choices=specmod.PROFILES,
                   help="profile(s) to verify (default: the spec's own); repeatable")
    v.add_argument("--json", metavar="FILE", help="also write the results as JSON (- for stdout)")
    v.add_argument("--cc", metavar="CC", help="cross-build the module with its self-test and a tiny main "
                   "with this compiler instead of the host proof (seed and budget then do not apply)")
    v.add_argument("--cflags", metavar="FLAGS", help='flags for --cc, one string: "-mcpu=cortex-m4 -mthumb -O2"')
    v.add_argument("--run", metavar="CMD", help='run the program through CMD (an emulator such as "qemu-arm '
                   '-L /usr/arm-linux-gnueabihf", or a script that flashes a board) and report the self-test; '
                   "without it the self-test is only built")
    v.add_argument("--self-test-vectors", type=int, default=selftest.DEFAULT_VECTORS, metavar="N",
                   help=f"vectors in the self-test for --cc/--run (default {selftest.DEFAULT_VECTORS})")
    v.set_defaults(func=cmd_verify)

    f = sub.add_parser("footprint", help="code, table and stack bytes of each module on a core")
    f.add_argument("specs", nargs="+", metavar="SPEC")
    f.add_argument("--cc", metavar="CC", help="compiler (default arm-none-eabi-gcc)")
    f.add_argument("--cflags", metavar="FLAGS", help='flags, one string (default with the default compiler: '
                   '"-mcpu=cortex-m0plus -mthumb -Os")')
    f.add_argument("--profile", action="append", choices=specmod.PROFILES,
                   help="profile(s) to measure (default all three); repeatable")
    f.add_argument("--json", metavar="FILE", help="also write the figures as JSON (- for stdout)")
    f.set_defaults(func=cmd_footprint)

    a = sub.add_parser("analyze", help="what the code buys on a channel (binary symmetric or bursty)")
    a.add_argument("specs", nargs="+", metavar="SPEC")
    a.add_argument("--flip-prob", type=float, required=True, metavar="F",
                   help="probability that the channel flips a bit, in (0, 0.5)")
    _channel_options(a)
    a.add_argument("--simulate", type=int, metavar="N",
                   help="also run N random channel trials through the compiled C")
    a.add_argument("--seed", type=int, default=1, help="random seed of the simulation (default 1)")
    a.add_argument("--plot", metavar="FILE", help="draw the figures into FILE (.png or .svg)")
    a.add_argument("--json", metavar="FILE", help="also write the figures as JSON (- for stdout)")
    a.set_defaults(func=cmd_analyze)

    r = sub.add_parser("recommend", help="the cheapest code that meets a failure target on a channel")
    r.add_argument("--data-bytes", type=int, required=True, metavar="N", help="bytes of data to protect")
    r.add_argument("--flip-prob", type=float, required=True, metavar="F",
                   help="probability that the channel flips a bit, in (0, 0.5)")
    _channel_options(r)
    r.add_argument("--target", type=float, required=True, metavar="P",
                   help="largest acceptable failure for the whole data, in (0, 1)")
    r.add_argument("--families", nargs="+", choices=list(specmod.FAMILIES), metavar="FAMILY",
                   help=f"families to search (default all: {', '.join(specmod.FAMILIES)})")
    r.add_argument("--profile", choices=specmod.PROFILES, default="fast",
                   help="C profile whose table sizes count (default fast)")
    r.add_argument("--json", metavar="FILE", help="also write the candidates as JSON (- for stdout)")
    r.add_argument("--write", metavar="DIR",
                   help="write the best candidate as a spec file into DIR (- for stdout)")
    r.add_argument("--force", action="store_true", help="let --write replace an existing spec file")
    r.set_defaults(func=cmd_recommend)

    for verb, what in (("encode", "protect a file: parity for each block of IN, written to OUT"),
                       ("decode", "repair a file that encode protected; OUT gets the corrected data")):
        e = sub.add_parser(verb, help=what)
        e.add_argument("spec", metavar="SPEC")
        e.add_argument("input", metavar="IN", help="input file (- for stdin)")
        e.add_argument("output", metavar="OUT", help="output file (- for stdout)")
        e.add_argument("--parity-file", metavar="FILE",
                       help="the parity in its own file (OUT, or IN for decode, then holds the data only)")
        e.add_argument("--profile", choices=specmod.PROFILES, help="C profile to run (same bits in every one)")
        e.set_defaults(func=cmd_encode if verb == "encode" else cmd_decode)

    sub.add_parser("list", help="the families with their keys and ranges, the profiles, the CRC presets"
                   ).set_defaults(func=cmd_list)

    pr = sub.add_parser("prove", help="run every error pattern up to a weight through the C, on a Dask cluster")
    pr.add_argument("spec", metavar="SPEC")
    pr.add_argument("--max-weight", type=int, metavar="W", help="largest error weight (default t + 1)")
    pr.add_argument("--profile", action="append", choices=specmod.PROFILES,
                    help="profile(s) to prove (default: the spec's own); repeatable, one certificate each")
    pr.add_argument("--data-len", type=int, metavar="N", help="data block length in bytes (default the largest)")
    pr.add_argument("--scheduler", metavar="ADDRESS", help="a running Dask scheduler, e.g. tcp://host:8786 "
                    "(default: a local cluster on 127.0.0.1)")
    pr.add_argument("--workers", type=int, metavar="N", help="worker processes of the local cluster "
                    "(default one per core)")
    pr.add_argument("--state", metavar="FILE", help="record finished shards here; an interrupted run resumes")
    pr.add_argument("--json", metavar="FILE", help="also write the certificate(s) as JSON (- for stdout)")
    pr.set_defaults(func=cmd_prove)
    return p


class _CmakeDir(argparse.Action):
    """--cmake-dir: print the folder of the shipped CMake module, like --version prints the version."""

    def __call__(self, parser, namespace, values, option_string=None):
        from importlib import resources
        print(resources.files("bitmend") / "cmake")
        parser.exit(EXIT_OK)


def _terminate(signum, frame):
    raise _Terminated()


def _glue(argv: list[str]) -> list[str]:
    """`--cflags -O2` as `--cflags=-O2`: these options take a value that may start with a dash."""
    out = []
    it = iter(argv)
    for arg in it:
        if arg in ("--cflags", "--run"):
            arg = f"{arg}={next(it, '')}"
        out.append(arg)
    return out


def main(argv: list[str] | None = None) -> int:
    try:
        args = parser().parse_args(_glue(sys.argv[1:] if argv is None else argv))
        problem = _check_args(args)
        if problem:
            parser().error(problem)
    except SystemExit as done:                 # --help, --version, usage errors
        return done.code if isinstance(done.code, int) else EXIT_BAD_INPUT
    main_thread = threading.current_thread() is threading.main_thread()
    old = {s: signal.signal(s, _terminate) for s in (signal.SIGTERM, signal.SIGHUP)} if main_thread else {}
    try:
        code = args.func(args)
        sys.stdout.flush()
        return code
    except specmod.SpecError as err:
        for problem in err.problems:
            print(problem, file=sys.stderr)
        return EXIT_BAD_INPUT
    except emit.WriteError as err:
        print(f"bitmend: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except harness.BuildError as err:
        print(f"bitmend: {specmod.escape(err.summary, 400)}", file=sys.stderr)
        return EXIT_FAILED
    except ModuleNotFoundError as err:         # an optional piece (matplotlib, distributed) is not installed
        print(f"bitmend: this command needs the Python package {err.name!r}, which is not installed "
              f"(pip install {err.name})", file=sys.stderr)
        return EXIT_BAD_INPUT
    except BrokenPipeError:                    # `bitmend ... | head`: the reader left; say nothing
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return EXIT_PIPE
    except KeyboardInterrupt:
        print("bitmend: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    except _Terminated:
        print("bitmend: terminated", file=sys.stderr)
        return EXIT_TERMINATED
    except OSError as err:
        where = f"{show_path(err.filename)}: " if err.filename else ""
        print(f"bitmend: {where}{err.strerror or err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    finally:
        for s, handler in old.items():
            signal.signal(s, handler)


if __name__ == "__main__":
    sys.exit(main())
