"""``python -m toporank``: the same as the ``toporank`` command."""

import sys

from .cli import main

if __name__ == "__main__":  # not when a doctest run imports every module
    sys.exit(main())
