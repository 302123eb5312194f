"""``python -m globcons``: the command line, as the ``globcons`` script runs it."""

import sys

from globcons.cli import main

sys.exit(main())
