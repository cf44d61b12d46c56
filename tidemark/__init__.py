"""The ``tidemark`` command-line shell and settings. Thin: it calls :mod:`analysis` and :mod:`store`."""

__version__ = "0.1.0"
