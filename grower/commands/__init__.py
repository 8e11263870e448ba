"""One module per subcommand; see `grower.cli` for the contract."""

from __future__ import annotations

import argparse
from typing import Protocol


class Subcommands(Protocol):
    """What ``register`` needs of ``ArgumentParser.add_subparsers()``'s result."""

    def add_parser(self, name: str, **kwargs: object) -> argparse.ArgumentParser: ...
