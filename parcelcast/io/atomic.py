"""Write outputs whole or not at all, and never over an input.

* :func:`atomic_path`: one file, written to a temporary ``.NAME.PID.*.part`` file beside the
  target and renamed onto it; on any failure or interruption (SIGTERM, Ctrl-C) the ``.part``
  file is removed, and leftovers of a process killed outright are removed by the next write.
* :func:`atomic_folder`: a folder of several outputs (a review), written into a temporary sibling
  folder and swapped in whole; an older output folder is replaced only once the new one is complete.
* :func:`guard_inputs` / :func:`add_inputs`: the files a command reads; writing onto one of them
  (or replacing a folder holding one) is refused with :class:`~parcelcast.errors.OutputError`.

Every file-system failure of writing becomes an ``OutputError`` naming the path and the reason.
"""

from __future__ import annotations

import contextlib
import glob
import os
import shutil
import tempfile
from pathlib import Path

from parcelcast.errors import OutputError

#: marker file in every output folder parcelcast writes; only such a folder is ever replaced
FOLDER_MARKER = ".parcelcast-output"

_INPUTS: set[Path] = set()


@contextlib.contextmanager
def guard_inputs(paths=()):
    """Within the block, refuse to write onto ``paths`` (files; globs are expanded)."""
    saved = set(_INPUTS)
    add_inputs(paths)
    try:
        yield
    finally:
        _INPUTS.clear()
        _INPUTS.update(saved)


def add_inputs(paths) -> None:
    """Protect more input files (e.g. the analyses named by a case file) from being written."""
    for text in paths or ():
        matches = glob.glob(str(text)) if glob.has_magic(str(text)) else [str(text)]
        for name in matches:
            _INPUTS.add(Path(name).resolve())


def _part_prefix(target: Path) -> str:
    """``.NAME.PID.``: temporary outputs name the process writing them."""
    return f".{target.name}.{os.getpid()}."


def _remove_stale_parts(target: Path) -> None:
    """Remove ``.part`` leftovers of ``target`` whose writing process no longer exists
    (killed with SIGKILL or by a power cut, when no clean-up could run)."""
    for part in target.parent.glob(f".{glob.escape(target.name)}.*.part"):
        pid_text = part.name[len(target.name) + 2:].split(".", 1)[0]
        if not pid_text.isdigit() or int(pid_text) == os.getpid() or _alive(int(pid_text)):
            continue
        with contextlib.suppress(OSError):
            shutil.rmtree(part) if part.is_dir() else part.unlink()


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:  # exists but belongs to someone else
        return True
    return True


def _check_not_input(target: Path) -> None:
    resolved = target.resolve()
    for source in _INPUTS:
        same = resolved == source or (
            target.exists() and source.exists() and os.path.samefile(target, source))
        if same:
            raise OutputError(target, "it is one of the inputs of this command; "
                              "choose another output name (inputs are never modified)")


def _check_folder(folder: Path, target: Path) -> None:
    if not folder.exists():
        raise OutputError(target, f"the folder {folder} does not exist (create it first)")
    if not folder.is_dir():
        raise OutputError(target, f"{folder} is a file, not a folder")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise OutputError(target, f"the folder {folder} is not writable")


def check_file_target(target, create_folder: bool = False) -> Path:
    """Refuse early (before any computing) an output file that could not be written.

    The command line refuses a folder that does not exist; library callers of
    :func:`atomic_path` get it created (``create_folder``).
    """
    target = Path(target)
    if create_folder and not target.parent.exists():
        try:
            target.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise OutputError(target, f"cannot create its folder: {exc.strerror or exc}") from None
    _check_folder(target.parent, target)
    if target.is_dir():
        raise OutputError(target, "it is a folder; give a file name (for example "
                          f"{target / 'output'}{target.suffix or '.nc'})")
    _check_not_input(target)
    return target


def check_folder_target(target) -> Path:
    """Refuse early an output folder that could not be written or must not be replaced."""
    target = Path(target)
    _check_folder(target.parent, target)
    if target.exists():
        if not target.is_dir():
            raise OutputError(target, "it is a file, not a folder")
        if any(target.iterdir()) and not (target / FOLDER_MARKER).exists():
            raise OutputError(target, "the folder exists and was not written by parcelcast; "
                              "choose a new folder name or empty it first")
        resolved = target.resolve()
        inside = sorted(str(p) for p in _INPUTS if resolved in p.parents)
        if inside:
            raise OutputError(target, f"the folder holds inputs of this command ({inside[0]})")
    return target


@contextlib.contextmanager
def atomic_path(target):
    """Yield a temporary path in the target's folder; on success rename it onto ``target``.

    If the block raises (or the command is interrupted), the temporary file is removed and
    ``target`` is left untouched (an earlier complete file stays as it was).  A missing folder
    is created (the command line refuses it before computing: ``cli._common.check_outputs``);
    a target that is a folder or one of the inputs is refused.

    Example
    -------
    >>> with atomic_path("out.nc") as tmp:          # doctest: +SKIP
    ...     dataset.to_netcdf(tmp)
    """
    target = check_file_target(target, create_folder=True)
    folder = target.parent
    _remove_stale_parts(target)
    try:
        fd, tmp_name = tempfile.mkstemp(prefix=_part_prefix(target), suffix=".part", dir=folder)
    except OSError as exc:
        raise OutputError(target, exc.strerror or str(exc)) from None
    os.close(fd)
    tmp = Path(tmp_name)
    try:
        try:
            yield tmp
            os.chmod(tmp, 0o666 & ~_current_umask())  # mkstemp makes 0600; outputs are ordinary
            os.replace(tmp, target)
        except OSError as exc:
            raise OutputError(target, exc.strerror or str(exc)) from None
    finally:
        with contextlib.suppress(FileNotFoundError):
            tmp.unlink()


@contextlib.contextmanager
def atomic_folder(target):
    """Yield a temporary sibling folder; on success swap it in as ``target``, whole.

    An existing ``target`` is replaced only if parcelcast wrote it (it holds the
    :data:`FOLDER_MARKER` file) or it is empty, and never if it holds an input.  The old folder
    is renamed aside, the new one renamed into place, then the old one removed: a reader sees
    the old folder or the new one, never a mixture (a kill between the two renames leaves the
    complete old folder as ``.NAME.old-*`` beside the target).
    """
    target = check_folder_target(target)
    parent = target.parent
    _remove_stale_parts(target)
    try:
        tmp = Path(tempfile.mkdtemp(prefix=_part_prefix(target), suffix=".part", dir=parent))
    except OSError as exc:
        raise OutputError(target, exc.strerror or str(exc)) from None
    old = None
    try:
        try:
            yield tmp
            (tmp / FOLDER_MARKER).write_text("written by parcelcast; replaced whole on the next run\n",
                                             encoding="utf-8")
            os.chmod(tmp, 0o777 & ~_current_umask())
            if target.exists():
                old = Path(tempfile.mkdtemp(prefix=f".{target.name}.old-", dir=parent))
                os.replace(target, old / target.name)
            os.replace(tmp, target)
        except OSError as exc:
            raise OutputError(target, exc.strerror or str(exc)) from None
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
        if old is not None:
            if not target.exists():  # the new folder did not go in: put the old one back
                with contextlib.suppress(OSError):
                    os.replace(old / target.name, target)
            shutil.rmtree(old, ignore_errors=True)


def _current_umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_text(target, text: str) -> None:
    """Write ``text`` to ``target`` atomically (UTF-8)."""
    with atomic_path(target) as tmp:
        tmp.write_text(text, encoding="utf-8")

