"""``python -m simunc`` runs the command line."""

import sys

from simunc.cli import main

if __name__ == "__main__":
    sys.exit(main())
