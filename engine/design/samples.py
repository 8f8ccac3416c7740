"""The sample designs that ship inside the package (``bandsketch.samples``): their names,
one-line descriptions, and loading one by name.

They are read through :mod:`importlib.resources`, so they open the same from a checkout, an
editable install or a wheel.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

from ..core.errors import DesignFileError
from .designfile import load_design
from .document import Document

_PACKAGE = "bandsketch.samples"


@dataclass(frozen=True)
class Sample:
    """One shipped sample design.

    Attributes
    ----------
    name : str
        What to give ``bandsketch --sample`` (the file's stem).
    title : str
        The design's title.
    summary : str
        The first sentence of its description.
    """

    name: str
    title: str
    summary: str


def _files():
    return sorted((f for f in resources.files(_PACKAGE).iterdir() if f.name.endswith(".json")),
                  key=lambda f: f.name)


def _first_sentence(text: str) -> str:
    text = " ".join(text.split())
    head, dot, _ = text.partition(". ")
    return head + "." if dot else text


def list_samples() -> tuple[Sample, ...]:
    """Every shipped sample, in name order."""
    out = []
    for f in _files():
        data = json.loads(f.read_text(encoding="utf-8"))
        out.append(Sample(f.name[:-5], data.get("title", ""), _first_sentence(data.get("description", ""))))
    return tuple(out)


def load_sample(name: str) -> Document:
    """The sample design called ``name`` (as :func:`list_samples` names it).

    Parameters
    ----------
    name : str
        The sample's name.

    Raises
    ------
    DesignFileError
        No sample has that name; the message lists the names there are.
    """
    with resources.as_file(_file(name)) as path:
        return load_design(path)


def sample_bytes(name: str) -> bytes:
    """The file of the sample called ``name``, as shipped (what a report of it hashes).

    Parameters
    ----------
    name : str
        The sample's name.

    Raises
    ------
    DesignFileError
        No sample has that name.
    """
    return _file(name).read_bytes()


def _file(name: str):
    names = [f.name[:-5] for f in _files()]
    if name not in names:
        raise DesignFileError(f"no sample is called {name!r}; the samples are {', '.join(names)} "
                              "(bandsketch samples lists them)")
    return resources.files(_PACKAGE) / f"{name}.json"


def load_named(design: str | None, sample: str | None) -> Document:
    """The design a command names: the shipped sample ``sample``, or else the file ``design``.

    Parameters
    ----------
    design : str or None
        A design file's path.
    sample : str or None
        A sample's name (as :func:`list_samples` names it); read instead of ``design``.

    Raises
    ------
    DesignFileError
        The file or sample cannot be read; where a missing file's name is a sample's, the
        message says to give it as a sample.
    """
    if sample:
        return load_sample(sample)
    try:
        return load_design(design)
    except DesignFileError as exc:
        if Path(design).exists() or design not in {s.name for s in list_samples()}:
            raise
        raise DesignFileError(f"{exc}; {design} is the name of a sample that ships with Bandsketch: "
                              f"give it as --sample {design}") from None

