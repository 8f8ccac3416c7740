"""``python -m app`` runs the Bandsketch command line."""

from app.cli import main

raise SystemExit(main())
