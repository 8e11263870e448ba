"""Safety cautions: opening sizes from the published rules, CO limits, electrical load.

Each check names the rule or limit it comes from; numbers are computed from the rule as
printed (1 in² per 1,000 Btu/h and so on), never typed in from elsewhere.
"""

from __future__ import annotations

import subprocess
import sys

import pytest

from grower import safety
from grower.errors import InputError
from grower.safety import cautions
from grower.units import W_PER_BTU_H, note_text

from .reference_units import UREG


def test_combustion_cautions_with_opening_sizes():
    notes = cautions("propane", None, 100_000 * W_PER_BTU_H)
    text = " ".join(note_text(n, "us") for n in notes)
    # Purdue Extension: 1 in² per 1,000 Btu/h -> 100 in² for 100,000 Btu/h
    assert "a heater of 100,000 Btu/h input needs a fresh-air inlet of at least 100 in²" in text
    # IFGC 304 / NFPA 54: 1 in² per 4,000 / 2,000 / 1,000 Btu/h -> 25 / 50 / 100 in²
    assert "25 in² from outdoors by vertical ducts" in text
    assert "50 in² by horizontal ducts" in text
    assert "cm²" not in text  # one unit system on a US screen
    # the same in SI, by pint's inch (1 in = 2.54 cm): 100 / 25 / 50 in² in cm², whole
    cm2 = [UREG.Quantity(a, "inch**2").to("cm**2").m for a in (100, 25, 50)]
    metric = " ".join(note_text(n, "metric") for n in notes)
    assert (
        f"a heater of 29.3 kW (100,000 Btu/h) input needs a fresh-air inlet of at least {cm2[0]:.0f} cm²"
        in metric
    )
    assert f"asks {cm2[1]:.0f} cm² from outdoors" in metric
    assert f"{cm2[2]:.0f} cm² by horizontal ducts" in metric
    assert "in² from" not in metric
    # OSHA PEL 50 ppm; NIOSH REL 35 ppm, ceiling 200 ppm
    assert "50 ppm" in text and "35 ppm" in text and "200 ppm" in text
    assert "ethylene" in text and "0.05 ppm" in text  # Univ. of Arkansas
    assert "NFPA 58" in text and "1910.110" in text and "25 ft" in text
    assert "supplier" in text and "100,000 Btu/h" in text  # vaporisation
    assert "licensed installer" in notes[-1] and "local" in notes[-1]


def test_unvented_heater_gets_the_stronger_warning():
    vented = " ".join(cautions("kerosene", "unit-heater-vented", 20_000.0))
    unvented = " ".join(cautions("kerosene", "unvented", 20_000.0))
    assert "Unvented heater" in unvented and "Unvented heater" not in vented
    assert "2-3-10" in vented
    assert "0.5 ppm" in unvented  # SO₂ from kerosene


def test_electric_cautions_give_the_current():
    us = " ".join(note_text(n, "us") for n in cautions("electricity", None, 10_000.0))
    # I = P / V: 10 kW -> 41.7 A at 240 V, 83.3 A at 120 V
    assert "41.7 A at 240 V" in us and "83.3 A at 120 V" in us
    # three-phase I = P / (√3 · V_LL): 27.8 A at 208 V, 12.0 A at 480 V; the NEC's 125 %
    # for a continuous load (210.19(A), 210.20(A)): 52.1 A, 34.7 A, 15.0 A
    assert "27.8 A at 208 V and 12.0 A at 480 V three-phase" in us
    assert "125 %" in us and "210.19(A), 210.20(A)" in us
    assert "52.1 A at 240 V, 34.7 A at 208 V or 15.0 A at 480 V" in us
    assert "kW" not in us and "licensed electrician" in us and "local code" in us
    metric = " ".join(note_text(n, "metric") for n in cautions("electricity", None, 10_000.0))
    # IEC nominal 230 V single-phase, 400 V three-phase: 43.5 A, 14.4 A; no NEC figure
    assert "10.0 kW" in metric and "43.5 A on one 230 V phase, or 14.4 A at 400 V" in metric
    assert "IEC 60364" in metric and "NEC" not in metric and "local code" in metric
    assert "Combustion air" not in us and "Carbon monoxide" not in us


@pytest.mark.parametrize("power_kw", [5.0, 10.0, 84.8])
@pytest.mark.parametrize(("volts", "phases"), [(120, 1), (240, 1), (208, 3), (400, 3), (480, 3)])
def test_heater_current_agrees_with_pint(power_kw, volts, phases):
    # pint carries the units: kW / V is A; balanced three-phase at unity power factor
    # divides by √3 times the line-to-line voltage (common practice, no source)
    p = UREG.Quantity(power_kw, "kW")
    v = UREG.Quantity(volts, "V") * (3**0.5 if phases == 3 else 1.0)
    expected = (p / v).to("A").magnitude
    assert safety.amps(power_kw * 1e3, volts, phases) == pytest.approx(expected, rel=1e-12)


def test_cautions_without_a_size_still_warn():
    notes = cautions("natural-gas")
    assert any("1 in² of fresh-air inlet per 1,000 Btu/h" in n for n in notes)
    assert any("NFPA 54" in n for n in notes)
    with pytest.raises(InputError, match="does not run on"):
        cautions("propane", "electric", 1000.0)


def test_the_inch_is_exact():
    # 1 in = 0.0254 m exactly, by definition (NIST SP 811), so 1 in² = 6.4516e-4 m².
    assert pytest.approx(6.4516e-4, rel=1e-12) == safety.M2_PER_IN2


def test_safety_imports_on_its_own():
    # a fresh interpreter importing grower.safety first (no circular import with fuels)
    code = (
        "import grower.safety as s; "
        "assert s.cautions('propane')[-1].startswith('Codes:'); "
        "import grower.fuels as f; assert not hasattr(f, 'cautions')"
    )
    subprocess.run([sys.executable, "-c", code], check=True)


def test_the_short_set_keeps_the_nights_cautions_and_points_to_size():
    full = cautions("propane", "unit-heater-vented", 100_000 * W_PER_BTU_H)
    short = cautions("propane", "unit-heater-vented", 100_000 * W_PER_BTU_H, short=True)
    assert len(short) < len(full)
    heads = [c.split(":")[0] for c in short[:-1]]
    assert heads == ["Combustion air", "Carbon monoxide"]
    # the opening stays (Purdue Extension: 1 in² per 1,000 Btu/h), the duct sizes go to size
    assert "100 in²" in note_text(short[0], "us") and "fuel gas code" not in short[0]
    assert "grower size" in short[-1] and "licensed installer" in short[-1]
    # an unvented heater's warning is never dropped from the short set
    unvented = " ".join(cautions("kerosene", "unvented", 20_000.0, short=True))
    assert "Unvented heater" in unvented


def test_tonight_cautions_quote_the_installed_nameplate(capsys):
    import json

    from grower.cli import main

    argv = ["tonight", "examples/gable-house.toml", "--crop", "tomato"]
    argv += ["--forecast", "examples/forecast-cold-night.csv", "--json"]
    assert main(argv) == 0
    text = " ".join(json.loads(capsys.readouterr().out)["cautions"])
    # examples/gable-house.toml: a 100,000 Btu/h (input) unit heater
    assert "a heater of 29.3 kW (100,000 Btu/h) input" in text and "grower size" in text


def test_several_houses_get_their_own_cautions(capsys, monkeypatch):
    from grower.cli import main

    monkeypatch.setenv("COLUMNS", "100")
    houses = ["examples/gable-house.toml", "examples/glass-range.toml"]
    argv = ["tonight", *houses, "--crop", "tomato"]
    main([*argv, "--forecast", "examples/forecast-cold-night.csv"])
    out = capsys.readouterr().out
    # the propane house and the natural-gas range: a set each, named, each from its nameplate
    assert "Safety for Propagation house" in out and "Safety for Glass range" in out
    assert "a heater of 29.3 kW (100,000 Btu/h) input" in out
