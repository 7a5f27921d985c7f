"""``python -m optimiser`` runs the stowflow command line."""

import sys

from optimiser.cli import entry

sys.exit(entry())
