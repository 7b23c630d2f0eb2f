"""bitmend: error-correcting codes for firmware, from a TOML spec to C99 proven against a Python model."""

__version__ = "0.1.0"


def __getattr__(name: str):
    """`from bitmend import load`: the host-side API (bitmend.host), imported on first use."""
    if name == "load":
        from .host import load
        return load
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
