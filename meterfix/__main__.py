"""``python -m meterfix``: the same as the ``meterfix`` command."""

import sys

from .cli import main

sys.exit(main())
