"""``python -m activity.cli`` runs the command line."""

import sys

from .main import main

sys.exit(main())
