"""``python -m optimiser`` runs the stowflow command line."""

import sys

from optimiser.cli import main

sys.exit(main())
