"""``python -m toporank``: the same as the ``toporank`` command."""

import sys

from .cli import main

sys.exit(main())
