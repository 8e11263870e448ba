"""Reading the user's input files safely: regular files only, of bounded size.

A path that names a FIFO, a device (``/dev/zero``, ``/dev/stdin``) or a socket would
block or never end; a file far larger than any real house file, forecast or logger
export would exhaust memory. Both are refused with one line before anything is read.
The limits are generous bounds on real files, documented in the README:

- house file: 1 MB (a house file with every section and a long comment is ~5 kB);
- forecast CSV: 64 MB (16 days at 1-minute steps with every column is ~2 MB; a year
  of hourly history ~0.7 MB);
- logger CSV: 256 MB (a month of 1-second readings with four columns is ~100 MB).
"""

from __future__ import annotations

import contextlib
import gc
import os
import stat
from pathlib import Path

from grower.errors import InputError

#: the installed package's directory: the shipped tables (data/) and crops (_crops/) are
#: plain files beside the modules (a path, not importlib.resources, whose import costs
#: the start-up tens of milliseconds; grower is never run from a zip)
PACKAGE_DIR = Path(__file__).resolve().parent

HOUSE_FILE_MAX_BYTES = 1 << 20
FORECAST_FILE_MAX_BYTES = 64 << 20
LOGGER_FILE_MAX_BYTES = 256 << 20


def _size_text(n: int) -> str:
    return f"{n / (1 << 20):g} MB" if n >= 1 << 20 else f"{n / 1024:g} kB"


def check_regular(path: str | os.PathLike[str], where: str | None = None) -> os.stat_result:
    """`os.stat` of `path` (following links); InputError unless it is a regular file."""
    where = where or os.fspath(path)
    try:
        st = os.stat(path)
    except FileNotFoundError:
        raise InputError("no such file", where=where) from None
    except PermissionError:
        raise InputError("permission denied", where=where) from None
    except OSError as exc:
        raise InputError(f"cannot be read ({exc.strerror or exc})", where=where) from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError("is a folder, not a file", where=where)
    if not stat.S_ISREG(st.st_mode):
        kind = (
            "a named pipe (FIFO)"
            if stat.S_ISFIFO(st.st_mode)
            else "a device"
            if stat.S_ISCHR(st.st_mode) or stat.S_ISBLK(st.st_mode)
            else "a socket"
            if stat.S_ISSOCK(st.st_mode)
            else "not a regular file"
        )
        raise InputError(f"is {kind}, not a regular file; give a file saved on disk", where=where)
    return st


def read_bytes(path: str | os.PathLike[str], limit: int, where: str | None = None) -> bytes:
    """The whole of a regular file of at most `limit` bytes (InputError otherwise)."""
    where = where or os.fspath(path)
    st = check_regular(path, where)
    if st.st_size > limit:
        raise InputError(
            f"is {_size_text(st.st_size)}, larger than the {_size_text(limit)} this input may be",
            where=where,
        )
    try:
        with open(path, "rb") as handle:
            data = handle.read(limit + 1)
    except PermissionError:
        raise InputError("permission denied", where=where) from None
    except IsADirectoryError:
        raise InputError("is a folder, not a file", where=where) from None
    except OSError as exc:
        raise InputError(f"cannot be read ({exc.strerror or exc})", where=where) from None
    if len(data) > limit:  # grew while we looked
        raise InputError(f"is larger than the {_size_text(limit)} this input may be", where=where)
    return data


def read_text(
    path: str | os.PathLike[str], limit: int, where: str | None = None, *, what: str = "text"
) -> str:
    """A bounded regular file decoded as UTF-8 (a leading byte-order mark is dropped).

    Line endings are kept as they are (CRLF stays CRLF).
    """
    where = where or os.fspath(path)
    data = read_bytes(path, limit, where)
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(f"not a {what} file (UTF-8 expected)", where=where) from None


@contextlib.contextmanager
def no_gc():
    """Pause the cyclic garbage collector while a reader builds millions of small rows.

    Lists of cells hold no reference cycles, but each allocation counts towards the
    collector's thresholds, and its repeated full passes over the growing row list make
    a long file's read grow faster than its length. Reference counting still frees
    everything as usual.
    """
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()
