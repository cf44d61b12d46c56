"""Tidemark's computational core.

Pure, typed functions on numpy and pandas: no Streamlit, no database, no file-system side
effects beyond the explicit readers and writers in :mod:`analysis.io`.

Sub-packages are organised by domain and imported explicitly, e.g.::

    from analysis.session import Session
    from analysis.oxygen import saturation

This ``__init__`` stays import-light on purpose so that one domain never breaks another.
"""

__all__: list[str] = []
