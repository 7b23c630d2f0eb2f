"""The `bitmend` command: a Ctrl-C while the command's modules are still loading (numpy, jinja2, cffi take
a moment) ends with the same one line and exit status as a Ctrl-C during the work (bitmend.cli)."""
import sys

EXIT_INTERRUPTED = 130          # as bitmend.cli, which is not loaded yet when this is needed


def run() -> int:
    try:
        from .cli import main
        return main()
    except KeyboardInterrupt:
        print("bitmend: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
