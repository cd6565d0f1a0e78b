"""The one way this package writes a file: complete or not at all, never through a link.

:func:`write_atomically` is used by scenario saves and every export. It

1. creates a temporary file in the target's own folder with ``O_CREAT | O_EXCL |
   O_NOFOLLOW`` and a random name, so a file or symbolic link planted at a guessable name
   is never opened, let alone written through;
2. writes the content, flushes and ``fsync``s it, gives it the permission bits of the file
   it replaces (0644 for a new file);
3. renames it over the target (``os.replace``: atomic on one file system; a symbolic link
   at the target is replaced, its destination is not touched) and syncs the folder.

On any failure the temporary file is removed and an existing target is left as it was.
Temporary files left by a process that was killed mid-write (their names end with
:data:`PARTIAL_SUFFIX` and carry the writer's process id) are removed by the next write
to the same folder.
"""

from __future__ import annotations

import os
import re
import secrets
import stat
import time
from collections.abc import Callable
from typing import BinaryIO

__all__ = ["PARTIAL_SUFFIX", "STALE_AFTER_S", "clean_stale_partials", "write_atomically"]

#: Name ending of this package's temporary files.
PARTIAL_SUFFIX: str = ".snowprobe-partial"

#: A temporary file whose writer still runs is left alone unless it is older than this.
STALE_AFTER_S: float = 3600.0

_PARTIAL = re.compile(r"^\..*\.(\d+)\.[0-9a-f]{16}" + re.escape(PARTIAL_SUFFIX) + r"$")


def _alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # another account's process: alive
        return True
    return True


def clean_stale_partials(folder: str | os.PathLike[str]) -> list[str]:
    """Remove this package's temporary files in ``folder`` whose writer is gone.

    A temporary file is stale when the process that created it no longer runs, or when it
    is older than :data:`STALE_AFTER_S` (a process id can be reused). Only regular files
    and links named like our temporaries are removed (a link is removed, not followed).
    Returns the names removed.
    """
    removed = []
    now = time.time()
    try:
        names = os.listdir(folder)
    except OSError:
        return removed
    for name in names:
        match = _PARTIAL.match(name)
        if match is None:
            continue
        path = os.path.join(folder, name)
        try:
            st = os.lstat(path)
        except OSError:
            continue
        if not (stat.S_ISREG(st.st_mode) or stat.S_ISLNK(st.st_mode)):
            continue
        if _alive(int(match.group(1))) and now - st.st_mtime < STALE_AFTER_S:
            continue
        try:
            os.unlink(path)
        except OSError:
            continue
        removed.append(name)
    return removed


def _fsync_folder(folder: str) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY | getattr(os, "O_DIRECTORY", 0))
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass  # some file systems cannot sync a folder; the rename itself is done
    finally:
        os.close(fd)


def write_atomically(path: str | os.PathLike[str],
                     content: bytes | Callable[[BinaryIO], None]) -> None:
    """Write ``content`` to ``path`` so that ``path`` is either complete or unchanged.

    Parameters
    ----------
    path : str or path-like
        Target file. Its folder must exist.
    content : bytes or callable
        The bytes to write, or a function writing them to the open binary file it is given
        (for writers such as ``numpy.savez_compressed`` that stream to a file object).

    Raises
    ------
    OSError
        When the folder cannot be written, ``path`` is a folder, or writing fails; the
        temporary file is removed first.
    ValueError
        When ``path`` holds a NUL character.
    """
    target = os.fspath(path)
    if isinstance(target, bytes):
        target = os.fsdecode(target)
    if "\0" in target:
        raise ValueError(f"path {target!r} contains a NUL character")
    if os.path.isdir(target):
        raise IsADirectoryError(21, "it is a folder", target)
    folder = os.path.dirname(os.path.abspath(target))
    clean_stale_partials(folder)
    try:
        st = os.stat(target)
        mode = stat.S_IMODE(st.st_mode)
    except OSError:
        mode = 0o644
    base = os.path.basename(target)[:80]
    tmp = os.path.join(folder, f".{base}.{os.getpid()}.{secrets.token_hex(8)}{PARTIAL_SUFFIX}")
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0) | \
        getattr(os, "O_CLOEXEC", 0)
    fd = os.open(tmp, flags, 0o600)
    try:
        with os.fdopen(fd, "wb") as fh:
            if isinstance(content, (bytes, bytearray, memoryview)):
                fh.write(content)
            else:
                content(fh)
            fh.flush()
            os.fchmod(fh.fileno(), mode)
            os.fsync(fh.fileno())
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    _fsync_folder(folder)
