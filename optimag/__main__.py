"""`python -m optimag` runs the `optimag` command."""

import sys

from optimag.cli import main

sys.exit(main())
