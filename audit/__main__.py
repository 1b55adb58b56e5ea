"""``python -m audit`` runs the command line."""

import sys

from audit.cli import main

sys.exit(main())
