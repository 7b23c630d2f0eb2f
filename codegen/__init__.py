"""bitmend: error-correcting codes for firmware, from a TOML spec to C99 proven against a Python model."""

__version__ = "0.1.0"
