"""``python -m necflow.cli`` runs the command line (as ``python -m necflow`` does)."""

import sys

from necflow.cli import main

sys.exit(main())
