"""What each editing gesture does to a document, worked out as a :class:`Patch`.

A patch lists every part, wire and setting it touches with its value before and after, so
applying it one way or the other redoes or undoes the gesture exactly. These functions read
the document and build patches; only :mod:`app.commands` applies them. No Qt here: the rules
for where wires go when parts move can be tested on their own.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field, replace

from bandsketch.engine.design.document import Document, Part, Wire
from bandsketch.engine.design.parts import GRID, KINDS, ROTATIONS

from .sheet_index import Lines, SheetIndex

Point = tuple[int, int]


@dataclass
class Patch:
    """Before/after values of what a gesture touches (None = absent).

    ``parts`` is keyed by part name, ``wires`` by wire id, ``meta`` by ``title``,
    ``description`` or ``input_source``, ``bands`` by element name, ``targets`` by target
    key (``f_high_min`` ...).
    """

    parts: dict = field(default_factory=dict)
    wires: dict = field(default_factory=dict)
    meta: dict = field(default_factory=dict)
    bands: dict = field(default_factory=dict)
    targets: dict = field(default_factory=dict)

    TABLES = ("parts", "wires", "meta", "bands", "targets")

    def is_empty(self) -> bool:
        """Whether applying the patch would change nothing."""
        return all(b == a for name in self.TABLES for b, a in getattr(self, name).values())

    def merged(self, later: "Patch") -> "Patch":
        """This patch followed by ``later``: before from this one, after from the later one."""
        out = Patch()
        for name in self.TABLES:
            mine, theirs = getattr(self, name), getattr(later, name)
            table = dict(mine)
            for key, (before, after) in theirs.items():
                table[key] = (mine[key][0] if key in mine else before, after)
            setattr(out, name, table)
        return out


def apply_patch(doc: Document, patch: Patch, forward: bool = True) -> None:
    """Bring every touched value to its after state (``forward``) or its before state."""
    pick = 1 if forward else 0
    parts = {k: v[pick] for k, v in patch.parts.items()}
    wires = {k: v[pick] for k, v in patch.wires.items()}
    # Removals first, so a name or id freed by this patch can be taken by it.
    for name, value in parts.items():
        if value is None and name in doc.parts:
            doc.remove_part(name)
    for wid, value in wires.items():
        if value is None and wid in doc.wires:
            doc.remove_wire(wid)
    for name, value in parts.items():
        if value is not None:
            if name in doc.parts:
                if doc.parts[name] != value:
                    doc.replace_part(name, value)
            else:
                doc.add_part(value)
    for wid, value in wires.items():
        if value is not None:
            if wid in doc.wires:
                if doc.wires[wid] != value:
                    doc.replace_wire(value)
            else:
                doc.add_wire(value)
    meta = {k: v[pick] for k, v in patch.meta.items() if getattr(doc, k) != v[pick]}
    if meta:
        doc.set_meta(**meta)
    for element, value in patch.bands.items():
        if doc.band_pins.get(element) != value[pick]:
            doc.set_band_pin(element, value[pick])
    for key, value in patch.targets.items():
        if doc.targets.get(key) != value[pick]:
            doc.set_target(key, value[pick])


# -- geometry helpers ------------------------------------------------------------
def snap(v: float) -> int:
    """The nearest grid multiple."""
    return int(round(v / GRID)) * GRID


def pin_points(doc: Document) -> Counter:
    """How many pins sit at each sheet point."""
    return Counter(pt for p in doc.parts.values() for pt in p.pins().values())


def on_segment(pt: Point, a: Point, b: Point) -> bool:
    """Whether ``pt`` lies strictly inside the orthogonal segment a-b."""
    (x, y), (ax, ay), (bx, by) = pt, a, b
    if ax == bx == x:
        return min(ay, by) < y < max(ay, by)
    if ay == by == y:
        return min(ax, bx) < x < max(ax, bx)
    return False


def junctions(doc: Document) -> list[Point]:
    """Points where three or more connections meet (pins, wire ends, wires passing through)."""
    return sorted(SheetIndex(doc).junctions)


def simplify(points, keep=frozenset()) -> tuple:
    """Drop repeated points and straight-through bends (unless something connects there)."""
    pts = []
    for pt in points:
        if not pts or pts[-1] != pt:
            pts.append(pt)
    changed = True
    while changed and len(pts) > 2:
        changed = False
        for i in range(1, len(pts) - 1):
            (ax, ay), (bx, by), (cx, cy) = pts[i - 1], pts[i], pts[i + 1]
            straight = (ax == bx == cx) or (ay == by == cy)
            if straight and pts[i] not in keep:
                del pts[i]
                changed = True
                break
    if len(pts) == 1:
        pts.append(pts[0])
    return tuple(pts)


def _moved_end(points: list, at_start: bool, new: Point) -> list:
    """Move one end of a polyline to ``new``, adding a bend so every segment stays orthogonal.

    The segment leaving the end keeps its direction (a pin's lead keeps leaving the same way);
    the jog goes in at the far end of that segment.
    """
    pts = list(points) if at_start else list(reversed(points))
    old, nxt = pts[0], pts[1]
    pts[0] = new
    if new[0] != nxt[0] and new[1] != nxt[1]:
        vertical = old[0] == nxt[0]
        bend = (new[0], nxt[1]) if vertical else (nxt[0], new[1])
        pts.insert(1, bend)
    return pts if at_start else list(reversed(pts))


def _follow(doc: Document, moved: dict, patch: Patch, skip_wires=frozenset(), keep=frozenset()) -> None:
    """Add to ``patch`` what keeps the pins of parts that ``moved`` (name -> new Part) connected.

    A wire ending on a moved pin has that end moved (with a bend where needed). A moved pin
    that touched something without being a wire's end — the middle of a wire, or another
    part's pin — gets a new wire from where it was to where it is.
    """
    where, leads = {}, {}
    for name, new in moved.items():
        old_pins, new_pins = doc.parts[name].pins(), new.pins()
        for pin, pt in old_pins.items():
            where[pt] = new_pins[pin]
            dx, dy = new_pins[pin][0] - new.x, new_pins[pin][1] - new.y
            leads[pt] = abs(dy) >= abs(dx)
    ends = set()
    for wid, w in doc.wires.items():
        ends.update((w.points[0], w.points[-1]))
        if wid in skip_wires:
            continue
        pts = list(w.points)
        start, end = pts[0] in where, pts[-1] in where
        if not (start or end):
            continue
        if start and end and len(pts) == 2 and pts[0] != pts[1]:
            # Both ends ride along: re-route as one bend instead of two jogs.
            a, b = where[pts[0]], where[pts[-1]]
            vertical = pts[0][0] == pts[1][0]
            pts = [a, (a[0], b[1]) if vertical else (b[0], a[1]), b]
        else:
            if start:
                pts = _moved_end(pts, True, where[w.points[0]])
            if end:
                pts = _moved_end(pts, False, where[w.points[-1]])
        patch.wires[wid] = (w, Wire(wid, simplify(pts, keep)))
    still = Counter(pt for n, p in doc.parts.items() if n not in moved for pt in p.pins().values())
    staying = {i: w.points for i, w in doc.wires.items() if i not in skip_wires}
    lines, corners = Lines(staying.items()), {pt for pts in staying.values() for pt in pts}
    wid = doc.new_wire_id()
    for old, new in where.items():
        if old == new or old in ends:
            continue
        if old in corners or lines.through(old) or still[old]:
            bend = (new[0], old[1]) if leads[old] else (old[0], new[1])
            patch.wires[wid] = (None, Wire(wid, simplify([new, bend, old])))
            wid += 1


def _connection_points(doc: Document) -> frozenset:
    """Points a bend must not be simplified away at: pins and every wire end."""
    pts = set(pin_points(doc))
    for w in doc.wires.values():
        pts.update((w.points[0], w.points[-1]))
    return frozenset(pts)


# -- gestures --------------------------------------------------------------------
def move(doc: Document, names, wire_ids, dx: int, dy: int) -> Patch:
    """Move parts and wires by a grid step; wires attached to moved pins follow them."""
    patch = Patch()
    moved = {n: replace(doc.parts[n], x=doc.parts[n].x + dx, y=doc.parts[n].y + dy) for n in names}
    for n, p in moved.items():
        patch.parts[n] = (doc.parts[n], p)
    for wid in wire_ids:
        w = doc.wires[wid]
        patch.wires[wid] = (w, Wire(wid, tuple((x + dx, y + dy) for x, y in w.points)))
    _follow(doc, moved, patch, skip_wires=set(wire_ids), keep=_connection_points(doc))
    return patch


def rotate(doc: Document, names, quarter_turns: int = 1) -> Patch:
    """Turn each part clockwise about its origin by quarter turns; attached wires follow."""
    moved = {}
    for n in names:
        p = doc.parts[n]
        moved[n] = replace(p, rotation=ROTATIONS[(ROTATIONS.index(p.rotation) + quarter_turns) % 4])
    return _transformed(doc, moved)


def mirror(doc: Document, names) -> Patch:
    """Flip each part left-to-right on the sheet (about its origin); attached wires follow.

    Flipping the part's own frame would flip up-down for a part turned a quarter, so the
    rotation is adjusted to keep the flip left-to-right as the user sees it.
    """
    moved = {}
    for n in names:
        p = doc.parts[n]
        rotation = p.rotation if p.rotation in (0, 180) else (p.rotation + 180) % 360
        moved[n] = replace(p, mirror=not p.mirror, rotation=rotation)
    return _transformed(doc, moved)


def _transformed(doc: Document, moved: dict) -> Patch:
    patch = Patch(parts={n: (doc.parts[n], p) for n, p in moved.items()})
    _follow(doc, moved, patch, keep=_connection_points(doc))
    return patch


def add_part(doc: Document, part: Part) -> Patch:
    """Place a part; the first signal source placed becomes the design's signal input.

    A two-pin part put down with both pins on one wire goes in series: the wire is cut
    between the pins (see :func:`_insert_in_series`), since joining both pins to it would
    short the part.
    """
    patch = Patch(parts={part.name: (None, part)})
    if KINDS[part.kind].signal and doc.input_source is None:
        patch.meta["input_source"] = (None, part.name)
    pins = tuple(part.pins().values())
    if len(pins) == 2:
        _insert_in_series(doc, pins, patch)
    return patch


def _along(points, pt: Point) -> float | None:
    """How far along the polyline ``points`` the point ``pt`` lies (scene units), or None."""
    run = 0
    for a, b in zip(points, points[1:]):
        inside = (a[0] == b[0] == pt[0] and min(a[1], b[1]) <= pt[1] <= max(a[1], b[1])) or \
                 (a[1] == b[1] == pt[1] and min(a[0], b[0]) <= pt[0] <= max(a[0], b[0]))
        if inside:
            return run + abs(pt[0] - a[0]) + abs(pt[1] - a[1])
        run += abs(b[0] - a[0]) + abs(b[1] - a[1])
    return None


def _cut(points, start: float, end: float) -> tuple:
    """The part of the polyline ``points`` between distances ``start`` and ``end`` along it."""
    out, run = [], 0
    for a, b in zip(points, points[1:]):
        length = abs(b[0] - a[0]) + abs(b[1] - a[1])
        lo, hi = max(start, run), min(end, run + length)
        if lo <= hi and length:
            ux, uy = (b[0] - a[0]) // length, (b[1] - a[1]) // length
            for t in (lo, hi):
                pt = (a[0] + ux * (t - run), a[1] + uy * (t - run))
                if not out or out[-1] != pt:
                    out.append(pt)
        run += length
    return tuple(out)


def _insert_in_series(doc: Document, pins, patch: Patch) -> None:
    """Cut each wire that both ``pins`` lie on between them, leaving each pin on a wire end."""
    wid = doc.new_wire_id()
    for w in doc.wires.values():
        t = [_along(w.points, pin) for pin in pins]
        if None in t or t[0] == t[1]:
            continue
        lo, hi = sorted(t)
        total = sum(abs(b[0] - a[0]) + abs(b[1] - a[1]) for a, b in zip(w.points, w.points[1:]))
        pieces = [p for p in (_cut(w.points, 0, lo), _cut(w.points, hi, total)) if len(p) >= 2]
        keep = [Wire(w.id, pieces[0])] if pieces else []
        for piece in pieces[1:]:
            keep.append(Wire(wid, piece))
            wid += 1
        patch.wires[w.id] = (w, keep[0] if keep else None)
        for extra in keep[1:]:
            patch.wires[extra.id] = (None, extra)


def delete(doc: Document, names, wire_ids) -> Patch:
    """Remove parts and wires, with the settings that named a removed part."""
    names = set(names)
    patch = Patch(parts={n: (doc.parts[n], None) for n in names},
                  wires={w: (doc.wires[w], None) for w in wire_ids})
    if doc.input_source in names:
        patch.meta["input_source"] = (doc.input_source, None)
    for element, band in band_pins_of(doc, names).items():
        patch.bands[element] = (band, None)
    return patch


def band_pins_of(doc: Document, names) -> dict:
    """The band pins (element -> band) of parts ``names``: a part's own, and those of the
    elements inside a block (``Q2.cmu`` belongs to ``Q2``)."""
    names = set(names)
    return {e: b for e, b in doc.band_pins.items() if e.split(".", 1)[0] in names}


def add_wire(doc: Document, points) -> Patch:
    """Draw a wire; a wire it ends on mid-segment gets a bend there so the two visibly join."""
    wid = doc.new_wire_id()
    pts = simplify(points, _connection_points(doc))
    patch = Patch(wires={wid: (None, Wire(wid, pts))})
    for end in {pts[0], pts[-1]}:
        for other in doc.wires.values():
            o = patch.wires.get(other.id, (None, other))[1]
            for i, (a, b) in enumerate(zip(o.points, o.points[1:])):
                if on_segment(end, a, b):
                    split = o.points[: i + 1] + (end,) + o.points[i + 1:]
                    patch.wires[other.id] = (other, Wire(other.id, split))
                    break
    return patch


def edit_field(doc: Document, name: str, key: str, text: str) -> Patch:
    """Set one field's text (as typed; values are parsed when analysed)."""
    p = doc.parts[name]
    return Patch(parts={name: (p, p.with_params(**{key: text}))})


def set_sourcing(doc: Document, name: str, **changes: str) -> Patch:
    """Set a part's knob status, E series or tolerance text (``knob=``, ``series=``, ``tolerance=``)."""
    p = doc.parts[name]
    return Patch(parts={name: (p, p.with_sourcing(**changes))})


def set_input(doc: Document, name: str | None) -> Patch:
    """Choose the source that carries the signal (or none)."""
    return Patch(meta={"input_source": (doc.input_source, name)})


def set_meta(doc: Document, key: str, value: str) -> Patch:
    """Change the design's title or description."""
    return Patch(meta={key: (getattr(doc, key), value)})


def set_target(doc: Document, key: str, text: str) -> Patch:
    """Set one design target's text (as typed; read when checked), or clear it with ''."""
    return Patch(targets={key: (doc.targets.get(key), text or None)})


def pin_band(doc: Document, element: str, band: str | None) -> Patch:
    """Pin an element to the low or high band, or let the engine decide (None)."""
    return Patch(bands={element: (doc.band_pins.get(element), band)})


def references_to(doc: Document, old: str, new: str) -> Patch:
    """The edits that keep fields naming part ``old`` pointing at it once it is called ``new``."""
    patch = Patch()
    for p in doc.parts.values():
        for f in KINDS[p.kind].fields:
            if f.unit == "name" and p.params.get(f.key) == old:
                patch.parts[p.name] = (p, p.with_params(**{f.key: new}))
    return patch


def fresh_names(doc: Document, parts) -> dict:
    """Names for ``parts`` (old name -> new name) that clash with nothing on the sheet."""
    taken = {n.lower() for n in doc.parts}
    out = {}
    for p in parts:
        name = p.name
        if name.lower() in taken:
            prefix, n = KINDS[p.kind].prefix, 1
            while f"{prefix}{n}".lower() in taken:
                n += 1
            name = f"{prefix}{n}"
        taken.add(name.lower())
        out[p.name] = name
    return out


def paste(doc: Document, fragment: Document, dx: int, dy: int) -> Patch:
    """Add a copied fragment's parts and wires, offset and renamed where names clash.

    A copied field naming a copied part follows that part's new name.
    """
    names = fresh_names(doc, fragment.parts.values())
    patch = Patch()
    for p in fragment.parts.values():
        params = dict(p.params)
        for f in KINDS[p.kind].fields:
            if f.unit == "name" and params.get(f.key) in names:
                params[f.key] = names[params[f.key]]
        new = replace(p, name=names[p.name], x=p.x + dx, y=p.y + dy, params=params)
        patch.parts[new.name] = (None, new)
    for element, band in band_pins_of(fragment, names).items():
        owner, dot, inner = element.partition(".")
        pasted = names[owner] + dot + inner
        patch.bands[pasted] = (doc.band_pins.get(pasted), band)
    wid = doc.new_wire_id()
    for w in fragment.wires.values():
        patch.wires[wid] = (None, Wire(wid, tuple((x + dx, y + dy) for x, y in w.points)))
        wid += 1
    return patch


def fragment_of(doc: Document, names, wire_ids) -> Document:
    """A document holding copies of some parts and wires (what Copy puts on the clipboard)."""
    frag = Document("Copied parts")
    for n in names:
        frag.add_part(doc.parts[n])
    for wid in wire_ids:
        frag.add_wire(Wire(frag.new_wire_id(), doc.wires[wid].points))
    for element, band in band_pins_of(doc, names).items():
        frag.set_band_pin(element, band)
    return frag
