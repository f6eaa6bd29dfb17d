"""``python -m necflow`` runs the command line."""

import sys

from necflow.cli import main

sys.exit(main())
