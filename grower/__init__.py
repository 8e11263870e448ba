"""grower: greenhouse and high-tunnel frost-protection planner.

Physics is SI inside (m, m², m³, W, J, s; temperatures in °C, differences in K);
units are converted only where input is read and output is written.
"""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("grower")
except PackageNotFoundError:  # running from a source tree that was never installed
    __version__ = "0+unknown"
