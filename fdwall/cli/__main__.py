"""``python -m fdwall.cli``: the same as the ``fdwall`` command."""
from . import main

raise SystemExit(main())
