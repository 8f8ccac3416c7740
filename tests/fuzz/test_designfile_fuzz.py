"""Design files that must never crash the loader, and value fields that must never crash the parser.

The property throughout: a file given to :func:`bandsketch.engine.design.designfile.load_design` is either
refused with a :class:`~bandsketch.engine.core.errors.DesignFileError` whose message names the file and
what is wrong, or loaded intact — every part, wire and setting it holds, nothing dropped,
and the document survives a save and a reload unchanged. No other exception escapes, and a
document that loads can be handed to the netlister without anything but a CircuitError.

The inputs: random JSON of any shape; mutations of valid designs (a key removed, a value
replaced by random JSON, the text truncated, a part duplicated, huge, negative and
non-finite numbers, unicode and duplicate names, deep nesting); and a list of named
hostile files (a 10 MB file, a newer version, NaN and Infinity literals, duplicate keys,
lone surrogates, a byte-order mark, bytes that are not UTF-8).

No outside reference: these are properties of our own format (common practice, no source).
"""

from __future__ import annotations

import copy
import json
import math
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bandsketch.engine.design.designfile import (FORMAT_NAME, FORMAT_VERSION, MAX_FILE_BYTES, document_from_dict,
                               document_to_dict, load_design, save_design)
from bandsketch.engine.core.errors import BadValueError, CircuitError, DesignFileError
from bandsketch.engine.design.netlist import connectivity_problems, design_to_circuit
from bandsketch.engine.design import schema
from bandsketch.engine.design.parts import GRID, KINDS, ROTATIONS
from bandsketch.engine.design.schema import MAX_TEXT
from bandsketch.engine.core.values import parse_value

FUZZ = settings.get_profile("bandsketch-fuzz")
ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "sample_designs").glob("*.json"))


# -- helpers ---------------------------------------------------------------------------

def write(tmp_path, content, name="design.json") -> Path:
    path = tmp_path / name
    if isinstance(content, str):
        content = content.encode("utf-8", "surrogatepass")
    path.write_bytes(content)
    return path


def check_outcome(path: Path, engine: bool = True):
    """Load ``path``; return the document or the DesignFileError. Anything else fails the test."""
    try:
        doc = load_design(path)
    except DesignFileError as exc:
        message = str(exc)
        assert message.startswith(f"{path.name}: "), message
        assert len(message) > len(path.name) + 8, f"message says nothing: {message!r}"
        assert "Traceback" not in message
        return exc
    check_intact(doc, path, engine)
    return doc


def check_intact(doc, path: Path, engine: bool = True) -> None:
    """A loaded document holds exactly what the file says, and survives save and reload."""
    data = json.loads(path.read_text("utf-8"))
    assert [p.name for p in doc.parts.values()] == [p["name"] for p in data["parts"]]
    for part, raw in zip(doc.parts.values(), data["parts"]):
        assert (part.kind, part.x, part.y) == (raw["kind"], raw["x"], raw["y"])
        assert part.rotation == raw.get("rotation", 0)
        assert part.mirror == raw.get("mirror", False)
        for key, text in raw.get("params", {}).items():
            assert part.params[key] == text
    wires = data.get("wires", [])
    assert len(doc.wires) == len(wires)
    for wire, raw in zip(doc.wires.values(), wires):
        assert [list(p) for p in wire.points] == raw["points"]
    assert doc.input_source == data.get("input")
    assert dict(doc.band_pins) == data.get("bands", {})
    assert dict(doc.targets) == {k: v for k, v in data.get("targets", {}).items() if v}
    again = path.with_name("resaved-" + path.name)
    save_design(doc, again)
    assert document_to_dict(load_design(again)) == document_to_dict(doc)
    if not engine:
        return
    # A loaded document goes to the engine: it may be ill-posed, but it never crashes it.
    try:
        design_to_circuit(doc)
    except CircuitError:
        pass
    for problem in connectivity_problems(doc):
        assert problem.message


# -- strategies ------------------------------------------------------------------------

json_scalars = (st.none() | st.booleans() | st.integers(-10**30, 10**30)
                | st.floats(allow_nan=False, allow_infinity=False) | st.text(max_size=20))
json_values = st.recursive(
    json_scalars,
    lambda inner: st.lists(inner, max_size=5) | st.dictionaries(st.text(max_size=10), inner, max_size=5),
    max_leaves=25,
)
names = st.from_regex(r"[A-Za-z][A-Za-z0-9_]{0,8}", fullmatch=True)
field_texts = st.sampled_from(["4k7", "2.2n", "100", "1meg", "", "R47", "-3", "banana", "1e999",
                               "npn", "pnp", "small_signal", "operating_point", "V1"]) | st.text(max_size=12)


def schema_texts(f):
    """Texts for catalogue field ``f`` that the design schema accepts: its choices, names, values
    at the ends of the usable range, and any other text the schema lets through (else the default)."""
    if f.unit == "choice":
        return st.sampled_from(f.choices)
    typed = names if f.unit in ("name", "net") else st.sampled_from(
        ["4k7", "2.2n", "1e-24", "1e24", "-1e24", "0", " 47 ", "1meg", "R47", "-3"])
    return (typed | field_texts | st.text(max_size=MAX_TEXT + 5)).map(
        lambda text: text if schema.field_problem("P", f, text) is None else f.default)


@st.composite
def designs(draw):
    """A valid design as parsed JSON: unique names, grid positions, texts in known fields."""
    count = draw(st.integers(0, 12))
    taken, parts = set(), []
    for _ in range(count):
        name = draw(names.filter(lambda n: n.lower() not in taken))
        taken.add(name.lower())
        kind = draw(st.sampled_from(sorted(KINDS)))
        fields = KINDS[kind].fields
        chosen = draw(st.sets(st.sampled_from(fields), max_size=len(fields))) if fields else ()
        params = {f.key: draw(schema_texts(f)) for f in chosen}
        parts.append({"kind": kind, "name": name,
                      "x": GRID * draw(st.integers(-50, 50)), "y": GRID * draw(st.integers(-50, 50)),
                      "rotation": draw(st.sampled_from(ROTATIONS)), "mirror": draw(st.booleans()),
                      "params": params})
    point = st.tuples(st.integers(-50, 50), st.integers(-50, 50)).map(lambda p: [GRID * p[0], GRID * p[1]])
    wires = draw(st.lists(st.lists(point, min_size=2, max_size=5).map(lambda pts: {"points": pts}), max_size=8))
    data = {"format": FORMAT_NAME, "version": FORMAT_VERSION,
            "title": draw(st.text(max_size=30)),
            "parts": parts, "wires": wires}
    sources = [p["name"] for p in parts if p["kind"] in ("vsource", "isource")]
    if sources and draw(st.booleans()):
        data["input"] = draw(st.sampled_from(sources))
    if parts and draw(st.booleans()):
        data["bands"] = {p["name"]: draw(st.sampled_from(["low", "high"]))
                         for p in parts if p["kind"] == "capacitor"}
    if draw(st.booleans()):
        data["targets"] = {"f_high_min": draw(st.sampled_from(["1M", "10k", "2.5meg"]))}
    return data


def paths_of(value, prefix=()):
    """Every path (tuple of keys and indices) into a parsed JSON value, the root included."""
    yield prefix
    if isinstance(value, dict):
        for k, v in value.items():
            yield from paths_of(v, prefix + (k,))
    elif isinstance(value, list):
        for i, v in enumerate(value):
            yield from paths_of(v, prefix + (i,))


def at(value, path):
    for key in path:
        value = value[key]
    return value


@st.composite
def mutated(draw):
    """A valid design with one to three mutations, returned as JSON text."""
    base = draw(st.sampled_from([json.loads(p.read_text("utf-8")) for p in SAMPLES]) | designs())
    data = copy.deepcopy(base)
    for _ in range(draw(st.integers(1, 3))):
        paths = [p for p in paths_of(data) if p]
        if not paths:
            break
        path = draw(st.sampled_from(paths))
        parent, key = at(data, path[:-1]), path[-1]
        action = draw(st.sampled_from(["delete", "replace", "huge", "negative", "duplicate", "unicode", "nest"]))
        if action == "delete":
            del parent[key]
        elif action == "replace":
            parent[key] = draw(json_values)
        elif action == "huge":
            parent[key] = draw(st.sampled_from([10**400, -10**400, 1e308, 10**7 + 1, 2**63, 1e-320]))
        elif action == "negative":
            parent[key] = -abs(parent[key]) if isinstance(parent[key], (int, float)) else -1
        elif action == "duplicate" and isinstance(parent, list):
            parent.append(copy.deepcopy(parent[key]))
        elif action == "unicode":
            parent[key] = draw(st.sampled_from(["Ω1", "R\u00b5", "R1\n", "r1", "", "\u200bR", "Rñ", "𝑅1", "\ud800"]))
        elif action == "nest":
            deep = parent[key]
            for _ in range(draw(st.integers(1, 60))):
                deep = [deep]
            parent[key] = deep
    text = json.dumps(data, ensure_ascii=draw(st.booleans()), indent=draw(st.sampled_from([None, 1])))
    if draw(st.booleans()):
        # Non-finite literals, as another program might write them.
        text = text.replace("0", draw(st.sampled_from(["NaN", "Infinity", "-Infinity", "1e999", "0"])), 1)
    if draw(st.integers(0, 3)) == 0:
        text = text[: draw(st.integers(0, max(0, len(text) - 1)))]
    return text


# -- properties ------------------------------------------------------------------------

@FUZZ
@given(data=designs())
def test_valid_designs_load_intact(tmp_path_factory, data):
    path = write(tmp_path_factory.mktemp("valid"), json.dumps(data, ensure_ascii=False))
    outcome = check_outcome(path)
    assert not isinstance(outcome, DesignFileError), outcome


@FUZZ
@given(value=json_values)
def test_random_json_is_refused_or_loaded(tmp_path_factory, value):
    check_outcome(write(tmp_path_factory.mktemp("random"), json.dumps(value)))


@FUZZ
@given(value=json_values)
def test_random_json_with_the_right_header_is_refused_or_loaded(tmp_path_factory, value):
    data = {"format": FORMAT_NAME, "version": FORMAT_VERSION, "parts": value}
    check_outcome(write(tmp_path_factory.mktemp("header"), json.dumps(data)))


@FUZZ
@given(text=mutated())
def test_mutated_designs_are_refused_or_loaded_intact(tmp_path_factory, text):
    check_outcome(write(tmp_path_factory.mktemp("mutated"), text))


@FUZZ
@given(raw=st.binary(max_size=300))
def test_random_bytes_are_refused_or_loaded(tmp_path_factory, raw):
    check_outcome(write(tmp_path_factory.mktemp("bytes"), raw))


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.name)
def test_every_truncation_of_a_sample_is_refused(tmp_path, sample):
    text = sample.read_text("utf-8")
    step = max(1, len(text) // 300)
    for cut in range(0, len(text.rstrip()), step):
        outcome = check_outcome(write(tmp_path, text[:cut]))
        assert isinstance(outcome, DesignFileError), f"cut at {cut} loaded"
        assert "truncated" in str(outcome) or "not valid JSON" in str(outcome) or cut == 0, outcome


# -- named hostile files ----------------------------------------------------------------

def header(**extra) -> dict:
    return {"format": FORMAT_NAME, "version": FORMAT_VERSION, "parts": [], **extra}


def resistor(name="R1", **extra):
    return {"kind": "resistor", "name": name, "x": 0, "y": 0, "params": {"value": "1k"}, **extra}


HOSTILE = {
    "empty": (b"", "not valid JSON"),
    "only whitespace": (b"  \n", "not valid JSON"),
    "not json": (b"hello", "not valid JSON"),
    "a list": ("[]", "expected an object"),
    "a number": ("42", "expected an object"),
    "wrong format": (json.dumps({**header(), "format": "something-else"}), "not a Bandsketch design"),
    "no format": (json.dumps({"version": 1, "parts": []}), "missing key(s) format"),
    "no parts": (json.dumps({"format": FORMAT_NAME, "version": 1}), "missing key(s) parts"),
    "newer version": (json.dumps(header(version=FORMAT_VERSION + 1)), "newer than this Bandsketch reads"),
    "far newer version": (json.dumps(header(version=10**12)), "newer than this Bandsketch reads"),
    "version zero": (json.dumps(header(version=0)), "not a valid version"),
    "version text": (json.dumps(header(version="1")), "whole number"),
    "version true": (json.dumps(header(version=True)), "whole number"),
    "NaN literal": ('{"format": "bandsketch-design", "version": NaN, "parts": []}', "NaN"),
    "Infinity literal": ('{"format": "bandsketch-design", "version": 1, "parts": [{"kind": "resistor", '
                         '"name": "R1", "x": Infinity, "y": 0}]}', "Infinity"),
    "-Infinity literal": ('{"format": "bandsketch-design", "version": 1, "parts": [], "wires": '
                          '[{"points": [[0, 0], [-Infinity, 0]]}]}', "-Infinity"),
    "overflowing float": ('{"format": "bandsketch-design", "version": 1, "parts": [{"kind": "resistor", '
                          '"name": "R1", "x": 1e999, "y": 0}]}', "part R1 x"),
    "huge integer coordinate": ('{"format": "bandsketch-design", "version": 1, "parts": [{"kind": '
                                '"resistor", "name": "R1", "x": 1' + "0" * 400 + ', "y": 0}]}', "part R1 x"),
    "5000-digit integer": ('{"format": "bandsketch-design", "version": ' + "9" * 5000 + ', "parts": []}',
                           "a number 5000 digits long"),
    "negative rotation": (json.dumps(header(parts=[resistor(rotation=-90)])), "rotation"),
    "fractional coordinate": (json.dumps(header(parts=[resistor(x=0.5)])), "part R1 x"),
    "coordinate too far": (json.dumps(header(parts=[resistor(y=-10**8)])), "part R1 y"),
    "unknown kind": (json.dumps(header(parts=[{**resistor(), "kind": "flux capacitor"}])), "unknown kind"),
    "unknown field": (json.dumps(header(parts=[resistor(params={"value": "1k", "colour": "red"})])), "colour"),
    "value not text": (json.dumps(header(parts=[resistor(params={"value": 1000})])), "expected text"),
    "mirror not bool": (json.dumps(header(parts=[resistor(mirror=1)])), "mirror"),
    "unknown top key": (json.dumps(header(extra_stuff=1)), "unknown key(s) extra_stuff"),
    "missing name": (json.dumps(header(parts=[{"kind": "resistor", "x": 0, "y": 0}])), "missing key(s) name"),
    "duplicate names": (json.dumps(header(parts=[resistor("R1"), resistor("R1")])), "already the name"),
    "names differing in case": (json.dumps(header(parts=[resistor("R1"), resistor("r1")])), "already the name"),
    "unicode name": (json.dumps(header(parts=[resistor("Ω1")])), "not a usable name"),
    "name with newline": (json.dumps(header(parts=[resistor("R1\n")])), "not a usable name"),
    "empty name": (json.dumps(header(parts=[resistor("")])), "is empty"),
    "long title": (json.dumps(header(title="x" * 1000)), "characters is too long"),
    "lone surrogate": ('{"format": "bandsketch-design", "version": 1, "parts": [], "title": "\\ud800"}',
                       "title: a broken character"),
    "duplicate key": ('{"format": "bandsketch-design", "version": 1, "parts": [], "parts": []}', "the key 'parts' twice"),
    "input not a source": (json.dumps(header(parts=[resistor()], input="R1")), "input"),
    "bad band": (json.dumps(header(bands={"C1": "middle"})), "C1 is pinned"),
    "unknown target": (json.dumps(header(targets={"speed": "1"})), "unknown target"),
    "wire of one point": (json.dumps(header(wires=[{"points": [[0, 0]]}])), "wire 1"),
    "wire point not a pair": (json.dumps(header(wires=[{"points": [[0, 0], [1, 2, 3]]}])), "wire 1 point 2"),
    "byte-order mark": (b"\xef\xbb\xbf" + json.dumps(header()).encode(), "not valid JSON"),
    "latin-1 bytes": (json.dumps(header(title="caf\u00e9"), ensure_ascii=False).encode("latin-1"), "not UTF-8"),
    "deep nesting": ("[" * 100_000 + "]" * 100_000, "nested too deeply"),
    "deep nesting in a field": (json.dumps(header(title=None))[:-1] + ', "targets": ' + "[" * 50_000
                                + "]" * 50_000 + "}", "nested too deeply"),
}


@pytest.mark.parametrize("name", sorted(HOSTILE))
def test_hostile_file_is_refused_with_its_fault_named(tmp_path, name):
    content, expected = HOSTILE[name]
    outcome = check_outcome(write(tmp_path, content))
    assert isinstance(outcome, DesignFileError), f"{name} loaded"
    assert expected in str(outcome), str(outcome)


def test_a_10_mb_file_is_refused_before_parsing(tmp_path):
    part = json.dumps(resistor("R{}"))
    body = ",".join(part.replace("R{}", f"R{i}") for i in range(10 * 1024 * 1024 // len(part) + 1))
    text = json.dumps(header())[:-3] + "[" + body + "]}"
    assert len(text) > 10 * 1024 * 1024 > MAX_FILE_BYTES
    outcome = check_outcome(write(tmp_path, text))
    assert isinstance(outcome, DesignFileError)
    assert "MB is larger than a design file can be" in str(outcome)


def test_a_large_file_under_the_limit_loads_intact(tmp_path):
    # 2,000 parts and 400 wires of 1,000 points: about 6.6 MiB, under the 8 MiB limit.
    # (Not 20,000 parts: loading is quadratic in the part count, see docs/benchmarks.md.)
    parts = [{**resistor(f"R{i}"), "x": GRID * (i % 100), "y": GRID * (i // 100)} for i in range(2000)]
    wires = [{"points": [[GRID * ((j + k) % 2 + 5000 + 40 * j), GRID * (k + 2 * j)] for k in range(1000)]}
             for j in range(400)]
    path = write(tmp_path, json.dumps(header(parts=parts, wires=wires)))
    assert 6 * 1024 * 1024 < path.stat().st_size < MAX_FILE_BYTES
    doc = check_outcome(path, engine=False)
    assert len(doc.parts) == 2000 and len(doc.wires) == 400


def test_missing_file_and_a_directory_are_refused(tmp_path):
    assert "cannot be read" in str(check_outcome(tmp_path / "nowhere.json"))
    folder = tmp_path / "folder.json"
    folder.mkdir()
    assert "cannot be read" in str(check_outcome(folder))


def test_document_from_dict_refuses_python_values_json_cannot_hold():
    # Scripts may hand parsed data straight in; NaN and infinities never become coordinates.
    for bad in (math.nan, math.inf, -math.inf):
        with pytest.raises(DesignFileError, match="part R1 x"):
            document_from_dict(header(parts=[resistor(x=bad)]), "script")


# -- value fields ----------------------------------------------------------------------

UNITS = [None, "Ω", "F", "H", "S", "A/V", "V/V", "A/A", "V", "A", "Hz", "K", "", "1/V"]
value_like = st.builds(
    lambda *pieces: "".join(pieces),
    st.sampled_from(["", "+", "-", "\u2212", " "]),
    st.sampled_from(["", "0", "1", "4", "47", "4.7", ".5", "5.", "1e3", "1E-3", "9" * 400, "1e999", "1e-999",
                     "inf", "∞", "nan", "0x10", "1_000"]),
    st.sampled_from(["", "f", "p", "n", "u", "µ", "μ", "m", "k", "K", "M", "meg", "MEG", "G", "T", "R", "x"]),
    st.sampled_from(["", "7", "47", "0"]),
    st.sampled_from(["", " ", "Ω", "ohm", "ohms", "F", "H", "S", "A/V", "Hz", "V", "K", "kk", ","]),
)


@FUZZ
@given(text=st.text(max_size=40) | value_like, unit=st.sampled_from(UNITS),
       zero=st.booleans(), negative=st.booleans(), infinite=st.booleans())
def test_any_text_is_a_number_or_a_clear_error(text, unit, zero, negative, infinite):
    try:
        value = parse_value(text, unit=unit, part="R7", field="value",
                            allow_zero=zero, allow_negative=negative, allow_infinite=infinite)
    except BadValueError as exc:
        assert str(exc).startswith("R7 value"), str(exc)
        assert exc.part == "R7" and exc.field == "value"
        assert len(str(exc)) > len("R7 value") + 5
        return
    assert type(value) is float
    assert not math.isnan(value)
    assert infinite or math.isfinite(value)
    assert zero or value != 0
    assert negative or value >= 0


@FUZZ
@given(value=st.floats(min_value=1e-15, max_value=1e15), unit=st.sampled_from(["Ω", "F", "H", "Hz"]))
def test_formatted_values_read_back(value, unit):
    from bandsketch.engine.core.values import format_value
    text = format_value(value, unit, digits=12)
    assert parse_value(text, unit=unit) == pytest.approx(value, rel=1e-11)


@FUZZ
@given(thing=json_values.filter(lambda v: not isinstance(v, (str, int, float)) or isinstance(v, bool)))
def test_non_text_values_are_a_clear_error(thing):
    with pytest.raises(BadValueError, match="C3 value"):
        parse_value(thing, unit="F", part="C3", field="value")
