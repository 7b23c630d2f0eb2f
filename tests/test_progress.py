"""Progress: verify states its case count first; bars (count, rate, time left) on a terminal only, never in
pipes or CI; the count stated is the count run."""
from __future__ import annotations

import json
import os
import pty
import re
import subprocess
import sys

import pytest

from bitmend import cli, spec as specmod, verify
from bitmend.codes import build
from conftest import ROOT

CAL = str(ROOT / "examples" / "cal_word.toml")
ANSI = re.compile(r"\x1b\[[0-9;?]*[A-Za-z]")


def on_a_terminal(args: list[str], env_extra: dict | None = None) -> tuple[int, str, str]:
    """Run bitmend with stderr on a pseudo-terminal; (exit status, stdout, terminal text without escapes)."""
    env = {k: v for k, v in os.environ.items() if k != "CI"} | (env_extra or {})
    master, slave = pty.openpty()
    proc = subprocess.Popen([sys.executable, "-m", "bitmend.cli", *args], stdout=subprocess.PIPE,
                            stderr=slave, env=env, cwd=ROOT)
    os.close(slave)
    chunks = []
    while True:
        try:
            chunk = os.read(master, 65536)
        except OSError:                     # EIO: the child closed the terminal
            break
        if not chunk:
            break
        chunks.append(chunk)
    out = proc.stdout.read().decode()
    rc = proc.wait(timeout=120)
    os.close(master)
    return rc, out, ANSI.sub("", b"".join(chunks).decode(errors="replace").replace("\r", "\n"))


def test_verify_states_the_count_it_runs(tmp_path, capsys):
    js = tmp_path / "v.json"
    assert cli.main(["verify", CAL, "--budget", "40", "--json", str(js)]) == 0
    out, err = capsys.readouterr()
    ran = sum(json.loads(js.read_text())[0]["cases"].values())
    assert out.splitlines()[0].startswith(f"cal_word [small]: {ran} cases, the C against the model")
    assert err == ""                         # not a terminal: no bar
    model = build(specmod.load(CAL))
    assert verify.case_count(model, seed=1, budget=40) == ran


def test_bar_on_a_terminal_with_count_rate_and_time_left():
    rc, out, term = on_a_terminal(["verify", CAL, "--budget", "300"])
    total = int(re.match(r"cal_word \[small\]: (\d+) cases", out).group(1))
    assert rc == 0 and "OK" in out
    assert re.search(rf"cal_word \[small\].*\b{total}/{total}\b.*/s.*left", term), term[-500:]


def test_simulation_and_recommend_bars_on_a_terminal():
    rc, _, term = on_a_terminal(["analyze", CAL, "--flip-prob", "1e-2", "--simulate", "2000"])
    assert rc == 0 and re.search(r"simulating cal_word.*\b2000/2000\b", term), term[-500:]
    rc, _, term = on_a_terminal(["recommend", "--data-bytes", "16", "--flip-prob", "1e-5", "--target", "1e-4",
                                 "--families", "hamming"])
    assert rc == 0 and re.search(r"building finalists.*\b(\d+)/\1\b", term), term[-500:]


@pytest.mark.parametrize("args", [["verify", CAL, "--budget", "30"],
                                  ["analyze", CAL, "--flip-prob", "1e-2", "--simulate", "500"]])
def test_quiet_in_ci_even_on_a_terminal(args):
    rc, out, term = on_a_terminal(args, {"CI": "true"})
    assert rc == 0 and out and term == ""
