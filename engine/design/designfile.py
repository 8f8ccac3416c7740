"""Reading and writing design files: JSON data only, checked whole before anything is used.

Format (``"format": "bandsketch-design"``, ``"version": 2``)::

    {"format": "bandsketch-design", "version": 2,
     "title": "...", "description": "...",
     "parts": [{"kind": "resistor", "name": "R1", "x": 0, "y": 0,
                "rotation": 0, "mirror": false, "params": {"value": "4k7"},
                "sourcing": {"series": "E96", "tolerance": "1 %"}}],
     "wires": [{"points": [[0, 40], [0, 80], [60, 80]]}],
     "input": "Vsig", "bands": {"Ce": "low"}, "targets": {"f_high_min": "1M"}}

Version 2 added each part's ``sourcing`` (knob status, E series, tolerance; see
:mod:`bandsketch.engine.design.sourcing`), written only where it differs from the defaults.
A version 1 file has none and reads unchanged, every part at its defaults; the document
records the version it was read from (:attr:`Document.read_version`) so the window can say
that saving writes version 2.

A file is either loaded intact or refused with a :class:`DesignFileError` naming what is
wrong; a partly loaded document never reaches the caller. Saving writes a temporary file
beside the target, flushes it to disk and renames it over the target, so a save killed
part-way leaves the previous file as it was.
"""

from __future__ import annotations

import json
import os
import stat
import tempfile
from pathlib import Path

from . import schema
from .document import Document, Part, Wire
from ..core.errors import DesignFileError
from .parts import KINDS
from .sourcing import Sourcing

FORMAT_NAME = "bandsketch-design"
FORMAT_VERSION = 2
MAX_FILE_BYTES = 8 * 1024 * 1024
"""Larger files are refused before parsing: no hand-sized design comes near it."""
MAX_PARTS = 20000


def document_to_dict(doc: Document) -> dict:
    """The JSON-ready form of a document.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    """
    return {
        "format": FORMAT_NAME,
        "version": FORMAT_VERSION,
        "title": doc.title,
        "description": doc.description,
        "parts": [_part_dict(p) for p in doc.parts.values()],
        "wires": [{"points": [list(pt) for pt in w.points]} for w in doc.wires.values()],
        "input": doc.input_source,
        "bands": dict(doc.band_pins),
        "targets": dict(doc.targets),
    }


def _part_dict(p: Part) -> dict:
    out = {"kind": p.kind, "name": p.name, "x": p.x, "y": p.y, "rotation": p.rotation,
           "mirror": p.mirror, "params": dict(p.params)}
    if not p.sourcing.is_default():
        out["sourcing"] = {k: v for k, v in (("knob", p.sourcing.knob), ("series", p.sourcing.series),
                                             ("tolerance", p.sourcing.tolerance)) if v}
    return out


def _sourcing(raw, where: str, version: int) -> Sourcing:
    if version < 2:
        raise _fail(where, "has sourcing, which version 1 files do not hold; set the version to 2")
    raw = _object(raw, f"{where} sourcing", {"knob", "series", "tolerance"}, set())
    knob, series, tolerance = (raw.get(key, "") for key in ("knob", "series", "tolerance"))
    problem = schema.sourcing_problem(knob, series, tolerance)
    if problem:
        raise _fail(where, problem)
    return Sourcing(knob, series, tolerance)


def _fail(where: str, what: str) -> DesignFileError:
    return DesignFileError(f"{where}: {what}")


def _text(value, where: str) -> str:
    problem = schema.text_problem(value)
    if problem:
        raise _fail(where, problem)
    return value


def _int(value, where: str) -> int:
    problem = schema.coordinate_problem(value)
    if problem:
        raise _fail(where, problem)
    return int(value)


def _added(doc: Document, add, where: str) -> None:
    """Make one change to the document being built; the schema's refusal becomes the file's."""
    try:
        add()
    except ValueError as exc:
        raise _fail(where, str(exc)) from None


def _object(value, where: str, keys: set, required: set) -> dict:
    if not isinstance(value, dict):
        raise _fail(where, f"expected an object, found {type(value).__name__}")
    unknown = set(value) - keys
    if unknown:
        raise _fail(where, f"unknown key(s) {', '.join(sorted(map(str, unknown)))}")
    missing = required - set(value)
    if missing:
        raise _fail(where, f"missing key(s) {', '.join(sorted(missing))}")
    return value


def _part(raw, i: int, version: int) -> Part:
    where = f"part {i + 1}"
    raw = _object(raw, where, {"kind", "name", "x", "y", "rotation", "mirror", "params", "sourcing"},
                  {"kind", "name", "x", "y"})
    kind = _text(raw["kind"], f"{where} kind")
    if kind not in KINDS:
        raise _fail(where, f"unknown kind {kind!r} (known: {', '.join(KINDS)})")
    name = raw["name"]
    problem = schema.name_problem(name)
    if problem:
        raise _fail(where, problem)
    rotation, mirror = raw.get("rotation", 0), raw.get("mirror", False)
    problem = schema.placement_problem(name, rotation, mirror)
    if problem:
        raise _fail(where, problem)
    params = raw.get("params", {})
    if not isinstance(params, dict):
        raise _fail(f"part {name}", "params must be an object")
    problem = schema.params_problem(kind, name, params)
    if problem:
        raise _fail(f"part {i + 1}", problem)
    sourcing = _sourcing(raw["sourcing"], f"part {name}", version) if "sourcing" in raw else Sourcing()
    return Part(kind, name, _int(raw["x"], f"part {name} x"), _int(raw["y"], f"part {name} y"),
                rotation, mirror, {**KINDS[kind].default_params(), **params}, sourcing)


def document_from_dict(data, source: str = "design") -> Document:
    """Build a document from parsed JSON, or raise :class:`DesignFileError` naming the fault.

    Parameters
    ----------
    data : object
        What ``json.load`` returned.
    source : str
        The file name, used at the head of every message.
    """
    try:
        return _document_from_dict(data)
    except DesignFileError as exc:
        raise DesignFileError(f"{source}: {exc}") from None


def _document_from_dict(data) -> Document:
    data = _object(data, "the file", {"format", "version", "title", "description", "parts", "wires",
                                      "input", "bands", "targets"}, {"format", "version", "parts"})
    if data["format"] != FORMAT_NAME:
        raise _fail("the file", f"is not a Bandsketch design (format {data['format']!r})")
    version = data["version"]
    if isinstance(version, bool) or not isinstance(version, int):
        raise _fail("version", "must be a whole number")
    if version > FORMAT_VERSION:
        raise _fail("version", f"{version} is newer than this Bandsketch reads ({FORMAT_VERSION}); "
                               "open it with a newer Bandsketch")
    if version < 1:
        raise _fail("version", f"{version} is not a valid version")
    doc = Document(_text(data.get("title", "Untitled design"), "title"))
    doc.read_version = version
    doc.description = _text(data.get("description", ""), "description")
    parts = data["parts"]
    if not isinstance(parts, list):
        raise _fail("parts", "must be a list")
    if len(parts) > MAX_PARTS:
        raise _fail("parts", f"more than {MAX_PARTS} parts")
    for i, raw in enumerate(parts):
        part = _part(raw, i, version)
        _added(doc, lambda: doc.add_part(part), f"part {i + 1}")
    wires = data.get("wires", [])
    if not isinstance(wires, list) or len(wires) > MAX_PARTS:
        raise _fail("wires", f"must be a list of at most {MAX_PARTS} wires")
    for i, raw in enumerate(wires):
        raw = _object(raw, f"wire {i + 1}", {"points"}, {"points"})
        points = raw["points"]
        if not isinstance(points, list) or not 2 <= len(points) <= schema.MAX_WIRE_POINTS:
            raise _fail(f"wire {i + 1}", f"points must be a list of 2 to {schema.MAX_WIRE_POINTS} [x, y] pairs")
        pts = []
        for j, pt in enumerate(points):
            if not isinstance(pt, list) or len(pt) != 2:
                raise _fail(f"wire {i + 1} point {j + 1}", "must be an [x, y] pair")
            pts.append((_int(pt[0], f"wire {i + 1} point {j + 1}"), _int(pt[1], f"wire {i + 1} point {j + 1}")))
        doc.add_wire(Wire(doc.new_wire_id(), tuple(pts)))
    source = data.get("input")
    if source is not None:
        source = _text(source, "input")
        if source not in doc.parts or not KINDS[doc.parts[source].kind].signal:
            raise _fail("input", f"{source!r} is not a voltage or current source of this design")
    doc.input_source = source
    _read_settings(data, "bands", schema.band_problem, doc.set_band_pin)
    _read_settings(data, "targets", schema.target_problem, doc.set_target)
    return doc


def _read_settings(data, key, problem_of, apply) -> None:
    """Apply each entry of the object ``data[key]`` (band pins, targets) once the schema
    passes it; the first entry it refuses refuses the file."""
    entries = data.get(key, {})
    if not isinstance(entries, dict):
        raise _fail(key, "must be an object")
    for name, value in entries.items():
        problem = problem_of(name, value)
        if problem:
            raise _fail(key, problem)
        apply(name, value)


def load_design(path) -> Document:
    """Read a design file.

    Parameters
    ----------
    path : str or os.PathLike
        The design file.

    Raises
    ------
    DesignFileError
        The file is missing, unreadable, too large, not JSON, or not a valid design; the
        message names the file and the first fault found.
    """
    path = Path(path)
    name = path.name or str(path.resolve())  # "." and ".." have no name of their own
    if path.is_dir():
        raise DesignFileError(f"{name}: cannot be read: it is a folder; give the design file in it (a .json file)")
    try:
        size = path.stat().st_size
        if size > MAX_FILE_BYTES:
            raise DesignFileError(f"{name}: {size / 1e6:.1f} MB is larger than a design file can be "
                                  f"({MAX_FILE_BYTES // (1024 * 1024)} MiB)")
        raw = path.read_bytes()
    except OSError as exc:
        raise DesignFileError(f"{name}: cannot be read ({exc.strerror or exc})") from None
    try:
        data = json.loads(raw.decode("utf-8"), parse_constant=_refuse_constant,
                          parse_int=_parse_int, object_pairs_hook=_refuse_duplicate_keys)
    except UnicodeDecodeError:
        raise DesignFileError(f"{name}: is not UTF-8 text") from None
    except RecursionError:
        raise DesignFileError(f"{name}: is nested too deeply to be a design") from None
    except json.JSONDecodeError as exc:
        raise DesignFileError(f"{name}: is not valid JSON (line {exc.lineno}, column {exc.colno}: "
                              f"{exc.msg}); it may be truncated or damaged") from None
    except ValueError as exc:
        raise DesignFileError(f"{name}: {exc}") from None
    return document_from_dict(data, name)


def _refuse_constant(name: str):
    raise ValueError(f"holds {name}, which is not a number a design can use")


def _parse_int(text: str) -> int:
    # Past ~4300 digits int() refuses with advice meant for programmers; say it plainly first.
    if len(text.lstrip("-")) > 4000:
        raise ValueError(f"holds a number {len(text.lstrip('-'))} digits long, which no design uses")
    return int(text)


def _refuse_duplicate_keys(pairs) -> dict:
    # json keeps the last of repeated keys silently; a file that says two things is refused.
    out = dict(pairs)
    if len(out) != len(pairs):
        seen = set()
        twice = next(k for k, _ in pairs if k in seen or seen.add(k))
        raise ValueError(f"holds the key {twice!r} twice in one object")
    return out


def save_design(doc: Document, path) -> None:
    """Write a design file atomically (temporary file, fsync, rename).

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    path : str or os.PathLike
        Where to write it.

    Raises
    ------
    DesignFileError
        The place cannot be written (read-only, full disk ...); the old file, if any, is intact.
    """
    path = Path(path)
    content = document_to_dict(doc)
    try:
        # What is written must read back: the loader's own checks judge it first.
        _document_from_dict(content)
    except DesignFileError as exc:
        raise DesignFileError(f"{path.name}: could not be saved ({exc}); the design is still open "
                              "and unsaved") from None
    text = _file_text(content)
    try:
        data = text.encode("utf-8")
    except UnicodeEncodeError as exc:
        raise DesignFileError(f"{path.name}: could not be saved (a text holds a broken character at "
                              f"{text[max(0, exc.start - 20):exc.start]!r}); the design is still open "
                              "and unsaved") from None
    if len(data) > MAX_FILE_BYTES:
        raise DesignFileError(f"{path.name}: could not be saved: at {len(data) / 1e6:.1f} MB it would be "
                              f"larger than a design file can be ({MAX_FILE_BYTES // (1024 * 1024)} MiB); "
                              "the design is still open and unsaved")
    tmp = None
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent or ".")
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.chmod(tmp, _mode_for(path))
            os.fsync(fh.fileno())
        os.replace(tmp, path)
        tmp = None
    except OSError as exc:
        raise DesignFileError(f"{path.name}: could not be saved ({exc.strerror or exc}); "
                              "the design is still open and unsaved") from None
    finally:
        if tmp is not None:
            try:
                os.unlink(tmp)
            except OSError:
                pass


def design_text(doc: Document) -> str:
    """The text :func:`save_design` writes for ``doc`` (what a report hashes for a design not saved).

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    """
    return _file_text(document_to_dict(doc))


def _file_text(content: dict) -> str:
    text = json.dumps(content, indent=1, ensure_ascii=False) + "\n"
    if len(text) > MAX_FILE_BYTES // 4:
        # Indented, each coordinate takes a line: a big design could outgrow what load_design reads.
        text = json.dumps(content, separators=(",", ":"), ensure_ascii=False) + "\n"
    return text


def _mode_for(path: Path) -> int:
    """The permissions a saved file gets: the old file's, or what the umask leaves of 0666."""
    try:
        return stat.S_IMODE(path.stat().st_mode)
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        return 0o666 & ~umask
