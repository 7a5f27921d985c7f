"""``python -m stowflow`` runs the stowflow command line."""

import sys

try:
    from stowflow.cli import entry
except KeyboardInterrupt:  # Ctrl+C while the command line itself is imported
    sys.stderr.write("stowflow: interrupted\n")
    sys.exit(130)

sys.exit(entry())
