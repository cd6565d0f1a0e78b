"""``python -m snowprobe_widgets`` runs the ``snowprobe`` command."""

from __future__ import annotations

import sys

from snowprobe_widgets.launcher import main

if __name__ == "__main__":
    sys.exit(main())
