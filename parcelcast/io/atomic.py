"""Write outputs whole or not at all: write to a temporary file beside the target, then rename."""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path


@contextlib.contextmanager
def atomic_path(target):
    """Yield a temporary path in the target's folder; on success rename it onto ``target``.

    If the block raises, the temporary file is removed and ``target`` is left
    untouched (an earlier complete file stays as it was).

    Example
    -------
    >>> with atomic_path("out.nc") as tmp:          # doctest: +SKIP
    ...     dataset.to_netcdf(tmp)
    """
    target = Path(target)
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    os.close(fd)
    tmp = Path(tmp_name)
    try:
        yield tmp
        os.chmod(tmp, 0o666 & ~_current_umask())  # mkstemp makes 0600; outputs are ordinary files
        os.replace(tmp, target)
    finally:
        if tmp.exists():
            tmp.unlink()


def _current_umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_text(target, text: str) -> None:
    """Write ``text`` to ``target`` atomically (UTF-8)."""
    with atomic_path(target) as tmp:
        tmp.write_text(text, encoding="utf-8")


@contextlib.contextmanager
def atomic_folder(target):
    """Yield a temporary sibling folder; on success it replaces ``target`` as a whole.

    If the block raises, the temporary folder is removed and an earlier ``target`` is
    left as it was.  An existing ``target`` is moved aside first and removed only once
    the new folder is in place.
    """
    import shutil

    target = Path(target)
    target.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent))
    try:
        yield tmp
        os.chmod(tmp, 0o777 & ~_current_umask())  # mkdtemp makes 0700
        old = None
        if target.exists():
            old = Path(tempfile.mkdtemp(prefix=f".{target.name}.", suffix=".old", dir=target.parent))
            os.replace(target, old / target.name)
        os.replace(tmp, target)
        if old is not None:
            shutil.rmtree(old)
    finally:
        if tmp.exists():
            shutil.rmtree(tmp)
