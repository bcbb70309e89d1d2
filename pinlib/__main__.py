import sys

from pinlib.cli import main

sys.exit(main())
