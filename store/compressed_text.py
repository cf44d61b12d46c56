"""Text kept zlib-compressed in a binary column, read back as the same text.

The results JSON of an analysis version is the largest thing the store writes per test
(≈ 46 KB for a demo test, ≈ 15 KB compressed). :class:`CompressedText` compresses it on the
way in and decompresses it on the way out, so every reader and writer of the model attribute
keeps handling ``str``. Compression is lossless: the text read back is identical to the text
written. PostgreSQL compresses long text by itself (TOAST); compressing here gives both back
ends the same size and the same column type.

References
----------
Deutsch & Gailly (1996), RFC 1950 "ZLIB Compressed Data Format Specification version 3.3".
"""

from __future__ import annotations

import zlib
from typing import Any

from sqlalchemy import LargeBinary
from sqlalchemy.engine import Dialect
from sqlalchemy.types import TypeDecorator

#: zlib's default level: within 1 % of level 9 on results JSON at a third of the time.
ZLIB_LEVEL = 6


def compress_text(text: str) -> bytes:
    """UTF-8 bytes of ``text``, zlib-compressed (RFC 1950 stream)."""
    return zlib.compress(text.encode("utf-8"), ZLIB_LEVEL)


def decompress_text(data: bytes) -> str:
    """The text :func:`compress_text` compressed."""
    return zlib.decompress(bytes(data)).decode("utf-8")


class CompressedText(TypeDecorator[str]):
    """A ``str`` attribute stored as zlib-compressed UTF-8 in a binary column (``NULL`` stays ``NULL``)."""

    impl = LargeBinary
    cache_ok = True

    def process_bind_param(self, value: str | None, dialect: Dialect) -> bytes | None:
        return None if value is None else compress_text(value)

    def process_result_value(self, value: Any, dialect: Dialect) -> str | None:
        return None if value is None else decompress_text(value)
