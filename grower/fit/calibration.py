"""The house file's ``[calibration]`` table: what a fit stores, and writing it in place.

Format 2 (``format = 2``) stores the fitted conductances themselves: from the inside air
to the outside air (``k_outside_w_per_k``) and the sky part (``k_sky_w_per_k``), with C,
each with its 95 % half-width, beside the geometry's values at the record's conditions
(``geometry_*``, at the record's wind ``record_wind_m_s``), and the record's span and
residual against the sensor's noise. `grower.plans.model.build` scales the geometry at a
run's own conditions by fitted/geometry, part by part (`grower.plans.model.Calibration`);
an older table (no ``format``: one factor on every conductance) is not used. Writing keeps every comment and every other key
of the file (a tomlkit round trip: only the ``[calibration]`` table changes), checks
that the result is still a valid house file, keeps the previous file as
``HOUSE.toml.bak`` (``.bak1``, ``.bak2``… when that exists) and replaces the file
atomically (a temporary file in the same folder, then `os.replace`), so a failure at
any point leaves the original file whole. A symbolic link is written through, hard
links are kept, CRLF line endings and a byte-order mark are kept, and a read-only file
is refused (see `write_calibration`).
"""

from __future__ import annotations

import math
import os
import shutil
import stat
import tempfile
import tomllib
from pathlib import Path
from typing import Any

import numpy as np

from grower.errors import InputError
from grower.fit.plan import FitResult

#: the format `calibration_values` writes (`grower.plans.model.CALIBRATION_FORMAT` reads)
FORMAT = 2
#: every key `grower fit` writes, in order (a refit removes the ones it no longer has)
KEYS = (
    "format",
    "model",
    "anchor",
    "quality",
    "k_outside_w_per_k",
    "k_outside_w_per_k_ci95",
    "k_sky_w_per_k",
    "k_sky_w_per_k_ci95",
    "k_sky_by_night_w_per_k",
    "k_ground_w_per_k",
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
    "geometry_k_outside_w_per_k",
    "geometry_k_sky_w_per_k",
    "geometry_c_j_per_k",
    "geometry_k_ground_w_per_k",
    "record_wind_m_s",
    "record_mean_outside_c",
    "rms_k",
    "noise_k",
    "n_samples",
    "record",
    "record_start",
    "record_end",
    "record_hours",
    "fit_date",
)
_HEADER_COMMENTS = (
    "format 2, written by `grower fit --write` from a logger record. k_outside_w_per_k:",
    "the fitted conductance from the inside air to the outside air; k_sky_w_per_k: the",
    "fitted sky part (the extra loss per kelvin of clear sky below the air; by night, where",
    "the record has no cloud: the runs take the clearest); geometry_*: the geometry's",
    "values at the record's conditions (record_wind_m_s, record_mean_outside_c). tonight,",
    "stock and size scale the geometry by fitted/geometry at each night's own wind (size",
    "never below the geometry's figure); --no-calibration ignores this table; delete it",
    "to use the geometry",
)
#: header lines an older `grower fit` wrote, replaced by `_HEADER_COMMENTS` on a refit
_OLD_HEADER_COMMENTS = (
    "written by `grower fit` from a logger record: tonight and stock use K and C from here",
    "(--no-calibration ignores it); delete this table to go back to the geometry's values",
)


def _sig(value: float, digits: int = 5) -> float:
    return float(f"{value:.{digits}g}")


def _parts(result: FitResult) -> dict[str, tuple[float, float, float]]:
    """(value, 95 % half-width, the geometry's value) of K_out, K_sky, C and, for a lumped
    fit whose path to the deep ground was fitted apart, K_ground.

    The estimator reports the conduction to outside air and the sky part beside the
    geometry's at the record's conditions (`grower.fit.estimate`); the lumped model's
    ground path is what K leaves of them (K = K_out + K_sky + K_ground, for the fit and
    for the geometry alike).
    """
    fit = result.chosen
    got = {name: fit.get(name) for name in ("k_outside_w_per_k", "k_sky_w_per_k", "c_j_per_k")}
    missing = [name for name, p in got.items() if p is None]
    if missing:
        raise ValueError(f"the fit reports no {', '.join(missing)}: cannot store format 2")
    out = {name: (p.value, p.half_width, p.geometry) for name, p in got.items()}
    k = fit.get("k_w_per_k")
    if fit.model == "lumped" and k is not None and k.geometry:
        k_out, k_sky = got["k_outside_w_per_k"], got["k_sky_w_per_k"]
        ground_geo = k.geometry - k_out.geometry - k_sky.geometry
        if ground_geo > 1e-9 * k.geometry:
            out["k_ground_w_per_k"] = (k.value - k_out.value - k_sky.value, 0.0, ground_geo)
    return out


def calibration_values(result: FitResult) -> dict[str, Any]:
    """The ``[calibration]`` keys (format 2) for `result`, in the order they are written.

    The fitted conductances themselves (W/K, each with its 95 % half-width as ``_ci95``)
    beside the geometry's at the record's conditions, the record's span, wind and
    residual against the sensor's noise, and the fit's quality (``"rough"`` only when
    stored with ``--keep-rough``).
    """
    fit = result.chosen
    parts = _parts(result)
    out: dict[str, Any] = {
        "format": FORMAT,
        "model": fit.model,
        "anchor": result.anchor,
        "quality": result.quality,
    }
    for name in ("k_outside_w_per_k", "k_sky_w_per_k"):
        value, half, _ = parts[name]
        out[name] = _sig(value)
        out[f"{name}_ci95"] = _sig(half, 3)
    for p in fit.parameters:
        if p.name in ("k_outside_w_per_k", "k_sky_w_per_k"):
            continue
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
    nights = fit.sky_by_segment
    if nights:  # the sky fitted night by night: each night's, for the clearest
        geo_sky = parts["k_sky_w_per_k"][2]
        out["k_sky_by_night_w_per_k"] = [_sig(f * geo_sky) for f in nights]
    if "k_ground_w_per_k" in parts:
        out["k_ground_w_per_k"] = _sig(max(parts["k_ground_w_per_k"][0], 0.0))
    out["geometry_k_outside_w_per_k"] = _sig(parts["k_outside_w_per_k"][2])
    out["geometry_k_sky_w_per_k"] = _sig(parts["k_sky_w_per_k"][2])
    out["geometry_c_j_per_k"] = _sig(parts["c_j_per_k"][2])
    if "k_ground_w_per_k" in parts:
        out["geometry_k_ground_w_per_k"] = _sig(parts["k_ground_w_per_k"][2])
    out["record_wind_m_s"] = _sig(result.wind_m_s, 3)
    out["record_mean_outside_c"] = _sig(float(np.mean(result.outside_c)), 3)
    out["rms_k"] = _sig(fit.rms_k, 3)
    if math.isfinite(result.noise_k):
        out["noise_k"] = _sig(result.noise_k, 3)
    out["n_samples"] = int(result.n_samples)
    out["record"] = os.path.basename(result.record_path)
    out["record_start"] = result.record_start.replace(microsecond=0)
    out["record_end"] = result.record_end.replace(microsecond=0)
    hours = (result.record_end - result.record_start).total_seconds() / 3600.0
    out["record_hours"] = _sig(hours, 4)
    out["fit_date"] = result.fit_date
    return {key: out[key] for key in KEYS if key in out}


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
    else:
        renewed = _renewed_header(table)
        if renewed is not None:
            doc["calibration"] = table = renewed
    for key in KEYS:
        if key in table and key not in values:
            del table[key]
    for key, value in values.items():
        table[key] = value  # an existing key keeps its place
    return tomlkit.dumps(doc)


def _renewed_header(table):
    """The table with an older `grower fit`'s header comments replaced by this format's,
    or None when it has none (the grower's own comments and keys stay, in order)."""
    import tomlkit
    from tomlkit.container import Container
    from tomlkit.items import Comment, Table

    def old(key, item) -> bool:
        text = item.as_string().strip().lstrip("#").strip()
        return key is None and isinstance(item, Comment) and text in _OLD_HEADER_COMMENTS

    body = table.value.body
    if not any(old(k, i) for k, i in body):
        return None
    new = Table(Container(), table.trivia, table.is_super_table())
    done = False
    for key, item in body:
        if old(key, item):
            if not done:
                for line in _HEADER_COMMENTS:
                    new.add(tomlkit.comment(line))
                done = True
        elif key is None:
            new.add(item)
        else:
            new.add(key, item)
    return new


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
