"""How much propane vapour a container can give, by its size, fill and the outside air.

A propane cylinder or tank boils liquid into vapour with heat that flows in from the
outside air through the wall the liquid wets. The colder the air and the emptier the
container, the less vapour it can give: a small or nearly empty container on a cold
night can starve a heater whose fuel, on paper, lasts a week.

The numbers are the propane trade's (``grower/data/vaporisation.toml``):

- a 100-lb cylinder: the printed table of maximum continuous draw by pounds of propane
  in it and temperature (0–70 °F), interpolated linearly in both;
- an ASME tank: the rule ``D × L × K`` [Btu/h] at 0 °F, D the outside diameter and L
  the overall length [in], K by the percent of the tank filled (10–60 %);
- other temperatures for a tank, and other upright cylinders: scaled from the 100-lb
  table — by its temperature dependence (the same air-
  to-liquid heat flow through the wetted wall drives both; for a tank, whose K already
  carries the fill, that of the half-full row), and for a cylinder of
  another size by its wetted wall, diameter × height (common practice, no source);
- below the table's coldest column (0 °F, −17.8 °C) the table is extended with the slope
  of its 0–20 °F columns, which reaches zero near −43 °F, close to propane's boiling
  point at atmospheric pressure (−44 °F, printed with the same table): no pressure is
  left there to push vapour through a regulator. Such values are marked extrapolated.

Manifolded containers add their vapour: the same source sizes a bank of 100-lb
cylinders as the load divided by one cylinder's draw. Liquid-draw installations with a
vaporiser, natural gas and oil are outside this check (a vaporiser's own rating, the
utility's supply and an oil pump govern them).

References
----------
Kohler Power Systems, TP-6727 (10/11), installation manual, Appendix D "Gas Fuel System
Installation Planning": Figure 1 "Vaporization Rate, 100 lb. Propane Cylinders,
Approximate", and "Guide for ASME LP Gas Storage Containers" (D × L × K at 0 °F).
Flame Engineering, "Propane Information" (the same 100-lb table; boiling point −44 °F).
"""

from __future__ import annotations

import functools
import math
import tomllib
from dataclasses import dataclass
from typing import Any

import numpy as np

from grower.errors import InputError
from grower.units import W_PER_BTU_H, c_to_f

#: the gauge reading of a full tank [%]: the 80 % rule (see fuels.toml)
FULL_TANK_GAUGE_PCT = 80.0


@dataclass(frozen=True)
class ContainerSize:
    """A propane container's size, for its wetted wall [in]."""

    name: str
    kind: str  # "cylinder" | "tank"
    diameter_in: float
    length_in: float  # height of an upright cylinder, overall length of a tank
    basis: str


@dataclass(frozen=True)
class VapourTable:
    cylinder_lb: np.ndarray  # ascending pounds of propane in a 100-lb cylinder
    cylinder_f: np.ndarray  # ascending temperatures [°F]
    cylinder_btu_h: np.ndarray  # (pounds, temperatures) [Btu/h]
    cylinder_source: str
    tank_pct: np.ndarray  # ascending percent filled
    tank_k: np.ndarray
    tank_source: str
    sizes: dict[str, ContainerSize]


@dataclass(frozen=True)
class VapourSupply:
    """What the containers can give at one fill and one outside temperature."""

    container: str
    count: float
    share_full: float  # of a full fill, 0–1
    gauge_pct: float  # the percent a tank gauge reads (for cylinders: share of full × 100)
    outside_c: float
    per_container_w: float
    capacity_w: float  # all containers together
    method: str  # "table" | "scaled table" | "D × L × K"
    extrapolated: bool  # outside the printed range of the table
    source: str


@dataclass(frozen=True)
class VapourCheck:
    """The containers' vapour against the heaters' input on the coldest hour.

    ``applies`` False (with ``reason``) for natural gas, oil, liquid draw, unknown
    containers or no heater. ``short`` is True when the vapour falls below the input.
    """

    applies: bool
    reason: str | None
    supply: VapourSupply | None = None
    input_w: float | None = None
    short: bool = False
    count_needed: int | None = None  # containers of this kind, at this fill, for the input
    at: Any = None  # the time of the check (a datetime) or None for a design condition
    #: which fill is checked: "now" (the fill given), "then" (the fill left at the hour
    #: checked), "refill" (the refill level `refill_pct`: the fill left then is lower),
    #: or None (a design condition or the house file's fill)
    fill_basis: str | None = None
    #: the refill level checked at [%: a cylinder's share of full, a tank's gauge]
    refill_pct: float | None = None
    #: below this share of a full fill the containers fall short at the hour checked
    #: (None: not asked, or short already)
    short_below_share: float | None = None

    @property
    def vaporisation_w(self) -> float | None:
        return self.supply.capacity_w if self.supply else None


def _path() -> str:
    from grower.files import PACKAGE_DIR

    return str(PACKAGE_DIR / "data" / "vaporisation.toml")


@functools.lru_cache(maxsize=2)
def load_table(path: str | None = None) -> VapourTable:
    """Read and check the vapour table (the shipped one by default)."""
    where = path or _path()
    with open(where, "rb") as fh:
        doc = tomllib.load(fh)
    cyl, tank = doc["cylinder_100lb"], doc["tank_rule"]
    lb = np.asarray(cyl["propane_lb"], float)
    tf = np.asarray(cyl["temperature_f"], float)
    btu = np.asarray(cyl["btu_h"], float)
    if btu.shape != (lb.size, tf.size) or not cyl.get("source"):
        raise InputError("the 100-lb cylinder table is malformed or has no source", where=where)
    order = np.argsort(lb)
    lb, btu = lb[order], btu[order]
    if np.any(np.diff(btu, axis=0) < 0) or np.any(np.diff(btu, axis=1) < 0):
        raise InputError("the cylinder table must rise with pounds and temperature", where=where)
    pct = np.asarray(tank["percent_filled"], float)
    k = np.asarray(tank["k"], float)
    order = np.argsort(pct)
    pct, k = pct[order], k[order]
    if tank.get("temperature_f") != 0 or not tank.get("source") or np.any(np.diff(k) < 0):
        raise InputError("the tank rule is malformed or has no source", where=where)
    sizes = {}
    for name, t in doc.get("container", {}).items():
        kind = t.get("kind")
        long_key = "height_in" if kind == "cylinder" else "length_in"
        if kind not in ("cylinder", "tank") or "diameter_in" not in t or long_key not in t:
            raise InputError(f"container {name!r}: kind, diameter_in, {long_key}", where=where)
        basis = t["diameter_in"].get("source") or t["diameter_in"].get("basis")
        if not basis:
            raise InputError(f"container {name!r} has no basis", where=where)
        sizes[name] = ContainerSize(
            name, kind, float(t["diameter_in"]["value"]), float(t[long_key]["value"]), basis
        )
    return VapourTable(lb, tf, btu, cyl["source"], pct, k, tank["source"], sizes)


def cylinder_100lb_btu_h(propane_lb: float, temp_f: float) -> tuple[float, bool]:
    """Maximum continuous draw of one 100-lb cylinder [Btu/h], and whether extrapolated.

    Bilinear in the printed table; below 10 lb linear to zero at empty; above 70 °F the
    70 °F column; below 0 °F the 0–20 °F slope, not below zero (module docstring).
    """
    t = load_table()
    lb = float(np.clip(propane_lb, 0.0, t.cylinder_lb[-1]))
    # each temperature column at these pounds (linear to 0 at 0 lb below the first row)
    xs = np.concatenate([[0.0], t.cylinder_lb])
    col = np.array(
        [np.interp(lb, xs, np.concatenate([[0.0], t.cylinder_btu_h[:, j]])) for j in range(5)]
    )
    f = float(temp_f)
    extrapolated = f < t.cylinder_f[0] or f > t.cylinder_f[-1] or propane_lb < t.cylinder_lb[0]
    if f < t.cylinder_f[0]:
        slope = (col[1] - col[0]) / (t.cylinder_f[1] - t.cylinder_f[0])
        return max(0.0, float(col[0] + slope * (f - t.cylinder_f[0]))), extrapolated
    return float(np.interp(f, t.cylinder_f, col)), extrapolated


def temperature_factor(share_full: float, temp_f: float) -> float:
    """Vapour at `temp_f` ÷ vapour at 0 °F, from the 100-lb table at the same share full."""
    lb = 100.0 * float(np.clip(share_full, 0.0, 1.0))
    at0, _ = cylinder_100lb_btu_h(max(lb, 1e-6), 0.0)
    at, _ = cylinder_100lb_btu_h(max(lb, 1e-6), temp_f)
    return at / at0 if at0 > 0 else 0.0


def tank_k(percent_filled: float) -> tuple[float, bool]:
    """K of the D × L × K rule at a gauge reading [%]; (K, extrapolated).

    Above the printed 60 % the 60 % value (no higher K is printed: cautious); below 10 %
    linear to zero at empty.
    """
    t = load_table()
    p = float(percent_filled)
    xs = np.concatenate([[0.0], t.tank_pct])
    ks = np.concatenate([[0.0], t.tank_k])
    return float(np.interp(p, xs, ks)), not (t.tank_pct[0] <= p <= t.tank_pct[-1])


def tank_btu_h(diameter_in: float, length_in: float, percent_filled: float, temp_f: float):
    """Vapour capacity of one ASME tank [Btu/h]: D × L × K at 0 °F, scaled to `temp_f`."""
    k, ext = tank_k(percent_filled)
    # the temperature dependence of the 100-lb table's middle row (half full): the rule's
    # K already carries the fill, and one factor for every fill keeps the rule monotone
    factor = temperature_factor(0.5, temp_f)
    ext = ext or temp_f < 0.0 or temp_f > 70.0
    return diameter_in * length_in * k * factor, ext


def size_of(container_name: str) -> ContainerSize | None:
    return load_table().sizes.get(container_name)


def gauge_pct(container_name: str, share_full: float) -> float:
    """The reading a tank gauge shows at `share_full` of a full fill (cylinders: share × 100)."""
    size = size_of(container_name)
    if size is not None and size.kind == "tank":
        return share_full * FULL_TANK_GAUGE_PCT
    return share_full * 100.0


def supply(container_name: str, count: float, share_full: float, outside_c: float) -> VapourSupply:
    """Vapour all `count` containers give at `share_full` and `outside_c` [W]."""
    size = size_of(container_name)
    if size is None:
        raise ValueError(f"no size known for {container_name!r}")
    share = float(np.clip(share_full, 0.0, 1.0))
    temp_f = c_to_f(outside_c)
    t = load_table()
    if size.kind == "tank":
        btu, ext = tank_btu_h(size.diameter_in, size.length_in, share * FULL_TANK_GAUGE_PCT, temp_f)
        method, source = "D × L × K", t.tank_source
    else:
        btu, ext = cylinder_100lb_btu_h(100.0 * share, temp_f)
        ref = t.sizes["100-lb cylinder"]
        if size.name != ref.name:
            btu *= (size.diameter_in * size.length_in) / (ref.diameter_in * ref.length_in)
            method = "scaled table"
        else:
            method = "table"
        source = t.cylinder_source
    per = btu * W_PER_BTU_H
    return VapourSupply(
        container=size.name,
        count=float(count),
        share_full=share,
        gauge_pct=gauge_pct(size.name, share),
        outside_c=float(outside_c),
        per_container_w=per,
        capacity_w=per * count,
        method=method,
        extrapolated=bool(ext),
        source=source,
    )


def check(
    fuel_name: str,
    stock: Any,
    input_w: float | None,
    outside_c: float,
    share_full: float | None = None,
    *,
    withdrawal: str = "vapour",
    at: Any = None,
) -> VapourCheck:
    """Compare the containers' vapour with the heaters' input `input_w` [W].

    `stock` is a `grower.fuels.FuelStock` (its ``container`` and ``count`` say what holds
    the fuel); `share_full` the share of a full fill at the time checked (default the
    stock's own). Outside the check: fuels other than propane, liquid draw, containers
    of unknown size, no heater.
    """
    if fuel_name != "propane":
        return VapourCheck(
            False, f"vapour supply not checked: {fuel_name} is outside the propane vapour check"
        )
    if withdrawal == "liquid":
        return VapourCheck(
            False,
            "vapour supply not checked: a liquid-draw installation with a vaporiser is outside this check (the vaporiser's rating governs)",
        )
    if input_w is None or not input_w > 0:
        return VapourCheck(
            False, "vapour supply not checked: no installed heater input to compare it with"
        )
    container = getattr(stock, "container", None)
    if stock is None or container is None or size_of(container.name) is None:
        return VapourCheck(
            False,
            'vapour supply not checked: give the fuel on hand as its containers ("2 100-lb '
            'cylinders", "1 500-gal tank") and their fill',
        )
    share = stock.share_full if share_full is None else share_full
    sup = supply(container.name, stock.count, share, outside_c)
    per = sup.per_container_w
    need = math.ceil(input_w / per - 1e-9) if per > 0 else None
    return VapourCheck(True, None, sup, float(input_w), sup.capacity_w < input_w, need, at)


def short_below(container_name: str, count: float, outside_c: float, input_w: float) -> float:
    """The share of a full fill [0–1] below which `count` containers give less vapour
    than `input_w` [W] at `outside_c` (1.0: short even full). The vapour rises with the
    fill (the tables rise with pounds and gauge), so a bisection finds it."""
    if supply(container_name, count, 1.0, outside_c).capacity_w < input_w:
        return 1.0
    lo, hi = 0.0, 1.0
    for _ in range(40):
        mid = 0.5 * (lo + hi)
        if supply(container_name, count, mid, outside_c).capacity_w < input_w:
            lo = mid
        else:
            hi = mid
    return hi


def house_check(
    house: Any,
    source: Any,
    outside_c: float,
    *,
    burned_j: float = 0.0,
    at: Any = None,
    design_fill_pct: float | None = None,
) -> VapourCheck:
    """The vapour check for a house's own ``[stock]`` (tonight and size).

    `source` is the `grower.fuels.HeatSource` the plan uses; `burned_j` the fuel energy
    burned before the hour checked [J] (it lowers the fill). `design_fill_pct`, for a
    design condition (`size`), is the fill assumed (read like ``--fill``) when
    ``[stock] fill`` is not given.
    """
    from grower import fuels

    stock_t = getattr(house, "stock", None) or {}
    withdrawal = str(stock_t.get("withdrawal", "vapour"))
    text = fuels.house_on_hand(house, source.fuel)  # the stock only if it holds this fuel
    where = f"{getattr(house, 'path', 'house')}: stock"
    stock = None
    if text:
        stock = fuels.parse_amount(text, source.fuel, where=f"{where}.on_hand")
        fill = stock_t.get("fill")
        if fill is not None:
            stock = fuels.with_fill(
                stock, source.fuel, fuels.parse_fill(fill, f"{where}.fill"), f"{where}.fill"
            )
        elif design_fill_pct is not None and stock.container is not None:
            stock = fuels.with_fill(stock, source.fuel, design_fill_pct, f"{where}.fill")
    share = None
    if stock is not None and stock.energy_j > 0:
        share = stock.share_full * max(0.0, 1.0 - burned_j / stock.energy_j)
    return check(
        source.fuel.name, stock, source.input_w, outside_c, share, withdrawal=withdrawal, at=at
    )
