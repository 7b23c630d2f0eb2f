"""All-or-nothing output (issue 13, "What was seen" 5-7, 12) and the output habits of issue 12 item 3:
`-` for stdout, quiet broken pipe, recommend --write --force, --check missing/stale, depfiles that make
reads, generate --profile."""
from __future__ import annotations

import os
import shutil
import signal
import subprocess
import sys
import threading
from pathlib import Path

import pytest

from bitmend import cli, emit
from conftest import pkt_spec


def spec_file(folder: Path, copies: int = 3, name: str = "pkt.toml") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / name
    path.write_text(pkt_spec(copies))
    return path


def snapshot(folder: Path) -> dict:
    """Every file under folder (temporaries included) with its bytes."""
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def run(args, capsys):
    rc = cli.main([str(a) for a in args])
    out, err = capsys.readouterr()
    assert "Traceback" not in err
    return rc, out, err


# -- 5, 12. a blocked output changes nothing and is named -----------------------------------------------

def test_blocked_source_leaves_header_as_it_was(tmp_path, capsys):
    out = tmp_path / "gen"
    assert run(["generate", spec_file(tmp_path, 3), "-o", out], capsys)[0] == 0
    before = snapshot(out)
    (out / "pkt.c").unlink()
    (out / "pkt.c").mkdir()                                  # blocked: a folder where the .c goes
    before = snapshot(out)
    rc, _, err = run(["generate", spec_file(tmp_path, 5), "-o", out], capsys)
    assert rc == 2 and err == f"bitmend: {out / 'pkt.c'}: is a folder\n"
    assert snapshot(out) == before                           # .h unchanged, no temporaries


def test_depfile_in_an_impossible_place_writes_nothing(tmp_path, capsys):
    (tmp_path / "plain").write_text("a file, not a folder\n")
    out = tmp_path / "gen"
    rc, _, err = run(["generate", spec_file(tmp_path), "-o", out, "--depfile", tmp_path / "plain" / "x.d"], capsys)
    assert rc == 2 and err == f"bitmend: {tmp_path / 'plain'}: is not a folder\n"
    assert not out.exists()
    rc, _, err = run(["generate", spec_file(tmp_path), "-o", out, "--depfile", tmp_path], capsys)
    assert rc == 2 and "--depfile" in err and "is a folder" in err and not out.exists()


def test_failed_rename_puts_back_what_was_replaced(tmp_path, monkeypatch):
    a, b = tmp_path / "a.h", tmp_path / "b.c"
    a.write_text("old a\n")
    b.write_text("old b\n")
    real = os.replace

    def failing(src, dst):
        if Path(dst) == b:
            raise OSError(28, "No space left on device")
        return real(src, dst)

    monkeypatch.setattr(emit.os, "replace", failing)
    with pytest.raises(emit.WriteError, match=r"b\.c: No space left on device"):
        emit.commit([emit.Output(a, "new a\n"), emit.Output(b, "new b\n")])
    assert snapshot(tmp_path) == {"a.h": b"old a\n", "b.c": b"old b\n"}


def test_interrupt_before_the_renames_changes_nothing(tmp_path, capsys, monkeypatch):
    out = tmp_path / "gen"
    run(["generate", spec_file(tmp_path, 3), "-o", out], capsys)
    before = snapshot(out)
    real, calls = emit._temporary, []

    def interrupted(*args):
        calls.append(args)
        if len(calls) == 2:
            raise KeyboardInterrupt
        return real(*args)

    monkeypatch.setattr(emit, "_temporary", interrupted)
    rc, _, err = run(["generate", spec_file(tmp_path, 5), "-o", out, "--depfile", tmp_path / "d.d"], capsys)
    assert rc == 130 and err == "bitmend: interrupted\n"
    assert snapshot(out) == before and not (tmp_path / "d.d").exists()


def test_sigint_in_a_real_run_exits_130_with_one_line(tmp_path):
    """A real SIGINT once verify has announced its work: exit 130, one line, the JSON not written."""
    from conftest import EXAMPLES
    flash = next(p for p in EXAMPLES if p.stem == "flash_page")
    proc = subprocess.Popen([sys.executable, "-m", "bitmend.cli", "verify", str(flash), "--json", str(tmp_path / "v.json")],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        assert "cases" in proc.stdout.readline()
        proc.send_signal(signal.SIGINT)
        _, err = proc.communicate(timeout=120)
    finally:
        proc.kill()
    assert proc.returncode == 130 and err == "bitmend: interrupted\n"
    assert list(tmp_path.iterdir()) == []


def test_sigint_while_the_command_loads_exits_130_with_one_line():
    """A Ctrl-C before bitmend.cli has finished importing (here: as numpy is imported) goes through the
    installed command's entry point: one line, exit 130, no traceback."""
    stop_at_numpy = ("import sys\n"
                     "class Stop:\n"
                     "    def find_spec(self, name, path=None, target=None):\n"
                     "        if name == 'numpy':\n"
                     "            raise KeyboardInterrupt\n"
                     "sys.meta_path.insert(0, Stop())\n"
                     "from bitmend.entry import run\n"
                     "sys.exit(run())\n")
    proc = subprocess.run([sys.executable, "-c", stop_at_numpy, "--version"], capture_output=True, text=True,
                          timeout=60)
    assert (proc.returncode, proc.stderr, proc.stdout) == (130, "bitmend: interrupted\n", "")


# -- concurrency and permissions ---------------------------------------------------------------------------

def test_concurrent_commits_never_mix_a_pair(tmp_path):
    folder = tmp_path / "gen"
    folder.mkdir()
    rounds, writers = 15, 4
    mixed = []
    for _ in range(rounds):
        barrier = threading.Barrier(writers)

        def write(tag: str):
            barrier.wait()
            emit.commit([emit.Output(folder / "m.h", f"{tag} h\n" * 2000), emit.Output(folder / "m.c", f"{tag} c\n" * 2000)])

        threads = [threading.Thread(target=write, args=(f"run{i}",)) for i in range(writers)]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
        h, c = (folder / "m.h").read_text().split()[0], (folder / "m.c").read_text().split()[0]
        if h != c:
            mixed.append((h, c))
    assert mixed == []
    assert sorted(p.name for p in folder.iterdir()) == ["m.c", "m.h"]


def test_concurrent_processes_never_mix_a_pair(tmp_path):
    out = tmp_path / "gen"
    specs = [spec_file(tmp_path / f"s{i}", copies) for i, copies in enumerate((1, 3, 5))]
    for _ in range(1):
        procs = [subprocess.Popen([sys.executable, "-m", "bitmend.cli", "generate", str(s), "-o", str(out)],
                                  stdout=subprocess.DEVNULL, stderr=subprocess.PIPE) for s in specs]
        assert [p.wait(timeout=120) for p in procs] == [0, 0, 0]
        h, c = (out / "pkt.h").read_text(), (out / "pkt.c").read_text()
        # the banner carries the spec's hash: both files from the same run
        assert h.split("sha256 ")[1][:64] == c.split("sha256 ")[1][:64]


@pytest.mark.parametrize("mask,mode", [(0o022, 0o644), (0o077, 0o600), (0o002, 0o664)])
def test_permissions_follow_the_umask(tmp_path, capsys, mask, mode):
    old = os.umask(mask)
    try:
        run(["generate", spec_file(tmp_path), "-o", tmp_path / "gen", "--depfile", tmp_path / "gen" / "pkt.d"], capsys)
    finally:
        os.umask(old)
    assert {p.name: p.stat().st_mode & 0o777 for p in (tmp_path / "gen").iterdir()} == {
        "pkt.c": mode, "pkt.h": mode, "pkt.d": mode}


# -- 7. depfiles make reads ----------------------------------------------------------------------------

ODD_NAMES = ["a b", "hash#x", "co:lon", "dol$lar", "back\\slash", "bs\\ space", "star*", "q?m",
             "br[ack]et", "qu'ote", "dq\"", "amp&", "tilde~mid", "par(en)"]


@pytest.mark.skipif(shutil.which("make") is None, reason="GNU make not installed")
@pytest.mark.parametrize("odd", ODD_NAMES)
def test_depfile_read_by_make(tmp_path, capsys, odd):
    """GNU make reads the rule: out of date after the spec changes, up to date after a rebuild."""
    folder = tmp_path / f"in {odd}"
    spec = spec_file(folder, name=f"{odd}.toml")
    out = tmp_path / f"out {odd}"
    dep = tmp_path / "deps.d"
    assert run(["generate", spec, "-o", out, "--depfile", dep], capsys)[0] == 0
    target = emit.make_escape(out / "pkt.c")
    (tmp_path / "Makefile").write_text(f"include deps.d\n{target}:\n\t@true\n")

    def up_to_date() -> bool:
        res = subprocess.run(["make", "-q", str(out / "pkt.c")], cwd=tmp_path, capture_output=True, text=True)
        assert res.returncode in (0, 1), res.stderr
        return res.returncode == 0

    for p in out.iterdir():
        os.utime(p, (2e9, 2e9))
    assert up_to_date()
    os.utime(spec, (3e9, 3e9))
    assert not up_to_date()


@pytest.mark.parametrize("odd", ["semi;colon", "eq=ual", "pi|pe", "pct%", "new\nline", "tab\there", "ctl\x01"])
def test_depfile_refuses_what_make_cannot_name(tmp_path, capsys, odd):
    spec = spec_file(tmp_path / odd)
    out = tmp_path / "gen"
    rc, _, err = run(["generate", spec, "-o", out, "--depfile", tmp_path / "d.d"], capsys)
    assert rc == 2 and err.startswith("bitmend: --depfile: make cannot name a file containing ") and err.count("\n") == 1
    assert not out.exists() and not (tmp_path / "d.d").exists()


def test_make_escape_refuses_a_leading_tilde():
    assert emit.make_escape("a~/b c") == "a~/b\\ c"
    with pytest.raises(ValueError, match="'~'"):
        emit.make_escape("~/x.c")


def test_depfile_to_stdout(tmp_path, capsys):
    spec = spec_file(tmp_path)
    rc, out, err = run(["generate", spec, "-o", tmp_path / "gen", "--depfile", "-"], capsys)
    assert rc == 0 and out.startswith(f"{tmp_path / 'gen' / 'pkt.h'} {tmp_path / 'gen' / 'pkt.c'}: {spec} ")
    assert "wrote" in err and not (tmp_path / "-").exists()


# -- issue 12 item 3 ----------------------------------------------------------------------------------------

def test_check_says_missing_or_stale(tmp_path, capsys):
    spec = spec_file(tmp_path)
    out = tmp_path / "gen"
    run(["generate", spec, "-o", out], capsys)
    (out / "pkt.h").unlink()
    (out / "pkt.c").write_text("/* edited */\n")
    rc, stdout, _ = run(["generate", "--check", spec, "-o", out], capsys)
    assert rc == 1 and stdout.splitlines() == [f"missing: {out / 'pkt.h'}", f"stale: {out / 'pkt.c'}"]


def test_generate_profile_overrides_the_spec(tmp_path, capsys):
    spec = spec_file(tmp_path)
    run(["generate", spec, "-o", tmp_path / "fast"], capsys)
    run(["generate", spec, "-o", tmp_path / "tiny", "--profile", "tiny"], capsys)
    fast, tiny = ((tmp_path / p / "pkt.h").read_text() for p in ("fast", "tiny"))
    assert "#define PKT_TABLE_BYTES 256u" in " ".join(fast.split())
    assert "#define PKT_TABLE_BYTES 0u" in " ".join(tiny.split())


def test_json_to_stdout_is_pure_json(tmp_path, capsys):
    import json
    rc, out, err = run(["verify", spec_file(tmp_path), "--budget", "5", "--json", "-"], capsys)
    assert rc == 0 and json.loads(out)[0]["ok"] is True and "OK" in err
    assert not (tmp_path / "-").exists()


RECOMMEND = ["recommend", "--data-bytes", "16", "--flip-prob", "1e-5", "--target", "1e-4",
             "--families", "hamming"]


def test_recommend_write_refuses_to_overwrite(tmp_path, capsys):
    rc, out, _ = run(RECOMMEND + ["--write", tmp_path], capsys)
    [written] = list(tmp_path.glob("*.toml"))
    assert rc == 0 and f"wrote {written}" in out
    written.write_text("# mine\n")
    rc, _, err = run(RECOMMEND + ["--write", tmp_path, "--json", tmp_path / "r.json"], capsys)
    assert rc == 2 and err == f"bitmend: {written}: exists; --force replaces it\n"
    assert written.read_text() == "# mine\n" and not (tmp_path / "r.json").exists()
    rc, _, _ = run(RECOMMEND + ["--write", tmp_path, "--force"], capsys)
    assert rc == 0 and written.read_text() != "# mine\n"


def test_recommend_write_to_stdout(tmp_path, capsys):
    import tomllib
    rc, out, err = run(RECOMMEND + ["--write", "-"], capsys)
    assert rc == 0 and tomllib.loads(out)["code"]["family"] == "hamming"


def test_closed_pipe_is_quiet():
    """`bitmend ... | head -1`: no 'Broken pipe' and no traceback."""
    cmd = f"{sys.executable} -m bitmend.cli recommend --data-bytes 64 --flip-prob 1e-3 --target 1e-9 | head -c 1"
    res = subprocess.run(["bash", "-o", "pipefail", "-c", cmd], capture_output=True, text=True, timeout=120)
    assert res.stderr == "" and res.returncode in (0, 141)
