"""One pint registry for the whole test run.

pint is the independent reference the unit conversions are checked against. Building a
registry parses pint's whole definition file (about half a second), so the tests share
this one instead of making their own.
"""

from __future__ import annotations

import pint

UREG = pint.UnitRegistry()
Q_ = UREG.Quantity
