"""``python -m onboard``: the same command line as the installed command."""

import sys

from onboard.cli import main

sys.exit(main())
