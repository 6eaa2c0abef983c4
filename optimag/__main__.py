"""`python -m optimag` runs the `optimag` command."""

import sys

from optimag.cli import main

if __name__ == "__main__":  # not when a worker process re-imports the main module
    sys.exit(main())
