"""``python -m fieldlimits …`` is the ``fieldlimits`` command."""

import sys

from fieldlimits.pipeline.cli import main

if __name__ == "__main__":
    sys.exit(main())
