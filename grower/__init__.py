"""grower: greenhouse and high-tunnel frost-protection planner.

Physics is SI inside (m, m², m³, W, J, s; temperatures in °C, differences in K);
units are converted only where input is read and output is written.
"""

from __future__ import annotations


def __getattr__(name: str) -> str:
    """``grower.__version__``, read from the installed metadata on first use (the lookup
    costs tens of milliseconds, which every command would otherwise pay at start)."""
    if name != "__version__":
        raise AttributeError(f"module 'grower' has no attribute {name!r}")
    from importlib.metadata import PackageNotFoundError, version

    try:
        value = version("grower")
    except PackageNotFoundError:  # running from a source tree that was never installed
        value = "0+unknown"
    globals()["__version__"] = value
    return value
