"""The house file's ``[calibration]`` table: what a fit stores, and writing it in place.

`grower.plans.model.build` reads ``k_w_per_k`` and ``c_j_per_k`` (and, for the two-node
model, ``coupling_scale``) and uses them in place of the geometry's K and C; the other
keys say where the numbers came from. Writing keeps every comment and every other key
of the file (a tomlkit round trip: only the ``[calibration]`` table changes), checks
that the result is still a valid house file, keeps the previous file as
``HOUSE.toml.bak`` (``.bak1``, ``.bak2``… when that exists) and replaces the file
atomically (a temporary file in the same folder, then `os.replace`), so a failure at
any point leaves the original file whole.
"""

from __future__ import annotations

import os
import shutil
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
    while candidate.exists():
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

    Raises
    ------
    InputError
        The file is not valid TOML, or would not be a valid house file afterwards.
    OSError
        The folder is not writable; the original file is then untouched.
    """
    from grower import house

    path = Path(path)
    where = str(path)
    try:
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise InputError("not a text file (UTF-8 expected)", where=where) from None
    new = updated_text(text, calibration_values(result), where)
    house.from_mapping(tomllib.loads(new), source=where)  # still a valid house file
    backup = _backup_path(path)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as handle:
            handle.write(new)
            handle.flush()
            os.fsync(handle.fileno())
        shutil.copymode(path, tmp)
        shutil.copy2(path, backup)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    return backup
