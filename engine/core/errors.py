"""Exceptions the engine raises; every message names the part, node or field at fault
(:class:`Cancelled`, which carries none, says a long run was stopped on request)."""

from __future__ import annotations


class CircuitError(ValueError):
    """A circuit that cannot be analysed as drawn.

    Parameters
    ----------
    message : str
        A sentence for the user: what is wrong, where, and what to do.
    parts : iterable of str, optional
        Names of the parts at fault, so a view can mark them.
    nodes : iterable of str, optional
        Names of the nodes (nets) at fault, so a view can mark them.
    """

    def __init__(self, message: str, *, parts=(), nodes=()):
        super().__init__(message)
        self.message = message
        self.parts = tuple(parts)
        self.nodes = tuple(nodes)


class BadValueError(CircuitError):
    """A value field that does not hold a usable number.

    Parameters
    ----------
    message : str
        What is wrong with the text, naming the part and field.
    part : str or None
        The part whose field was being read.
    field : str or None
        The field (``"value"``, ``"gm"`` ...).
    text : str
        The text as the user typed it.
    """

    def __init__(self, message: str, *, part=None, field=None, text=""):
        super().__init__(message, parts=(part,) if part else ())
        self.part = part
        self.field = field
        self.text = text


class DesignFileError(ValueError):
    """A design file that cannot be read; the message names the file and what is wrong."""


class Cancelled(Exception):
    """A long run (tolerance spread, value search) was cancelled; no partial result is returned."""


class BiasError(CircuitError):
    """The DC operating point could not be found; the message names the device and the node
    that swings most, and what to check."""
