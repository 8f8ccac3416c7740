"""Bandsketch: a schematic-sketch bandwidth assistant.

The installed package maps the repository's folders into one namespace:
``bandsketch.engine`` (``engine/``, numerical and document code, no Qt) and
``bandsketch.app`` (``app/``, the Qt window and the command line).
"""

from importlib import metadata as _metadata

try:
    __version__ = _metadata.version("bandsketch")
except _metadata.PackageNotFoundError:  # running from a checkout that was never installed
    __version__ = "0+unknown"
