"""Rendering of `grower fit`: the fitted values beside the geometry's, the residual, the chart."""

from __future__ import annotations

import datetime as dt
from typing import Any

import numpy as np

from grower.fit import FitResult, ModelFit, Parameter, calibration_values
from grower.fit.estimate import CONFIDENCE
from grower.report import chart
from grower.report.common import NARROW, data_table, plain, say
from grower.report.quantities import capacity_text
from grower.units import (
    UnitSystem,
    note_text,
    show_conductance,
    show_power,
    show_temperature,
    show_temperature_difference,
)

INTERVAL_NOTE = (
    "95 % intervals are the linearised ones (covariance s²(JᵀJ)⁻¹ at the optimum, Student's "
    "t), widened for the residuals' lag-1 autocorrelation ρ by (1 + ρ)/(1 − ρ) on the "
    "effective sample size; from four nights on, the wider of that and the night-block "
    "(cluster-robust) interval with Student's t on nights − 1; and wide enough to hold the "
    "simpler fits the record cannot rule out (the geometry's sky share)"
)
NOISE_NOTE = (
    "sensor noise from the record's own scatter: 1.4826·MAD of the second differences of the "
    "inside temperature / √6 (white noise), leaving out rows where the heater switches"
)
#: what K is in the fit's report, for the fitted value and the geometry's alike
#: (`grower.fit.estimate`: the sum of the conductance columns)
K_DEFINITION = (
    "K here is the sum of the conductances to the outside air and to the sky (the floor's "
    "exchange with the sky counted in full), for the fit and the geometry alike, so their "
    "ratio compares like with like; `grower house` gives the steady K, with the floor's "
    "sky part reached through its coupling to the air, which is smaller"
)
#: a lag-1 autocorrelation of the residuals above this is called out (common practice, no
#: source)
HIGH_LAG1 = 0.5
SHORT = {
    "k_w_per_k": "K, conductance",
    "k_outside_w_per_k": "  of it to outside air",
    "k_sky_w_per_k": "  of it to the sky",
    "c_j_per_k": "C, heat capacity",
    "time_constant_h": "C/K",
    "coupling_w_per_k": "air–floor coupling",
    "heater_output_w": "heater output",
    "sun_factor": "sun gain factor",
}
#: the same on a narrow screen (the headline above says what K and C are)
NARROW_SHORT = {
    "k_w_per_k": "K",
    "k_outside_w_per_k": "  to the air",
    "k_sky_w_per_k": "  to the sky",
    "c_j_per_k": "C",
    "time_constant_h": "C/K",
    "coupling_w_per_k": "air–floor",
    "heater_output_w": "heater",
    "sun_factor": "sun factor",
}


def _iso(t: dt.datetime | None) -> str | None:
    return None if t is None else t.isoformat(timespec="seconds")


def _param_json(p: Parameter) -> dict[str, Any]:
    return {
        "name": p.name,
        "value": p.value,
        "unit": p.unit,
        "ci95_half_width": p.half_width,
        "ci95_low": p.low,
        "ci95_high": p.high,
        "geometry": p.geometry,
        "ratio_to_geometry": p.ratio,
        "status": p.status,
    }


def _model_json(f: ModelFit) -> dict[str, Any]:
    return {
        "model": f.model,
        "parameters": [_param_json(p) for p in f.parameters],
        "rms_k": f.rms_k,
        "aic": f.aic,
        "n_residuals": f.n_residuals,
        "n_free": f.n_free,
        "refusal": f.refusal,
    }


def fit_json(r: FitResult, written: dict[str, str] | None = None) -> dict[str, Any]:
    """The `grower fit --json` document (SI, ISO 8601 times with offset)."""
    f = r.chosen
    values = {p.name: p for p in f.parameters}
    cal = calibration_values(r)
    return {
        "house": r.house_name,
        "file": r.house_path,
        "record": r.record_path,
        "record_start": _iso(r.record_start),
        "record_end": _iso(r.record_end),
        "outside_source": r.outside_source,
        "attribution": r.attribution,
        "model": f.model,
        "model_choice": r.choice,
        "anchor": r.anchor,
        "anchor_note": r.anchor_note,
        "heater": r.heater,
        "with_days": r.with_days,
        "k_w_per_k": values["k_w_per_k"].value,
        "k_definition": K_DEFINITION,
        "k_outside_w_per_k": values["k_outside_w_per_k"].value,
        "k_sky_w_per_k": values["k_sky_w_per_k"].value,
        "sky_by_night": None if f.sky_by_segment is None else list(f.sky_by_segment),
        "c_j_per_k": values["c_j_per_k"].value,
        "time_constant_h": values["time_constant_h"].value,
        "parameters": [_param_json(p) for p in f.parameters],
        "ratios": {p.name: p.ratio for p in f.parameters if p.ratio is not None},
        "confidence": CONFIDENCE,
        "interval": INTERVAL_NOTE,
        "rms_k": f.rms_k,
        "noise_k": None if not np.isfinite(r.noise_k) else r.noise_k,
        "noise_method": NOISE_NOTE,
        "rms_to_noise": None if not np.isfinite(r.noise_k) else r.noise_ratio,
        "quality": r.quality,
        "residual_lag1": None if not np.isfinite(r.residual_lag1) else r.residual_lag1,
        "n_samples": r.n_samples,
        "n_record_rows": r.n_record_rows,
        "n_residuals": f.n_residuals,
        "n_free": f.n_free,
        "segments": [
            {
                "start": _iso(s.start),
                "end": _iso(s.end),
                "rows": s.n_rows,
                "first_line": s.first_line,
                "last_line": s.last_line,
                "heated": s.heated,
                "initial_air_c": s.initial_air_c,
                "initial_air_ci95_half_width": s.initial_air_half_width,
                "initial_mass_c": s.initial_mass_c,
                "initial_mass_ci95_half_width": s.initial_mass_half_width,
                "rms_k": s.rms_k,
            }
            for s in f.segments
        ],
        "other_model": None if r.other is None else _model_json(r.other),
        "notes": list(r.notes),
        "calibration": {
            k: (v.isoformat() if hasattr(v, "isoformat") else v) for k, v in cal.items()
        },
        "written": written,
        "series": [
            {
                "time": _iso(t),
                "inside_c": float(m),
                "fitted_c": float(y),
                "outside_c": float(o),
                "segment": int(s),
            }
            for t, m, y, o, s in zip(
                r.times, r.measured_c, r.fitted_c, r.outside_c, r.segment_of_row, strict=True
            )
        ],
    }


def _show(name: str, value: float, system: UnitSystem) -> str:
    """A parameter's value in display units."""
    if name in ("k_w_per_k", "k_outside_w_per_k", "k_sky_w_per_k", "coupling_w_per_k"):
        return show_conductance(value, system).text(0)
    if name == "c_j_per_k":
        return capacity_text(value, system)
    if name == "heater_output_w":
        s = show_power(value, system)
        return s.text(0) if system == "us" else s.text(1)
    if name == "time_constant_h":
        return f"{value:.2f} h"
    return f"{value:.2f}"


def _half(p: Parameter, system: UnitSystem, share: bool = True) -> str:
    if p.status == "anchor":
        return "held (anchor)" if share else "held"
    share = f" ({p.relative:.0%})" if share and p.relative <= 10.0 else ""  # none near 0
    return f"± {_show(p.name, p.half_width, system)}{share}"


def headline(r: FitResult, system: UnitSystem) -> str:
    f = r.chosen
    k, c, tau = f.get("k_w_per_k"), f.get("c_j_per_k"), f.get("time_constant_h")

    def part(p: Parameter, sym: str) -> str:
        pm = "" if p.status == "anchor" else f" ± {_show(p.name, p.half_width, system)}"
        kept = (
            " (kept: the anchor)" if p.status == "anchor" else f" ({p.ratio:.2f} × the geometry's)"
        )
        return f"{sym} = [bold]{_show(p.name, p.value, system)}[/bold]{pm}{kept}"

    line = f"{part(k, 'K')}, {part(c, 'C')}, C/K = [bold]{tau.value:.1f} h[/bold]"
    out, sky = f.get("k_outside_w_per_k"), f.get("k_sky_w_per_k")
    if out is not None and sky is not None:
        line += (
            f"; of K, {_show(out.name, out.value, system)} to the outside air and "
            f"{_show(sky.name, sky.value, system)} to the sky"
        )
    return line


def _dk(delta_k: float, system: UnitSystem) -> str:
    """A temperature difference in display units."""
    return f"{delta_k * 1.8:.2f} °F" if system == "us" else f"{delta_k:.2f} K"


def judgement(r: FitResult, system: UnitSystem = "metric", written: bool = False) -> list[str]:
    """The fit against the sensor: noise, ratio, quality, residual autocorrelation."""
    out = []
    if np.isfinite(r.noise_k):
        verdict = (
            "[bold red]ROUGH[/bold red]: the model misses heat flows the record does not log"
            if r.rough
            else "[green]good[/green]: the residual is within twice the sensor's noise"
        )
        out.append(
            f"Sensor noise (from the record's scatter): {_dk(r.noise_k, system)}; residual "
            f"{r.noise_ratio:.1f} × noise — {verdict}"
        )
    else:
        out.append("Sensor noise: too few rows to estimate it")
    if r.rough and written:
        out.append("[red]Stored although rough (--keep-rough).[/red]")
    elif r.rough:
        out.append(
            "[red]A rough fit is not stored by --write (add --keep-rough to store it); "
            "log the heater's power or on/off state and the cloud cover or sun.[/red]"
        )
    if np.isfinite(r.residual_lag1):
        wave = (
            " — the misfit runs in long waves: the intervals are widened for it, and may "
            "still be too narrow"
            if r.residual_lag1 > HIGH_LAG1
            else ""
        )
        out.append(f"Residual lag-1 autocorrelation: {r.residual_lag1:.2f}{wave}")
    return out


def render_fit(
    console, r: FitResult, system: UnitSystem, written: dict[str, str] | None = None
) -> None:
    """Print the fit: headline, table, residual, chart, segments, notes."""

    f = r.chosen
    nights = len(f.segments)
    console.print(f"[bold]{r.house_name}[/bold] — fitted to {r.record_path}")
    console.print(
        f"{nights} {'night' if not r.with_days else 'segment'}{'s' if nights != 1 else ''}, "
        f"{r.n_samples} of {r.n_record_rows} rows used "
        f"({r.record_start:%d %b %H:%M} to {r.record_end:%d %b %H:%M}"
        + (", nights only" if not r.with_days else ", days and nights")
        + f"); outside: {r.outside_source}"
    )
    if r.attribution:
        plain(console, r.attribution, "dim")
    say(console, headline(r, system))
    if r.rough:
        console.print(
            f"[bold red]ROUGH fit[/bold red]: the model misses the record by "
            f"{r.noise_ratio:.1f} × the sensor's noise; use these values with care"
        )
    # a narrow screen shortens the names and leaves out the geometry's value (its
    # ratio to the fit stays) and the interval's share
    narrow = console.width < NARROW
    table = data_table(console)
    table.add_column("", no_wrap=True)
    table.add_column("fitted", justify="right", no_wrap=True)
    table.add_column("95 %" if narrow else "95 % interval", justify="right", no_wrap=True)
    if not narrow:
        table.add_column("geometry", justify="right", no_wrap=True)
    table.add_column("ratio", justify="right")
    for p in f.parameters:
        cells = [
            (NARROW_SHORT if narrow else SHORT)[p.name],
            _show(p.name, p.value, system),
            _half(p, system, share=not narrow),
        ]
        if not narrow:
            cells.append("—" if p.geometry is None else _show(p.name, p.geometry, system))
        cells.append("—" if p.ratio is None else f"{p.ratio:.2f}")
        table.add_row(*cells)
    console.print(table)
    plain(console, f"Model: {note_text(r.choice, system)}")
    console.print(
        f"Residual: [bold]{_dk(f.rms_k, system)} RMS[/bold] over {f.n_residuals} samples "
        f"({f.n_free} fitted values)"
    )
    for line in judgement(r, system, bool(written)):
        console.print(line)
    if r.other is not None and r.other.refusal is None:
        o = r.other
        k, c = o.get("k_w_per_k"), o.get("c_j_per_k")
        console.print(
            f"[dim]The {o.model} model gives K = {_show(k.name, k.value, system)}, "
            f"C = {_show(c.name, c.value, system)}, RMS {_dk(o.rms_k, system)}.[/dim]"
        )
    console.print()

    conv = (lambda a: a * 1.8 + 32.0) if system == "us" else (lambda a: a)
    unit = show_temperature(0, system).unit
    rows = chart.layout(
        list(r.times),
        [
            chart.Series("outside", conv(np.asarray(r.outside_c)), "+", "blue"),
            chart.Series("measured inside", conv(np.asarray(r.measured_c)), "o", "green"),
            chart.Series("fitted", conv(np.asarray(r.fitted_c)), "*", "bold yellow"),
        ],
        unit=unit,
        columns=console.width,
    )
    chart.render(console, rows)
    if nights > 1:
        console.print(
            "[dim]Gaps between segments (days, long gaps) are bridged by straight lines.[/dim]"
        )
    console.print()

    seg = data_table(console)
    seg.add_column("night" if not r.with_days else "segment", justify="right", no_wrap=True)
    seg.add_column("when", no_wrap=True)
    seg.add_column("rows" if narrow else "rows (lines)", justify="right", no_wrap=True)
    if r.heater:
        seg.add_column("heater", no_wrap=True)
    tu = show_temperature(0, system).unit
    if f.model == "two-node":
        seg.add_column(
            "floor" if narrow else f"floor at start, {tu}", justify="right", no_wrap=True
        )
    du = show_temperature_difference(1.0, system).unit
    seg.add_column("RMS" if narrow else f"RMS, {du}", justify="right", no_wrap=True)
    for i, s in enumerate(f.segments, start=1):
        same_day = s.start.date() == s.end.date()
        cells = [
            str(i),
            f"{s.start:%d %b %H:%M}–{s.end:%H:%M}"
            if same_day
            else f"{s.start:%d %b %H:%M}–{s.end:%d %b %H:%M}"
            if (s.end - s.start).days >= 1
            else f"{s.start:%d %b %H:%M}–{s.end:%H:%M}",
            f"{s.n_rows}" if narrow else f"{s.n_rows} ({s.first_line}–{s.last_line})",
        ]
        if r.heater:
            cells.append("ran" if s.heated else "off")
        if f.model == "two-node":
            m = show_temperature(s.initial_mass_c, system)
            hw = s.initial_mass_half_width * (1.8 if system == "us" else 1.0)
            cells.append(f"{m.value:.1f} ± {hw:.1f}")
        cells.append(f"{show_temperature_difference(s.rms_k, system).value:.2f}")
        seg.add_row(*cells)
    console.print(seg)
    if narrow:  # the headers are short: their units under the table
        floor = f"floor at start in {tu}; " if f.model == "two-node" else ""
        plain(console, f"{floor}RMS in {du}", "dim")
    plain(console, f"· {K_DEFINITION}", "dim")
    plain(console, f"· {r.anchor_note}", "dim")
    plain(console, f"· {INTERVAL_NOTE}", "dim")
    for n in r.notes:
        plain(console, f"· {note_text(n, system)}", "dim")
    if written:
        console.print(
            f"Calibration written to {written['file']} \\[calibration]; the previous file is "
            f"kept as {written['backup']}. tonight, stock and size now use it (--no-calibration to ignore)."
        )
    else:
        console.print("[dim]Add --write to store this in the house file's \\[calibration].[/dim]")
