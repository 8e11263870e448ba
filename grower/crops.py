"""Crops and their critical temperatures: loading, lookup and the alarm threshold.

Crops are data: one TOML file per crop (format in ``crops/README.md``). The shipped files
are read first, then the user's own from ``<user config dir>/crops`` and from a directory
given with ``--crops-dir``; a user file whose ``name`` matches an earlier crop replaces it
and records which file it overrode. Every temperature is stored in the unit its source
printed and converted to °C when a file is parsed (`grower.cropfile.parse_crop`); every
value carries its basis. `load_crop` looks up one crop and parses only its shipped file.

The alarm threshold for a stage is its damage temperature plus a safety margin
(`DEFAULT_MARGIN_K`, common practice, no source), unless the grower sets one. Chilling is
a separate, milder warning above freezing.

References
----------
Penn State Extension, "Orchard Frost – Critical Temperatures for Various Fruits" (after
Washington State University EB0419). OMAFRA, "Irrigation for frost protection of
strawberries". UF/IFAS FAWN, "Critical temperature selection guide – vegetables". UMass
Extension Greenhouse Update, 19 March 2021. Each crop file names the sources of its own
values.
"""

from __future__ import annotations

import functools
import math
import re
from collections.abc import Iterable
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Literal

import platformdirs

import grower
from grower.errors import InputError, did_you_mean

#: safety margin added to the damage temperature [K] — common practice, no source
DEFAULT_MARGIN_K = 1.0
MARGIN_BASIS = "common practice, no source"

#: threshold kinds, warm to cold; rank = position in the required ordering
KINDS = ("chill", "damage", "severe", "kill_10", "kill", "kill_90")
RANK = {"chill": 0, "damage": 1, "severe": 2, "kill_10": 2, "kill": 3, "kill_90": 3}
LABELS = {
    "chill": "chilling",
    "damage": "damage",
    "severe": "severe damage",
    "kill_10": "10 % kill",
    "kill": "kill",
    "kill_90": "90 % kill",
}
BASES = ("common practice", "from memory")

Origin = Literal["shipped", "user"]


@dataclass(frozen=True)
class Threshold:
    """One critical temperature of a stage, with its basis.

    ``value_c`` [°C] is what grower computes with; ``printed_value`` and ``printed_unit``
    are what the source printed. ``basis`` is ``"source"``, ``"common practice"`` or
    ``"from memory"``; ``basis_text`` names the publication, or repeats the basis.
    ``hours`` [h] is the exposure the figure refers to, where the source gives one.
    """

    kind: str
    value_c: float
    printed_value: float
    printed_unit: str
    basis: str
    basis_text: str
    hours: float | None = None
    note: str = ""

    @property
    def label(self) -> str:
        return LABELS[self.kind]


@dataclass(frozen=True)
class Stage:
    """A growth stage and its thresholds (``damage`` always present)."""

    name: str
    damage: Threshold
    aliases: tuple[str, ...] = ()
    note: str = ""
    chill: Threshold | None = None
    severe: Threshold | None = None
    kill_10: Threshold | None = None
    kill: Threshold | None = None
    kill_90: Threshold | None = None

    @property
    def lethal(self) -> Threshold | None:
        """The kill temperature: ``kill``, else the 90 % kill of a bud stage."""
        return self.kill or self.kill_90

    def thresholds(self) -> tuple[Threshold, ...]:
        """Every threshold given for the stage, warm to cold (damage once)."""
        found = [getattr(self, kind) for kind in KINDS]
        if self.kill_10 is not None and self.damage.value_c == self.kill_10.value_c:
            found[KINDS.index("damage")] = None  # damage *is* the 10 % kill
        return tuple(t for t in found if t is not None)


@dataclass(frozen=True)
class Crop:
    """A crop: its names, stages and where its file came from."""

    name: str
    stages: tuple[Stage, ...]
    default_stage: str
    aliases: tuple[str, ...] = ()
    group: str = ""
    note: str = ""
    path: str = ""
    origin: Origin = "shipped"
    overrides: str | None = None  # the file this one replaced

    def stage(self, name: str | None = None) -> Stage:
        """The named stage (forgiving case, plurals, aliases), or the default one."""
        wanted = self.default_stage if name is None or not name.strip() else name
        key = lookup_key(wanted)
        for stage in self.stages:
            if key in {lookup_key(n) for n in (stage.name, *stage.aliases)}:
                return stage
        names = [s.name for s in self.stages]
        raise InputError(
            f'{self.name} has no stage "{wanted}"{did_you_mean(wanted, names)}; '
            f"stages: {', '.join(names)}",
            where="crop",
        )

    def damage_range_c(self) -> tuple[float, float]:
        """Coldest and warmest damage temperature over the stages [°C]."""
        values = [s.damage.value_c for s in self.stages]
        return min(values), max(values)


@dataclass(frozen=True)
class ThresholdChoice:
    """The temperatures a plan watches for one stage [°C; margin in K]."""

    stage: str
    alarm_c: float
    damage_c: float
    margin_k: float
    chill_c: float | None
    chill_hours: float | None
    severe_c: float | None
    kill_c: float | None
    kill_label: str | None
    basis: str
    margin_basis: str
    overridden: bool

    @property
    def alarm_below_damage(self) -> bool:
        """True when a grower's own threshold is colder than the damage temperature."""
        return self.alarm_c < self.damage_c


@dataclass(frozen=True)
class CropBook:
    """All crops in force, with forgiving lookup by name, alias or plural."""

    crops: tuple[Crop, ...]

    @functools.cached_property
    def index(self) -> dict[str, Crop]:
        """Every crop by its lookup key (name, aliases, plural); built once, on first use
        (an alias two crops share is an `InputError` then)."""
        return _build_index(self.crops)

    def get(self, name: str) -> Crop | None:
        """The crop called `name` (or an alias, any case, plural), else None."""
        return self.index.get(lookup_key(name))

    def find(self, name: str) -> Crop:
        """Like `get`, but an unknown name is an `InputError` with a suggestion."""
        crop = self.get(name)
        if crop is None:
            names = [c.name for c in self.crops] + [a for c in self.crops for a in c.aliases]
            hint = did_you_mean(name.strip().lower(), [n.lower() for n in names])
            raise InputError(
                f'unknown crop "{name}"{hint}; `grower crops` lists them', where="crop"
            )
        return crop

    def resolve(self, spec: str) -> tuple[Crop, Stage]:
        """``"tomato:flowering"`` or ``"tomato"`` (default stage) → (crop, stage)."""
        name, _, stage = spec.partition(":")
        crop = self.find(name)
        return crop, crop.stage(stage or None)

    def search(self, query: str) -> tuple[Crop, ...]:
        """Crops whose name, alias or group contains `query` (forgiving)."""
        key = lookup_key(query)
        return tuple(
            c
            for c in self.crops
            if any(key in lookup_key(n) for n in (c.name, *c.aliases, c.group) if n)
        )


# ---------------------------------------------------------------- names


def _singular(word: str) -> str:
    if len(word) > 4 and word.endswith("ies"):
        return word[:-3] + "y"
    if word.endswith(("oes", "ches", "shes", "xes", "sses")):
        return word[:-2]
    if word.endswith("s") and not word.endswith(("ss", "us", "is")) and len(word) > 3:
        return word[:-1]
    return word


def lookup_key(text: str) -> str:
    """Lookup key: lower case, no separators, last word singular."""
    words = re.sub(r"[\s_\-./]+", " ", text.strip().lower()).split()
    if words:
        words[-1] = _singular(words[-1])
    return "".join(words)


def _build_index(crops: Iterable[Crop]) -> dict[str, Crop]:
    index: dict[str, Crop] = {}
    for crop in crops:
        for name in (crop.name, *crop.aliases):
            other = index.get(lookup_key(name))
            if other is not None and other is not crop:
                raise InputError(
                    f'"{name}" names both "{other.name}" ({other.path}) and "{crop.name}"; '
                    "rename one or drop the alias",
                    where=crop.path,
                )
            index[lookup_key(name)] = crop
    return index


# ---------------------------------------------------------------- directories


def shipped_crops_dir() -> Path:
    """Where the shipped crop files are: in the wheel, else the source checkout."""
    from grower.files import PACKAGE_DIR

    packaged = PACKAGE_DIR / "_crops"
    if packaged.is_dir():
        return packaged
    return Path(grower.__file__).resolve().parent.parent / "crops"


def user_crops_dir() -> Path:
    """The user's own crop directory: ``<user config dir>/grower/crops``."""
    return Path(platformdirs.user_config_dir("grower")) / "crops"


def _read_dir(directory: Path, origin: Origin) -> list[Crop]:
    from grower.cropfile import parse_crop  # grower.cropfile builds this module's types

    crops: dict[str, Crop] = {}
    files = sorted(
        (f for f in directory.iterdir() if f.name.endswith(".toml") and f.is_file()),
        key=lambda f: f.name,
    )
    for file in files:
        where = str(file)
        try:
            text = file.read_bytes().decode("utf-8")
        except UnicodeDecodeError:
            raise InputError("not UTF-8 text", where=where) from None
        crop = parse_crop(text, where, origin=origin)
        key = lookup_key(crop.name)
        if key in crops:
            raise InputError(
                f'crop "{crop.name}" is also defined in {crops[key].path}', where=where
            )
        crops[key] = crop
    return list(crops.values())


@functools.lru_cache(maxsize=4)
def _shipped(directory: str) -> tuple[Crop, ...]:
    root = shipped_crops_dir()
    if not root.is_dir():
        raise InputError(f"the shipped crop files are missing ({directory}); reinstall grower")
    return tuple(_read_dir(root, "shipped"))


def _layers(
    crops_dir: str | Path | None, user_dir: str | Path | None | bool
) -> list[tuple[Path, bool]]:
    """The user's crop directories in the order they apply, each with "must exist"."""
    layers: list[tuple[Path, bool]] = []
    if user_dir is True:
        layers.append((user_crops_dir(), False))
    elif user_dir:
        layers.append((Path(user_dir), False))
    if crops_dir is not None:
        layers.append((Path(crops_dir), True))
    return layers


def load_crops(
    crops_dir: str | Path | None = None, *, user_dir: str | Path | None | bool = True
) -> CropBook:
    """Load the shipped crops, then the user's (config dir, then `crops_dir`).

    Parameters
    ----------
    crops_dir : path, optional
        A directory of the grower's own crop files (``--crops-dir``); must exist.
    user_dir : path, True or None
        The user configuration crop directory; True means `user_crops_dir()`, None or
        False skips it. A missing user directory is skipped silently.

    Returns
    -------
    CropBook
        All crops, a later file replacing an earlier crop of the same name (its
        ``overrides`` names the file it replaced).
    """
    merged: dict[str, Crop] = {lookup_key(c.name): c for c in _shipped(str(shipped_crops_dir()))}
    for directory, required in _layers(crops_dir, user_dir):
        if not directory.exists():
            if required:
                raise InputError(f'"{directory}": no such directory', where="--crops-dir")
            continue
        if not directory.is_dir():
            raise InputError(f'"{directory}" is not a directory', where="crops directory")
        for crop in _read_dir(directory, "user"):
            key = lookup_key(crop.name)
            if key in merged:
                crop = replace(crop, overrides=merged[key].path)
            merged[key] = crop
    book = CropBook(tuple(sorted(merged.values(), key=lambda c: c.name)))
    _ = book.index  # alias clashes are reported at load time
    return book


def _raw_names(text: str) -> tuple[str, ...] | None:
    """The name and aliases a crop file declares, read from its top-level keys (before the
    first table) without parsing or validating the rest (None when that part is not TOML
    of the expected shape; the full parse says why)."""
    import tomllib

    head = re.split(r"^\s*\[", text, maxsplit=1, flags=re.MULTILINE)[0]  # top-level keys only
    try:
        doc = tomllib.loads(head)
    except tomllib.TOMLDecodeError:
        return None
    name, aliases = doc.get("name"), doc.get("aliases", [])
    if not isinstance(name, str) or not isinstance(aliases, list):
        return None
    if not all(isinstance(a, str) for a in aliases):
        return None
    return (name, *aliases)


def load_crop(
    spec: str, crops_dir: str | Path | None = None, *, user_dir: str | Path | None | bool = True
) -> tuple[Crop, Stage]:
    """``"crop:stage"`` → (crop, stage), as ``load_crops(crops_dir, user_dir=...).resolve``
    gives it, parsing only the one shipped file that names the crop.

    The user's own files are read and checked in full, as `load_crops` does (they are few
    and written by hand); the shipped ones are only scanned for their names. Anything
    unusual (an unknown name, a shipped file that does not scan) falls back to
    `load_crops`, so the errors and suggestions are the same.
    """
    from grower.cropfile import parse_crop  # grower.cropfile builds this module's types

    name = spec.partition(":")[0]
    key = lookup_key(name)
    root = shipped_crops_dir()
    shipped = None
    if root.is_dir():
        for file in sorted(root.iterdir(), key=lambda f: f.name):
            if not (file.name.endswith(".toml") and file.is_file()):
                continue
            names = _raw_names(file.read_bytes().decode("utf-8", errors="replace"))
            if names is None:
                return load_crops(crops_dir, user_dir=user_dir).resolve(spec)
            if key in {lookup_key(n) for n in names}:
                shipped = file
                break
    if shipped is None or any(d.exists() or req for d, req in _layers(crops_dir, user_dir)):
        return load_crops(crops_dir, user_dir=user_dir).resolve(spec)
    crop = parse_crop(shipped.read_bytes().decode("utf-8"), str(shipped), origin="shipped")
    return crop, crop.stage(spec.partition(":")[2] or None)


def find_crop(name: str, book: CropBook | None = None) -> Crop:
    """The crop called `name` (case, plurals, aliases forgiven); `InputError` if none."""
    return (book or load_crops()).find(name)


def resolve(spec: str, book: CropBook | None = None) -> tuple[Crop, Stage]:
    """``"crop:stage"`` or ``"crop"`` → (crop, stage), the default stage if none given."""
    return (book or load_crops()).resolve(spec)


# ---------------------------------------------------------------- the threshold


def select_threshold(
    stage: Stage, margin_k: float = DEFAULT_MARGIN_K, override_c: float | None = None
) -> ThresholdChoice:
    """Choose the alarm temperature for a stage.

    Parameters
    ----------
    stage : Stage
    margin_k : float
        Safety margin added to the damage temperature [K]; default `DEFAULT_MARGIN_K`
        (common practice, no source). Must be ≥ 0.
    override_c : float, optional
        The grower's own alarm temperature [°C] (``--threshold``); no margin is added.

    Returns
    -------
    ThresholdChoice
        Alarm, damage, chilling (with its duration where published), severe and kill
        temperatures [°C].
    """
    if not math.isfinite(margin_k) or margin_k < 0:
        raise ValueError(f"margin_k must be a finite number ≥ 0 [K], got {margin_k!r}")
    if override_c is not None and not math.isfinite(override_c):
        raise ValueError(f"override_c must be finite [°C], got {override_c!r}")
    damage = stage.damage
    lethal = stage.lethal
    overridden = override_c is not None
    return ThresholdChoice(
        stage=stage.name,
        alarm_c=float(override_c) if overridden else damage.value_c + margin_k,
        damage_c=damage.value_c,
        margin_k=0.0 if overridden else float(margin_k),
        chill_c=stage.chill.value_c if stage.chill else None,
        chill_hours=stage.chill.hours if stage.chill else None,
        severe_c=stage.severe.value_c if stage.severe else None,
        kill_c=lethal.value_c if lethal else None,
        kill_label=lethal.label if lethal else None,
        basis=damage.basis_text,
        margin_basis="set by the grower" if overridden else MARGIN_BASIS,
        overridden=overridden,
    )
