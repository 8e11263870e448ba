"""Line wrapping for the screens: no line past the width, no number split from its unit."""

from __future__ import annotations

import io
import re

from hypothesis import given, settings
from hypothesis import strategies as st
from rich.console import Console
from rich.text import Text

from grower.report.common import Rows, keep_units, plain, wrapped

UNITS = ["°F", "°C", "K", "kW", "Btu/h", "gal", "L", "h", "min", "in²", "cm²", "m/s", "%"]
words = st.one_of(
    st.sampled_from(["the", "installed", "heater", "holds", "coldest", "plants", "at"]),
    st.builds(
        lambda n, u: f"{n:,.1f} {u}",
        st.floats(-100, 1e6, allow_nan=False),
        st.sampled_from(UNITS),
    ),
)


def _screen(render, width: int) -> str:
    out = io.StringIO()
    console = Console(file=out, width=width, highlight=False, soft_wrap=False)
    render(console)
    return out.getvalue()


@settings(max_examples=200, deadline=None)
@given(st.lists(words, min_size=1, max_size=40), st.integers(20, 100))
def test_wrapped_lines_fit_and_keep_each_number_with_its_unit(parts, width):
    text = " ".join(parts)
    lines = wrapped(Text(keep_units(text)), width)
    # nothing lost or added but the breaks
    assert " ".join(line.plain for line in lines) == text
    for line in lines:
        # a line is over the width only when one unbreakable piece is
        if len(line.plain) > width:
            assert " " not in keep_units(line.plain).strip()
        # no line starts with a unit whose number ended the line before
        assert not re.match(r"(°|K\b|kW|Btu|gal|L\b|h\b|min|in²|cm²|m/s|%)", line.plain)


def test_plain_hangs_a_list_item_under_its_words():
    screen = _screen(
        lambda c: plain(
            c, "· soil (top 10 cm) and water assumed at 6.0 °C now; measure it at 5 cm"
        ),
        40,
    )
    first, *rest = screen.splitlines()
    assert first.startswith("· ") and rest and all(line.startswith("  ") for line in rest)
    assert all(len(line) <= 40 for line in screen.splitlines())


def test_rows_wrap_values_beside_their_labels():
    def render(c):
        rows = Rows()
        rows.add_row("house", "K = 3,009 Btu/h·°F, C = 49,375 Btu/°F, τ = 16.4 h (two-node)")
        rows.add_row("coldest", "air 21.0 °F")
        c.print(rows)

    screen = _screen(render, 36)
    lines = screen.splitlines()
    assert lines[0].startswith("house    K = 3,009 Btu/h·°F")
    assert all(len(line) <= 36 for line in lines)
    assert "49,375 Btu/°F" in screen  # number and unit on one line
    assert lines[-1] == "coldest  air 21.0 °F"
