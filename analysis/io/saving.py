"""Writing an import to disk: the session file plus the original kept byte for byte.

Layout in the output folder ``OUT``::

    OUT/<stem>.session.csv        the imported session (docs/session-format.md)
    OUT/originals/<file name>     the uploaded file, unchanged

Writing is all-or-nothing: each file is written to a temporary file in its target folder and
renamed into place; on any error the temporary files, a newly placed original and newly made
folders are removed. An existing original with the same name but different content is never
overwritten: the new one becomes ``<stem>-2<suffix>`` (then ``-3``, ...), and its session file
follows the same stem. Importing the identical file again replaces its session file.
"""

from __future__ import annotations

import contextlib
import hashlib
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

from analysis.errors import TidemarkError
from analysis.io.importer import ImportOutcome
from analysis.io.session_file import session_to_text

ORIGINALS_DIR = "originals"
SESSION_SUFFIX = ".session.csv"


class SaveError(TidemarkError):
    """The import could not be written (nothing was left behind)."""


@dataclass(frozen=True)
class SavedImport:
    """Where an import was written."""

    session_path: Path
    original_path: Path
    original_was_new: bool
    session_replaced: bool


def _sha256_file(path: Path) -> str:
    h = hashlib.sha256()
    with path.open("rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def _safe_name(name: str) -> str:
    base = Path(name.replace("\\", "/")).name.strip()
    base = "".join(ch for ch in base if ch.isprintable() and ch not in '<>:"|?*')
    return base if base not in ("", ".", "..") else "import"


def _write_temp(folder: Path, data: bytes) -> Path:
    fd, tmp = tempfile.mkstemp(dir=folder, prefix=".tidemark-", suffix=".tmp")
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return Path(tmp)


def _place_new(tmp: Path, target: Path) -> None:
    """Move ``tmp`` to ``target`` without ever replacing an existing ``target``."""
    try:
        os.link(tmp, target)
    except FileExistsError:
        raise SaveError(f"'{target}' appeared while saving; import again") from None
    except OSError:  # no hard links on this file system
        if target.exists():
            raise SaveError(f"'{target}' appeared while saving; import again") from None
        os.replace(tmp, target)
        return
    tmp.unlink()


def save_import(outcome: ImportOutcome, original: bytes, *, out_dir: str | Path, original_name: str) -> SavedImport:
    """Write ``outcome`` and the ``original`` bytes into ``out_dir`` (layout in the module doc).

    Raises
    ------
    SaveError
        The folder cannot be created or written; nothing is left behind.
    """
    out = Path(out_dir)
    name = _safe_name(original_name)
    stem, suffix = (Path(name).stem, Path(name).suffix) if Path(name).suffix else (name, "")
    digest = hashlib.sha256(original).hexdigest()
    made_dirs: list[Path] = []
    temps: list[Path] = []
    placed_original: Path | None = None
    try:
        for folder in (out, out / ORIGINALS_DIR):
            missing = [p for p in [folder, *folder.parents] if not p.exists()]
            folder.mkdir(parents=True, exist_ok=True)
            made_dirs.extend(missing)
        k = 1
        while True:
            candidate = name if k == 1 else f"{stem}-{k}{suffix}"
            original_path = out / ORIGINALS_DIR / candidate
            session_path = out / f"{Path(candidate).stem if suffix else candidate}{SESSION_SUFFIX}"
            if original_path.exists():
                if original_path.is_file() and _sha256_file(original_path) == digest:
                    new_original = False
                    break
            elif not session_path.exists():
                new_original = True
                break
            k += 1
        replaced = session_path.exists()
        session_tmp = _write_temp(out, session_to_text(outcome.session).encode("utf-8"))
        temps.append(session_tmp)
        if new_original:
            original_tmp = _write_temp(out / ORIGINALS_DIR, original)
            temps.append(original_tmp)
            _place_new(original_tmp, original_path)
            placed_original = original_path
        os.replace(session_tmp, session_path)
        return SavedImport(session_path, original_path, new_original, replaced)
    except BaseException as exc:
        for tmp in temps:
            tmp.unlink(missing_ok=True)
        if placed_original is not None:
            placed_original.unlink(missing_ok=True)
        for folder in sorted(made_dirs, key=lambda p: len(p.absolute().parts), reverse=True):
            with contextlib.suppress(OSError):
                folder.rmdir()
        if isinstance(exc, OSError):
            raise SaveError(
                f"could not write to '{out}' ({exc.strerror or exc}); nothing was saved — "
                "check the folder exists and is writable, or choose another with --out"
            ) from None
        raise
