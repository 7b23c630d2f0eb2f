"""A missing optional piece ends in one line and exit status 2, never in a traceback, and writes nothing."""
from __future__ import annotations

import sys

from bitmend import cli
from conftest import ROOT


def test_plot_without_matplotlib(tmp_path, monkeypatch, capsys):
    for name in [m for m in sys.modules if m == "matplotlib" or m.startswith("matplotlib.")]:
        monkeypatch.delitem(sys.modules, name)
    monkeypatch.setitem(sys.modules, "matplotlib", None)        # makes `import matplotlib` fail
    png, js = tmp_path / "fig.png", tmp_path / "fig.json"
    rc = cli.main(["analyze", str(ROOT / "examples" / "cal_word.toml"), "--flip-prob", "1e-3",
                   "--plot", str(png), "--json", str(js)])
    err = capsys.readouterr().err
    assert rc == 2
    assert err == ("bitmend: this command needs the Python package 'matplotlib', which is not installed "
                   "(pip install matplotlib)\n")
    assert not png.exists() and not js.exists()
