import sys

from pinlib.cli import entry

sys.exit(entry())
