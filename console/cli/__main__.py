"""``python -m wordkin.console.cli``: the ``wordkin`` command."""

import sys

from wordkin.console.cli import main

sys.exit(main())
