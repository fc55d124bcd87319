"""``python -m network_models ...`` runs the ``netstretch`` command line."""

import sys

from network_models.cli import main

sys.exit(main())
