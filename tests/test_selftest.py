"""The on-device self-test (`generate --self-test`) and `verify --cc/--run`, on the host compiler.

The vectors' answers are the model's (codes/*.py, themselves held against outside references in their own
tests); here the C replays them, and a vector altered after the fact must be reported by its index.
"""
from __future__ import annotations

import re

import pytest

from bitmend import cli, emit, harness, selftest, spec as specmod, target
from bitmend.codes import build
from conftest import EXAMPLES

PROFILES = ["fast", "small", "tiny"]


def run_on_host(model, files: dict[str, str]) -> int | None:
    program = target.build_program(files, harness.compiler(), ("-O1",), linked=True)
    result, message = target.run_program(program, [], model.spec.name)
    assert message == ""
    return result


@pytest.mark.parametrize("profile", PROFILES)
@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_self_test_passes_on_the_host(path, profile):
    model = build(specmod.load(path).with_profile(profile))
    assert run_on_host(model, target.program_files(model)) == 0


@pytest.mark.parametrize("which", ["first", "middle", "last"])
def test_a_corrupted_vector_is_reported_by_its_index(which):
    """Altering vector k's expected decode result makes the self-test return k, and so does altering the
    parity vector 1 expects from encode: the C compares every answer."""
    model = build(specmod.load(EXAMPLES[0]))            # Reed-Solomon, with erasure vectors
    ctx = selftest.context(model)
    sizes = [v["bytes"] for v in ctx["vectors"]]
    k = {"first": 1, "middle": len(sizes) // 2, "last": len(sizes)}[which]
    ctx["pool"][sum(sizes[:k - 1]) + 2] ^= 0x01         # byte 2 of a record: decode's result
    assert run_on_host(model, _files(model, ctx)) == k
    ctx = selftest.context(model)
    ctx["pool"][sizes[0] - 1] ^= 0x80                   # vector 1 (clean): the last parity byte
    assert run_on_host(model, _files(model, ctx)) == 1


def _files(model, ctx) -> dict[str, str]:
    return emit.render(model) | selftest._render(model, ctx, ("selftest.h", "selftest.c")) | \
        selftest.main_source(model)


def test_vectors_cover_the_kinds_the_issue_lists():
    model = build(specmod.load(EXAMPLES[0]))             # RS(255,223): t = 16
    kinds = [v.kind for v in selftest.vectors(model, 12)]
    assert kinds[:9] == ["clean, all-zero data", "clean, all-one data", "clean, random data, 1 bytes",
                         "1 error(s)", "16 error(s)", "17 errors (beyond t)", "length error",
                         "32 erasures", "16 erasures + 8 errors"]
    assert len(selftest.vectors(model, 40)) == 40
    # errors spread over data and parity: the 16-error vector puts 8 in the 32 parity symbols
    sixteen = selftest.vectors(model, 12)[4]
    assert sum(offset >= 8 * 223 for offset, _ in sixteen.errors) == 8


def test_generate_self_test_writes_the_files_and_states_the_vector_bytes(tmp_path, capsys):
    out = tmp_path / "gen"
    assert cli.main(["generate", str(EXAMPLES[0]), "-o", str(out), "--self-test-vectors", "5"]) == 0
    name = EXAMPLES[0].stem
    assert sorted(p.name for p in out.iterdir()) == sorted([f"{name}.c", f"{name}.h", f"{name}_selftest.c",
                                                            f"{name}_selftest.h"])
    header = (out / f"{name}_selftest.h").read_text()
    assert re.search(rf"#define {name.upper()}_SELFTEST_VECTORS\s+5u", header)
    stated = int(re.search(rf"#define {name.upper()}_SELFTEST_BYTES\s+(\d+)u", header).group(1))
    files = {p.name: p.read_text() for p in out.iterdir()}
    assert emit.tables({f"{name}_selftest.c": files[f"{name}_selftest.c"]}) == \
        {f"{name}_selftest_pool": stated}
    assert f"int {name}_selftest(void);" in header


def test_bad_self_test_options_exit_2(tmp_path, capsys):
    assert cli.main(["generate", str(EXAMPLES[0]), "-o", str(tmp_path), "--self-test-vectors", "0"]) == 2
    assert "--self-test-vectors must be 1..1000 (got 0)" in capsys.readouterr().err


def test_verify_on_target_runs_the_self_test_through_a_command(capsys):
    """--run "env" runs the host program: the path through an emulator, without one."""
    spec = str(EXAMPLES[2])
    assert cli.main(["verify", spec, "--cc", harness.compiler(), "--cflags", "-O2", "--run", "env",
                     "--profile", "tiny"]) == 0
    out = capsys.readouterr().out
    assert re.search(r"boot_header\s+tiny\s+ok\s+pass \(12 vectors\)", out)
    assert cli.main(["verify", spec, "--cc", harness.compiler()]) == 0          # without --run: built only
    assert "not run" in capsys.readouterr().out


@pytest.mark.parametrize("args,code,expect", [
    (["--cc", "no-such-cc-4711"], 2, "--cc no-such-cc-4711: no such compiler on PATH"),
    (["--run", "no-such-emulator-4711 -x"], 2, "no such program on PATH"),
    (["--cflags", "'unbalanced"], 2, "--cflags/--run: No closing quotation"),
    (["--cflags", "-mno-such-option-4711"], 1, "FAILED"),
])
def test_verify_on_target_bad_combinations_are_one_line(args, code, expect, capsys):
    assert cli.main(["verify", str(EXAMPLES[2]), *args]) == code
    out, err = capsys.readouterr()
    assert expect in out + err
    assert "Traceback" not in out + err
