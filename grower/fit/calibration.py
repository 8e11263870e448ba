"""The house file's ``[calibration]`` table: what a fit stores, and writing it in place.

`grower.plans.model.build` reads ``k_w_per_k`` and ``c_j_per_k`` (and, for the two-node
model, ``coupling_scale``) and uses them in place of the geometry's K and C; the other
keys say where the numbers came from. Writing keeps every comment and every other key
of the file (a tomlkit round trip: only the ``[calibration]`` table changes), checks
that the result is still a valid house file, keeps the previous file as
``HOUSE.toml.bak`` (``.bak1``, ``.bak2``… when that exists) and replaces the file
atomically (a temporary file in the same folder, then `os.replace`), so a failure at
any point leaves the original file whole. A symbolic link is written through, hard
links are kept, CRLF line endings and a byte-order mark are kept, and a read-only file
is refused (see `write_calibration`).
"""

from __future__ import annotations

import os
import shutil
import stat
import tempfile
import tomllib
from pathlib import Path
from typing import Any

from grower.errors import InputError
from grower.fit.plan import FitResult

#: every key `grower fit` writes (a refit removes the ones it no longer has)
KEYS = (
    "model",
    "anchor",
    "k_w_per_k",
    "k_w_per_k_ci95",
    "c_j_per_k",
    "c_j_per_k_ci95",
    "time_constant_h",
    "coupling_scale",
    "coupling_w_per_k",
    "coupling_w_per_k_ci95",
    "heater_output_w",
    "heater_output_w_ci95",
    "sun_factor",
    "sun_factor_ci95",
    "rms_k",
    "n_samples",
    "record",
    "record_start",
    "record_end",
    "fit_date",
)
_HEADER_COMMENTS = (
    "written by `grower fit` from a logger record: tonight and stock use K and C from here",
    "(--no-calibration ignores it); delete this table to go back to the geometry's values",
)


def _sig(value: float, digits: int = 5) -> float:
    return float(f"{value:.{digits}g}")


def calibration_values(result: FitResult) -> dict[str, Any]:
    """The ``[calibration]`` keys for `result`, in the order they are written."""
    fit = result.chosen
    out: dict[str, Any] = {"model": fit.model, "anchor": result.anchor}
    for p in fit.parameters:
        if p.name == "time_constant_h":
            out["time_constant_h"] = _sig(p.value, 4)
            continue
        if p.name == "heater_output_w" and p.status == "anchor":
            continue  # the house file's own rating: nothing new
        if p.name == "coupling_w_per_k":
            out["coupling_scale"] = _sig(fit.scales["coupling_scale"])
        out[p.name] = _sig(p.value)
        if p.status != "anchor":
            out[f"{p.name}_ci95"] = _sig(p.half_width, 3)
    out["rms_k"] = _sig(fit.rms_k, 3)
    out["n_samples"] = int(result.n_samples)
    out["record"] = os.path.basename(result.record_path)
    out["record_start"] = result.record_start.replace(microsecond=0)
    out["record_end"] = result.record_end.replace(microsecond=0)
    out["fit_date"] = result.fit_date
    return out


def _backup_path(path: Path) -> Path:
    candidate = path.with_name(path.name + ".bak")
    n = 1
    while candidate.exists() or candidate.is_symlink():
        candidate = path.with_name(f"{path.name}.bak{n}")
        n += 1
    return candidate


def updated_text(text: str, values: dict[str, Any], where: str) -> str:
    """The house file's text with its ``[calibration]`` table set to `values`."""
    import tomlkit
    from tomlkit.exceptions import TOMLKitError

    try:
        doc = tomlkit.parse(text)
    except TOMLKitError as exc:
        raise InputError(f"TOML syntax error: {exc}", where=where) from None
    table = doc.get("calibration")
    if table is None:
        table = tomlkit.table()
        for line in _HEADER_COMMENTS:
            table.add(tomlkit.comment(line))
        if text and not text.endswith("\n"):
            doc.add(tomlkit.nl())
        doc["calibration"] = table
    elif not isinstance(table, dict):
        raise InputError("[calibration] must be a table", where=where)
    for key in KEYS:
        if key in table and key not in values:
            del table[key]
    for key, value in values.items():
        table[key] = value  # an existing key keeps its place
    return tomlkit.dumps(doc)


def write_calibration(path: str | os.PathLike[str], result: FitResult) -> Path:
    """Store `result` in the house file's ``[calibration]``; returns the backup's path.

    The file the name points to is the one changed: a symbolic link is followed and
    the link kept; a file with several hard links is rewritten in place, so every name
    sees the new text. Line endings (CRLF or LF) and a UTF-8 byte-order mark are kept.
    The backup (``HOUSE.toml.bak``, else ``.bak1``, ``.bak2``…) is written to a
    temporary name and renamed, so a full disk leaves no empty backup; the new text
    is written the same way and renamed over the file (or, for a hard-linked file,
    written in place after the backup is safe, and put back if that write fails).

    Raises
    ------
    InputError
        The file is not valid TOML, would not be a valid house file afterwards, or is
        read-only (it is not replaced behind the owner's back).
    OSError
        The folder is not writable or the disk is full; the original file is then
        untouched and no partial backup or temporary file is left.
    """
    from grower import files, house

    where = os.fspath(path)
    target = Path(os.path.realpath(path))  # through a symbolic link, to the file itself
    st = files.check_regular(target, where)
    raw = files.read_bytes(target, files.HOUSE_FILE_MAX_BYTES, where)
    bom = raw.startswith(b"\xef\xbb\xbf")
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError("not a text file (UTF-8 expected)", where=where) from None
    crlf = "\r\n" in text
    new = updated_text(text.replace("\r\n", "\n"), calibration_values(result), where)
    house.from_mapping(tomllib.loads(new), source=where)  # still a valid house file
    if crlf:
        new = new.replace("\r\n", "\n").replace("\n", "\r\n")
    data = (b"\xef\xbb\xbf" if bom else b"") + new.encode("utf-8")
    if not os.access(target, os.W_OK) or not st.st_mode & stat.S_IWUSR:
        raise InputError(
            "is read-only: not changed (make it writable, e.g. chmod u+w, to store the fit)",
            where=where,
        )
    backup = _backup_path(target)
    _write_new(backup, raw, target)
    if st.st_nlink > 1:
        _write_in_place(target, data, raw)
    else:
        _replace(target, data)
    return backup


def _write_new(dest: Path, data: bytes, like: Path) -> None:
    """Write `data` to a new file `dest` through a temporary name (mode of `like`)."""
    fd, tmp = tempfile.mkstemp(dir=dest.parent, prefix=f".{dest.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        shutil.copystat(like, tmp)
        os.replace(tmp, dest)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise


def _replace(target: Path, data: bytes) -> None:
    """Atomically replace `target` with `data` (a temporary file, then a rename)."""
    fd, tmp = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        shutil.copymode(target, tmp)
        os.replace(tmp, target)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise


def _write_in_place(target: Path, data: bytes, original: bytes) -> None:
    """Rewrite a hard-linked file in place; on failure put the original bytes back."""
    with open(target, "r+b") as handle:
        try:
            handle.seek(0)
            handle.write(data)
            handle.truncate()
            handle.flush()
            os.fsync(handle.fileno())
        except BaseException:
            handle.seek(0)
            handle.write(original)
            handle.truncate()
            handle.flush()
            raise
