"""``python -m engine``: the command line."""
import sys

from engine.cli import main

sys.exit(main())
