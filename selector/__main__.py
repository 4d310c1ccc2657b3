"""``python -m selector`` runs the command line."""

import sys

from selector.cli import main

sys.exit(main())
