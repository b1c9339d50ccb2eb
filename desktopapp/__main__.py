"""``python -m desktopapp`` runs the window, like the ``plaincount`` command."""

import sys

from desktopapp.app import main

sys.exit(main())
