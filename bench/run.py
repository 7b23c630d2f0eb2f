"""`make bench`: runs every bench/bench_*.py in name order and prints its figures."""
from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent


def main() -> int:
    for path in sorted(HERE.glob("bench_*.py")):
        spec = importlib.util.spec_from_file_location(path.stem, path)
        mod = importlib.util.module_from_spec(spec)
        spec.loader.exec_module(mod)
        print(f"== {path.stem}")
        mod.main()
        print()
    return 0


if __name__ == "__main__":
    sys.exit(main())
