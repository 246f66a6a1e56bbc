"""Atomic file writes: a result file is either the complete new version or untouched.

Every file airbias writes (tables, reports, figures, meshes) goes through here. The data go to
a temporary file in the target's own folder (so the final rename never crosses a file system),
are flushed to disk, and replace the target with ``os.replace``, which POSIX and Windows both
perform atomically for files on one volume. On any exception the temporary file is removed and
the target keeps its old content (or stays absent).
"""
from __future__ import annotations

import contextlib
import os
import secrets
from collections.abc import Iterator
from pathlib import Path

_MAX_NAME_TRIES = 100


def _create_temporary(path: Path) -> Path:
    """Create an empty, new temporary file beside ``path`` and return its path.

    The name keeps the target's extension last, because libraries that write by path (matplotlib,
    meshio) choose the format from it. Mode 0o666 lets the process umask apply, as for an
    ordinary new file (tempfile.mkstemp would force 0o600).
    """
    for _ in range(_MAX_NAME_TRIES):
        candidate = path.with_name(f".{path.name}.{secrets.token_hex(4)}.tmp{path.suffix}")
        try:
            fd = os.open(candidate, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o666)
        except FileExistsError:
            continue
        os.close(fd)
        return candidate
    raise OSError(f"could not create a temporary file beside {path}")


def _remove_quietly(path: Path) -> None:
    with contextlib.suppress(FileNotFoundError):
        os.remove(path)


@contextlib.contextmanager
def atomic_path(path) -> Iterator[Path]:
    """Yield a temporary path beside ``path``; on success it replaces ``path``, on error it is removed.

    For libraries that write by file name::

        with atomic_path(out / "field.png") as tmp:
            fig.savefig(tmp)
    """
    target = Path(path)
    if not target.parent.is_dir():
        raise ValueError(f"output folder {str(target.parent)!r} does not exist; create it first")
    temporary = _create_temporary(target)
    try:
        yield temporary
        os.replace(temporary, target)
    except BaseException:
        _remove_quietly(temporary)
        raise


def write_bytes(path, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically (flushed and fsynced before the rename)."""
    target = Path(path)
    with atomic_path(target) as temporary:
        with open(temporary, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
    return target


def write_text(path, text: str, encoding: str = "utf-8") -> Path:
    """Write ``text`` to ``path`` atomically; newlines are written as given (no translation)."""
    return write_bytes(path, text.encode(encoding))
