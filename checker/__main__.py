"""``python -m checker``: the same as the ``capcheck`` command."""

import sys

from checker.cli import main

sys.exit(main())
