"""Raw bytes -> text lines, or a located rejection (size, binary content, encoding).

Policy (see ``docs/import.md``):

* empty files and files over the size limit are rejected;
* UTF-8 (with or without a byte-order mark) is read as is; UTF-16 is read when it starts with
  its byte-order mark (some spreadsheet "Unicode text" exports);
* a file that is not valid UTF-8 but decodes as Windows-1252 (cp1252) with only text-like
  characters is accepted with a note;
* clearly binary content (NUL bytes without a UTF-16 mark, control characters other than tab,
  line feed and carriage return) is rejected with the line where it was found.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from analysis.errors import ImportRejected, Problem

#: Largest file the importer reads, in megabytes of 1,000,000 bytes: the one number the dashboard's
#: upload box (``server.maxUploadSize``, counted in the browser as 1,000,000 bytes per MB), the
#: ``tidemark serve`` command and the importer share. Breath tables are far smaller (a 30-minute
#: test is about 2,000 lines, some 200 kB).
MAX_UPLOAD_MB: int = 50
#: The same limit in bytes (50,000,000).
DEFAULT_MAX_BYTES: int = MAX_UPLOAD_MB * 1_000_000

_CONTROL = re.compile(r"[\x00-\x08\x0b-\x0c\x0e-\x1f\x7f-\x9f]")
#: Every byte except the ASCII control characters of ``_CONTROL``: deleting these from ASCII
#: text leaves only its control characters (one C pass, several times quicker than the search).
_NOT_CONTROL_BYTES = bytes(b for b in range(256) if not _CONTROL.match(chr(b)) or b > 0x7F)
_LINE_BREAK = re.compile(r"\r\n|\r|\n")

XLSX_MAGIC = b"PK\x03\x04"
OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"


@dataclass(frozen=True)
class DecodedText:
    """Text of a file with the encoding used and any note for the user."""

    text: str
    encoding: str
    notes: tuple[str, ...] = ()


def check_size(size: int, *, max_bytes: int, file_name: str) -> None:
    """Reject an empty file or one larger than ``max_bytes``."""
    if size == 0:
        raise ImportRejected(
            Problem("the file is empty", "export the test again and check the file was saved completely", file_name)
        )
    if size > max_bytes:
        raise ImportRejected(
            Problem(
                f"the file is {size / 1e6:.1f} MB, larger than the {max_bytes / 1e6:.1f} MB limit",
                "check it is a single breath-by-breath export; raise the limit (--max-mb) if it really is one test",
                file_name,
            )
        )


def container_kind(data: bytes) -> str:
    """``'xlsx'`` (a zip container), ``'xls'`` (old binary workbook) or ``'text'``, from the content."""
    if data.startswith(XLSX_MAGIC):
        return "xlsx"
    if data.startswith(OLE_MAGIC):
        return "xls"
    return "text"


def _line_of(text: str, pos: int) -> int:
    return len(_LINE_BREAK.findall(text, 0, pos)) + 1


def _reject_binary(file_name: str, line: int | None, what: str) -> ImportRejected:
    return ImportRejected(
        Problem(
            f"{what}; this does not look like a text table",
            "export the test as CSV or tab-separated text (or .xlsx) and import that file",
            file_name,
            line,
        )
    )


def decode_text(data: bytes, *, file_name: str, strict_utf8: bool = False) -> DecodedText:
    """Decode ``data`` following the module policy.

    Parameters
    ----------
    data : bytes
        The file content.
    file_name : str
        Used in messages.
    strict_utf8 : bool, optional
        Accept only UTF-8 (Tidemark session files are always UTF-8).

    Raises
    ------
    ImportRejected
        Binary content or an encoding that cannot be read.
    """
    notes: list[str] = []
    if data.startswith((b"\xff\xfe", b"\xfe\xff")) and not strict_utf8:
        try:
            text = data.decode("utf-16")
        except UnicodeDecodeError:
            raise _reject_binary(file_name, None, "the file starts like UTF-16 text but does not decode") from None
        encoding = "utf-16"
        notes.append("the file is UTF-16 text; it was converted (Tidemark writes UTF-8)")
    else:
        nul = data.find(b"\x00")
        if nul >= 0:
            line = data.count(b"\n", 0, nul) + 1
            raise _reject_binary(file_name, line, "the file contains NUL bytes (binary data)")
        try:
            text = data.decode("utf-8-sig")
            encoding = "utf-8"
        except UnicodeDecodeError as exc:
            line = data.count(b"\n", 0, exc.start) + 1
            if strict_utf8:
                raise ImportRejected(
                    Problem(
                        f"byte {exc.start + 1} is not valid UTF-8",
                        "Tidemark session files are UTF-8; re-save the file as UTF-8",
                        file_name,
                        line,
                    )
                ) from None
            try:
                text = data.decode("cp1252")
            except UnicodeDecodeError:
                raise _reject_binary(file_name, line, "the file is neither UTF-8 nor Windows-1252 text") from None
            encoding = "cp1252"
            notes.append(
                f"the file is not UTF-8 (first non-UTF-8 byte on line {line}); it was read as "
                "Windows-1252 — check that special characters (µ, °, accented letters) look right"
            )
    plain_ascii = text.isascii() and not text.encode("ascii").translate(None, _NOT_CONTROL_BYTES)
    bad = None if plain_ascii else _CONTROL.search(text)
    if bad:
        raise _reject_binary(
            file_name, _line_of(text, bad.start()), f"the file contains the control character U+{ord(bad.group()):04X}"
        )
    return DecodedText(text=text, encoding=encoding, notes=tuple(notes))


def split_lines(text: str) -> list[str]:
    """Split on ``\\r\\n``, ``\\r`` or ``\\n`` (only those, so line numbers match editors).

    A final line break does not start an extra empty line.
    """
    lines = _LINE_BREAK.split(text)
    if lines and lines[-1] == "":
        lines.pop()
    return lines
