"""``python -m bandsketch`` runs the Bandsketch command (the window when given no sub-command)."""

from bandsketch.app.cli import main

raise SystemExit(main())
