"""How often `grower fit`'s stated 95 % intervals cover the truth, on synthetic records.

    python benchmarks/fit_coverage.py [--json] [--records N] [--jobs N] [--seed N]

Each record is made by `grower.fit.synthetic` (the true house's own equations integrated
with scipy's solve_ivp, not grower's solver; three nights of 10-minute rows, Gaussian
noise on the inside sensor) from a randomly drawn house:

- ``plain``: a first-order house with K to the outside air only (no sky, no ground),
  K 1,500–4,000 W/K, C 15–60 MJ/K;
- ``sky share``: the geometry's one-node house (random width, length, cover, air
  changes) with its conduction × 0.7–1.4, its sky part × a further 0.5–2 (log-uniform:
  physics the geometry does not assume) and its capacity × 0.6–1.5;
- ``cloudy``: as ``sky share``, with a cloud the record does not log taking 0–80 % of
  the clear sky's depression away, a different share each night;
- ``two-node``: the geometry's two-node house with its conduction × 0.8–1.3, the sky
  part × 0.5–2 more, the air–floor coupling × 0.8–1.3 more, every capacity × 0.7–1.3.

Half the records log the heater's power (steps of 15 kW or about three times the house's
K to the outside air in W per K), half its on/off state with the rating in the house
file; the records run three, four or five nights (the night-block interval needs four). The one-node records
are fitted with ``model="lumped"``, the two-node ones with the default ``"auto"`` (which
also fits the lumped model and picks by AIC). For each fitted record the script counts
whether the stated 95 % interval of K to the outside air and of C holds the truth;
refused records are counted apart (they state no interval). A share near 0.95 is the
target; the binomial 95 % range for the count is printed beside it (Wilson score
interval: E. B. Wilson (1927), "Probable inference, the law of succession, and
statistical inference", J. Amer. Statist. Assoc. 22(158):209-212).
"""

from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import json  # noqa: E402
import math  # noqa: E402
import tempfile  # noqa: E402
import time  # noqa: E402
from concurrent.futures import ProcessPoolExecutor  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

KINDS = ("plain", "sky share", "cloudy", "two-node")
COVERS = ("single-poly", "double-poly", "ir-double-poly")


def one_record(job: tuple[int, str, str, int, bool]) -> dict:
    """Make one record, fit it, and say whether the intervals cover the truth."""
    import importlib

    from grower import house
    from grower.errors import InputError
    from grower.fit import fit_house, synthetic
    from grower.logger import read_logger_csv

    seed, kind, heater, nights, night_blocks = job
    if not night_blocks:  # the AR(1) widening alone, for comparison
        importlib.import_module("grower.fit.estimate").MIN_BLOCKS = 10**6
    rng = np.random.default_rng(seed)
    noise = float(rng.uniform(0.05, 0.2))
    geo = dict(
        width=float(rng.uniform(6.0, 12.0)),
        length=float(rng.uniform(15.0, 45.0)),
        cover=str(rng.choice(COVERS)),
        ach=float(rng.uniform(0.5, 2.0)),
    )
    share = float(np.exp(rng.uniform(np.log(0.5), np.log(2.0))))
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        if kind == "plain":
            rec = synthetic.plain_house(
                folder,
                k_w_per_k=float(rng.uniform(1500.0, 4000.0)),
                c_j_per_k=float(rng.uniform(15e6, 60e6)),
                heater=heater,
                noise_k=noise,
                seed=seed,
                nights=nights,
            )
        elif kind in ("sky share", "cloudy"):
            cloud = None
            if kind == "cloudy":
                cloud = tuple(float(x) for x in rng.uniform(0.0, 0.8, nights))
            rec = synthetic.sky_share_house(
                folder,
                share,
                k_scale=float(rng.uniform(0.7, 1.4)),
                c_scale=float(rng.uniform(0.6, 1.5)),
                heater=heater,
                noise_k=noise,
                seed=seed,
                nights=nights,
                cloud=cloud,
                **geo,
            )
        else:
            rec = synthetic.two_node_house(
                folder,
                k_scale=float(rng.uniform(0.8, 1.3)),
                sky_share=share,
                c_scale=float(rng.uniform(0.7, 1.3)),
                coupling_scale=float(rng.uniform(0.8, 1.3)),
                heater=heater,
                noise_k=noise,
                seed=seed,
                nights=nights,
                **geo,
            )
        h = house.read(rec.house_path)
        log = read_logger_csv(rec.log_path, timezone=h.site.timezone)
        out = {"seed": seed, "kind": kind, "heater": heater, "nights": nights, "sky_share": share}
        try:
            r = fit_house(h, log, model="auto" if kind == "two-node" else "lumped")
        except InputError as exc:
            return {**out, "refused": str(exc)}
    f = r.chosen
    sky = "night" if f.sky_by_segment else "one" if "ks" in f.free_names else "held"
    out.update(refused=None, model=r.model, quality=r.quality, rms_to_noise=r.noise_ratio)
    out.update(sky=sky, ground_apart="kg" in f.free_names, variants=f.variants_spanned)
    for name in ("k_outside_w_per_k", "c_j_per_k"):
        p, truth = r.chosen.get(name), rec.truth[name]
        out[name] = {
            "value": p.value,
            "half_width": p.half_width,
            "truth": truth,
            "covered": bool(p.low <= truth <= p.high),
            "error": p.value / truth - 1.0,
        }
    return out


def wilson(k: int, n: int, z: float = 1.96) -> tuple[float, float]:
    """Wilson's score interval for k successes in n (Wilson 1927)."""
    if n == 0:
        return (float("nan"), float("nan"))
    p = k / n
    mid = (p + z * z / (2 * n)) / (1 + z * z / n)
    half = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / (1 + z * z / n)
    return (mid - half, mid + half)


def summarise(results: list[dict]) -> dict:
    groups: dict[str, list[dict]] = {"all": results}
    for kind in KINDS:
        groups[kind] = [r for r in results if r["kind"] == kind]
    for heater in ("power", "state"):
        groups[f"heater {heater}"] = [r for r in results if r["heater"] == heater]
    for nights in (3, 4, 5):
        groups[f"{nights} nights"] = [r for r in results if r["nights"] == nights]
    out = {}
    for name, rs in groups.items():
        fitted = [r for r in rs if r["refused"] is None]
        entry = {"records": len(rs), "fitted": len(fitted), "refused": len(rs) - len(fitted)}
        entry["rough"] = sum(r["quality"] == "rough" for r in fitted)
        for key in ("k_outside_w_per_k", "c_j_per_k"):
            k = sum(r[key]["covered"] for r in fitted)
            err = [abs(r[key]["error"]) for r in fitted]
            rel = [r[key]["half_width"] / r[key]["value"] for r in fitted]
            entry[key] = {
                "covered": k,
                "share": k / len(fitted) if fitted else None,
                "share_range_95": wilson(k, len(fitted)),
                "median_abs_error": float(np.median(err)) if err else None,
                "median_relative_half_width": float(np.median(rel)) if rel else None,
            }
        out[name] = entry
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--records", type=int, default=96, help="records in all (default 96)")
    ap.add_argument("--jobs", type=int, default=2, help="worker processes (default 2)")
    ap.add_argument("--seed", type=int, default=20261120, help="first seed")
    ap.add_argument("--json", action="store_true", help="one JSON document on stdout")
    ap.add_argument(
        "--ar1-only",
        action="store_true",
        help="leave out the night-block interval (the AR(1)-widened one alone)",
    )
    args = ap.parse_args()
    jobs = []
    for i in range(args.records):
        kind = KINDS[i % 4]
        heater = ("power", "state")[(i // 4) % 2]
        nights = 3 + (i // 8) % 3
        jobs.append((args.seed + i, kind, heater, nights, not args.ar1_only))
    t0 = time.perf_counter()
    with ProcessPoolExecutor(max_workers=args.jobs) as pool:
        results = list(pool.map(one_record, jobs))
    elapsed = time.perf_counter() - t0
    summary = summarise(results)
    if args.json:
        doc = {
            "seconds": elapsed,
            "night_blocks": not args.ar1_only,
            "summary": summary,
            "records": results,
        }
        print(json.dumps(doc, indent=2))
        return
    how = "AR(1) intervals alone" if args.ar1_only else "the wider of AR(1) and night blocks"
    print(f"{args.records} synthetic records, {elapsed:.0f} s on {args.jobs} worker(s); {how}")
    print(
        f"{'':16} {'fitted':>6} {'refused':>7} {'rough':>5}  "
        f"{'K_out covered':>22}  {'C covered':>22}  {'|err| K_out, C':>14}"
    )
    for name, e in summary.items():
        cells = []
        for key in ("k_outside_w_per_k", "c_j_per_k"):
            c = e[key]
            lo, hi = c["share_range_95"]
            share = "—" if c["share"] is None else f"{c['share']:.1%}"
            cells.append(f"{c['covered']:>3} = {share:>6} ({lo:.0%}–{hi:.0%})")
        err = "—"
        if e["fitted"]:
            err = (
                f"{e['k_outside_w_per_k']['median_abs_error']:.1%}, "
                f"{e['c_j_per_k']['median_abs_error']:.1%}"
            )
        print(
            f"{name:16} {e['fitted']:>6} {e['refused']:>7} {e['rough']:>5}  "
            f"{cells[0]:>22}  {cells[1]:>22}  {err:>14}"
        )
    refused = [r for r in results if r["refused"]]
    for r in refused[:5]:
        print(f"refused (seed {r['seed']}, {r['kind']}, {r['heater']}): {r['refused'][-120:]}")


if __name__ == "__main__":
    main()
