"""``python -m stowflow`` runs the stowflow command line."""

import sys

from stowflow.cli import entry

sys.exit(entry())
