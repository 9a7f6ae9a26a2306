"""parcelcast's cache folder: where it is, that it stays private, and that it stays small.

The folder is ``$PARCELCAST_CACHE`` if set, else the user's cache folder
(``$XDG_CACHE_HOME/parcelcast``, by default ``~/.cache/parcelcast`` on Linux, through
platformdirs).  It holds GRIB index files (``grib-index/``), the results of the GRIB
message scan (``grib-scan/``), numba's compiled kernels (``numba/``), pint's
parsed unit definitions (``pint/``) and computed tables (``tables/``, see :func:`cached_array`).

cfgrib's index files, numba's cache index and pint's cache are read back with pickle, and
unpickling a planted file runs its code.  So the folder is made private to the user
(mode 0700), and a folder or file that someone else owns or can write is refused
rather than read.  Each sub-folder is kept under a size bound (oldest files removed
first): ``$PARCELCAST_CACHE_MAX_MB`` megabytes, 200 by default.
"""

from __future__ import annotations

import contextlib
import os
import stat
from pathlib import Path

from parcelcast.errors import ParcelcastError

#: default size bound of each sub-folder, in megabytes
DEFAULT_MAX_MB = 200.0


class UnsafeCacheError(ParcelcastError):
    """A cache folder or file that someone other than the user can change."""


def cache_root() -> Path:
    """The cache folder, created private (0700) if absent and checked if present."""
    configured = os.environ.get("PARCELCAST_CACHE")
    if configured:
        root = Path(configured)
    else:
        import platformdirs

        root = Path(platformdirs.user_cache_dir("parcelcast", appauthor=False))
    return _private_folder(root)


def cache_folder(name: str) -> Path:
    """A private sub-folder of the cache (``grib-index``, ``numba``, ...)."""
    return _private_folder(cache_root() / name)


def _private_folder(path: Path) -> Path:
    path.mkdir(mode=0o700, parents=True, exist_ok=True)
    info = path.lstat()
    if stat.S_ISLNK(info.st_mode) or not stat.S_ISDIR(info.st_mode):
        raise UnsafeCacheError(f"cache folder {path} is not a plain folder (a link or a file); "
                               "remove it or set PARCELCAST_CACHE to another folder")
    _refuse_if_shared(path, info, "cache folder")
    if stat.S_IMODE(info.st_mode) != 0o700:
        path.chmod(0o700)  # ours and not writable by others: make it private as well
    return path


def check_private_file(path: Path) -> None:
    """Refuse a cache file (before it is read) that is not the user's own or that others can write."""
    try:
        info = path.lstat()
    except FileNotFoundError:
        return
    if not stat.S_ISREG(info.st_mode):
        raise UnsafeCacheError(f"cache file {path} is not a regular file; remove it")
    _refuse_if_shared(path, info, "cache file")


def make_private(path: Path) -> None:
    """Make a cache file we wrote readable and writable by the user only (whatever the umask)."""
    try:
        path.chmod(0o600)
    except FileNotFoundError:
        pass


def _refuse_if_shared(path: Path, info: os.stat_result, what: str) -> None:
    if info.st_uid != os.geteuid():
        raise UnsafeCacheError(
            f"{what} {path} belongs to another user (uid {info.st_uid}); it is not read because "
            "its files are loaded with pickle, which can run code. Remove it or set "
            "PARCELCAST_CACHE to a folder of your own")
    if info.st_mode & (stat.S_IWGRP | stat.S_IWOTH):
        raise UnsafeCacheError(
            f"{what} {path} can be written by others (mode {stat.S_IMODE(info.st_mode):o}); it is not "
            "read because its files are loaded with pickle, which can run code. Remove it or "
            "make it private (chmod go-w)")


@contextlib.contextmanager
def private_cache_files(name: str):
    """A cache sub-folder for a library that pickles into it (pint): every file in it is
    checked before the library reads, and made private after it writes.  Yields the folder,
    or None (no cache: the library works without) if it is not safe."""
    try:
        folder = cache_folder(name)
        for path in folder.iterdir():
            check_private_file(path)
    except (OSError, UnsafeCacheError) as exc:
        import logging

        logging.getLogger("parcelcast").warning(f"not using the {name} cache: {exc}")
        yield None
        return
    yield folder
    for path in folder.iterdir():
        make_private(path)


def max_bytes() -> int:
    """The size bound of each cache sub-folder, from ``PARCELCAST_CACHE_MAX_MB``."""
    text = os.environ.get("PARCELCAST_CACHE_MAX_MB", "")
    try:
        megabytes = float(text) if text else DEFAULT_MAX_MB
    except ValueError:
        raise ParcelcastError(f"PARCELCAST_CACHE_MAX_MB must be a number of megabytes; got {text!r}") from None
    return int(max(megabytes, 0.0) * 1e6)


def prune(folder: Path, limit: int | None = None) -> list[Path]:
    """Remove the least recently modified files of ``folder`` (recursively) until its files
    together take at most ``limit`` bytes (default :func:`max_bytes`); returns what was removed."""
    limit = max_bytes() if limit is None else limit
    files = []
    for path in folder.rglob("*"):
        try:
            info = path.lstat()
        except FileNotFoundError:  # removed meanwhile by another run
            continue
        if stat.S_ISREG(info.st_mode):
            files.append((info.st_mtime_ns, info.st_size, path))
    total = sum(size for _, size, _ in files)
    removed = []
    for _, size, path in sorted(files, key=lambda item: item[0]):
        if total <= limit:
            break
        path.unlink(missing_ok=True)
        total -= size
        removed.append(path)
    return removed


def configure_numba_cache() -> None:
    """Point numba's cache of compiled kernels at our cache folder, unless the user chose one.

    Must run before numba is imported (numba reads ``NUMBA_CACHE_DIR`` once).  A cache folder
    that is not safe is left alone here; reading GRIB reports it.
    """
    if os.environ.get("NUMBA_CACHE_DIR"):
        return
    try:
        os.environ["NUMBA_CACHE_DIR"] = str(cache_folder("numba"))
    except (OSError, UnsafeCacheError) as exc:  # numba then uses its own default folder
        import logging

        logging.getLogger("parcelcast").warning(f"compiled kernels are not cached in our folder: {exc}")


def cached_array(name: str, sources: list[Path], build, shape: tuple):
    """The float64 array ``build()``, kept in the cache's ``tables/`` as a ``.npy`` file.

    The file's name carries a hash of the ``sources`` (the code that computes the array)
    and numpy's version, so a change to either builds it afresh.  It is read without pickle
    (``allow_pickle=False``), after the checks of :func:`check_private_file`; one that does
    not read, or not as a float64 array of ``shape``, is built again and replaced.  Without a
    safe cache folder the array is built and not kept.
    """
    import hashlib

    import numpy as np

    digest = hashlib.sha1(np.__version__.encode())
    for source in sources:
        digest.update(Path(source).read_bytes())
    try:
        path = cache_folder("tables") / f"{name}.{digest.hexdigest()[:16]}.npy"
        check_private_file(path)
    except (OSError, UnsafeCacheError):
        return build()
    try:
        array = np.load(path, allow_pickle=False)
        if array.dtype == np.float64 and array.shape == shape:
            return array
    except (OSError, ValueError):
        pass  # absent or damaged: built again
    array = build()
    temporary = path.with_name(f"{path.name}.{os.getpid()}.part")
    try:
        with open(temporary, "wb") as handle:
            np.save(handle, array, allow_pickle=False)
        make_private(temporary)
        temporary.replace(path)  # atomic: a concurrent run reads the old file or the new one
        prune(path.parent)
    except OSError:
        temporary.unlink(missing_ok=True)
    return array
