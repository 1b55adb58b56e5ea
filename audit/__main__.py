"""``python -m audit`` runs the command line."""

import sys

from audit.commands.main import main

sys.exit(main())
