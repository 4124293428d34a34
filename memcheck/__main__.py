"""``python -m memcheck`` runs the command line."""

import sys

from memcheck.cli import main

sys.exit(main())
