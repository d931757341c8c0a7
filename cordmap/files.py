"""Files cordmap reads and writes: regular files only, bounded reads, no overwriting unless asked, atomic writes.

* `open_regular` opens a path without blocking (``O_NONBLOCK``, so a FIFO with no writer does not hang) and
  refuses anything that is not a regular file: a FIFO, a device such as ``/dev/zero``, a socket, a folder.
* `read_bounded` reads at most a size limit (a findings file has no reason to be larger than a few MB).
* `check_output` is asked before any work: the output's folder exists, the output is not a folder, not one of
  the inputs, and does not exist unless the caller was told to replace it (``--force``).
* `write_atomic` writes a temporary file in the target folder and renames it into place once complete, so a
  crash leaves no half-written file; without ``force`` the final step is a hard link, which fails rather than
  replace a file that appeared meanwhile.
"""
from __future__ import annotations

import os
import stat
import tempfile
from pathlib import Path

from .errors import CordmapError, shown

MB = 1024 * 1024
MAX_FINDINGS_BYTES = 4 * MB  # one exam is a few kB; a findings file larger than this is not one
MAX_COHORT_BYTES = 4096 * MB  # a cohort is streamed; this only stops an endless file


def _name(path) -> str:
    return shown(str(path), 80)


def _kind(mode: int) -> str:
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISFIFO(mode):
        return "a FIFO (named pipe)"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def open_regular(path, what: str = "file", limit: int | None = None):
    """Open `path` for reading in binary mode; only a regular file of at most `limit` bytes is opened."""
    name = _name(path)
    if "\x00" in str(path):
        raise CordmapError(f"{name}: not a file name (it holds a null character)")
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_CLOEXEC", 0) | getattr(os, "O_NOCTTY", 0)
    try:
        fd = os.open(os.fspath(path), flags)
    except FileNotFoundError:
        raise CordmapError(f"{name}: no such {what}") from None
    except IsADirectoryError:
        raise CordmapError(f"{name}: is a folder, not a {what}") from None
    except (OSError, ValueError) as e:
        raise CordmapError(f"{name}: cannot be read ({getattr(e, 'strerror', None) or e})") from None
    try:
        st = os.fstat(fd)
        if not stat.S_ISREG(st.st_mode):
            raise CordmapError(f"{name}: is {_kind(st.st_mode)}; a {what} must be a regular file")
        if limit is not None and st.st_size > limit:
            raise CordmapError(f"{name}: {st.st_size:,} bytes is over the {limit // MB} MB limit for a {what}")
        if hasattr(os, "set_blocking"):
            os.set_blocking(fd, True)
        return os.fdopen(fd, "rb")
    except BaseException:
        os.close(fd)
        raise


def read_bounded(path, what: str = "file", limit: int = MAX_FINDINGS_BYTES) -> bytes:
    """The bytes of a regular file of at most `limit` bytes (checked again while reading: files can grow)."""
    with open_regular(path, what, limit) as fh:
        try:
            data = fh.read(limit + 1)
        except OSError as e:
            raise CordmapError(f"{_name(path)}: cannot be read ({e.strerror or e})") from None
    if len(data) > limit:
        raise CordmapError(f"{_name(path)}: over the {limit // MB} MB limit for a {what}")
    return data


def _same_file(a: Path, b: Path) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.abspath(a) == os.path.abspath(b)


def check_output(path, force: bool = False, inputs=()) -> Path:
    """Refuse, before any work, an output that cannot or must not be written; returns it as a Path."""
    path = Path(path)
    name = _name(path)
    if "\x00" in str(path):
        raise CordmapError(f"{name}: not a file name (it holds a null character)")
    folder = path.parent
    if not str(path.name) or path.name in (".", ".."):
        raise CordmapError(f"{name}: names a folder; give a file name for the output")
    if not folder.is_dir():
        raise CordmapError(f"{name}: the folder {_name(folder)} does not exist")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise CordmapError(f"{name}: the folder {_name(folder)} is not writable")
    for src in inputs:
        if _same_file(path, Path(src)):
            raise CordmapError(f"{name}: is the input file; write the results to another file")
    if os.path.lexists(path):
        try:
            mode = os.stat(path).st_mode
        except OSError:
            mode = 0
        if not stat.S_ISREG(mode):
            raise CordmapError(f"{name}: is {_kind(mode)}; the output must be a regular file")
        if not force:
            raise CordmapError(f"{name}: already exists; pass --force to replace it")
    return path


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def write_atomic(path, data: bytes, force: bool = False) -> Path:
    """Write `data` to `path` through a temporary file in the same folder, renamed (or linked) when complete."""
    path = Path(path)
    tmp = None
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name[:80]}.", suffix=".part", dir=path.parent)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, 0o666 & ~_umask())
        if force:
            os.replace(tmp, path)
        else:
            try:
                os.link(tmp, path)  # fails if the file exists: never replaces one that appeared meanwhile
            except FileExistsError:
                raise CordmapError(f"{_name(path)}: already exists; pass --force to replace it") from None
            except OSError:  # a file system without hard links
                if os.path.lexists(path):
                    raise CordmapError(f"{_name(path)}: already exists; pass --force to replace it") from None
                os.replace(tmp, path)
    except OSError as e:
        raise CordmapError(f"{_name(path)}: cannot be written ({e.strerror or e})") from None
    finally:
        if tmp is not None and os.path.lexists(tmp):
            os.unlink(tmp)
    return path
