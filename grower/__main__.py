"""`python -m grower` is the same as the `grower` command."""

import sys

from grower.cli import main

sys.exit(main())
