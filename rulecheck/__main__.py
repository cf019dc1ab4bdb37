"""``python -m rulecheck``."""

import sys

from rulecheck.cli import main

sys.exit(main())
