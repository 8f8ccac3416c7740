"""Design files: round trips, every kind of corrupt file refused by name, atomic saves.

Sources: JSON as in RFC 8259 (T. Bray, ed., "The JavaScript Object Notation (JSON) Data
Interchange Format", IETF, 2017), which has no NaN or Infinity; write-to-temporary, fsync,
rename for atomic replacement is common practice (POSIX rename(2) semantics), no source.
"""

import json
import os

import pytest

from bandsketch.engine.design.designfile import (FORMAT_NAME, FORMAT_VERSION, MAX_FILE_BYTES, document_from_dict,
                               document_to_dict, load_design, save_design)
from bandsketch.engine.design.document import Document, Part, Wire
from bandsketch.engine.core.errors import DesignFileError
from bandsketch.engine.design.parts import KINDS


def _part(kind, name, x, y, rotation=0, mirror=False, params=None):
    """A part as the editor places it: every field starts at its default text."""
    return Part(kind, name, x, y, rotation, mirror, {**KINDS[kind].default_params(), **(params or {})})


def _design():
    """An invented scenario: a geophone buffer, one common-emitter stage."""
    doc = Document("geophone buffer (invented)")
    doc.description = "one stage, ünïcode ok: Ω µ"
    doc.add_part(_part("vsource", "Vsig", 0, 0))
    doc.add_part(_part("resistor", "Rs", 60, -40, rotation=90, params={"value": "600"}))
    doc.add_part(_part("capacitor", "Cin", 120, 0, mirror=True, params={"value": "4u7"}))
    doc.add_part(_part("bjt", "Q1", 200, 0, rotation=180, mirror=True,
                      params={"mode": "operating_point", "ic": "1m", "beta": "150", "ft": "300M"}))
    doc.add_part(_part("isource", "Itest", 400, 0))
    doc.add_part(_part("ground", "GND1", 0, 60))
    doc.add_part(_part("label", "N1", 240, -60, params={"net": "out"}))
    doc.add_wire(Wire(doc.new_wire_id(), ((0, -40), (0, -80), (60, -80))))
    doc.add_wire(Wire(doc.new_wire_id(), ((0, 40), (0, 60))))
    doc.set_meta(input_source="Vsig")
    doc.set_band_pin("Cin", "low")
    doc.set_band_pin("Q1.cmu", "high")
    doc.set_target("f_high_min", "1M")
    doc.set_target("gain", "40")
    return doc


def _assert_same(a: Document, b: Document):
    assert a.title == b.title and a.description == b.description
    assert dict(a.parts) == dict(b.parts)
    assert list(a.parts) == list(b.parts)  # order kept
    assert [w.points for w in a.wires.values()] == [w.points for w in b.wires.values()]
    assert a.input_source == b.input_source
    assert dict(a.band_pins) == dict(b.band_pins)
    assert dict(a.targets) == dict(b.targets)


def test_dict_round_trip():
    doc = _design()
    data = document_to_dict(doc)
    assert data["format"] == FORMAT_NAME and data["version"] == FORMAT_VERSION
    _assert_same(doc, document_from_dict(json.loads(json.dumps(data))))


def test_file_round_trip(tmp_path):
    doc = _design()
    path = tmp_path / "buffer.bsd"
    save_design(doc, path)
    again = load_design(path)
    _assert_same(doc, again)
    # Saving what was loaded gives the same bytes (a stable format).
    first = path.read_bytes()
    save_design(again, path)
    assert path.read_bytes() == first


def test_missing_params_take_the_defaults():
    data = {"format": FORMAT_NAME, "version": 1,
            "parts": [{"kind": "resistor", "name": "R1", "x": 0, "y": 0}]}
    doc = document_from_dict(data)
    assert doc.parts["R1"].params["value"] == "10k"
    assert doc.parts["R1"].rotation == 0 and doc.parts["R1"].mirror is False


def _good():
    return document_to_dict(_design())


def _refused(data, *needles):
    with pytest.raises(DesignFileError) as info:
        document_from_dict(data, "broken.bsd")
    msg = str(info.value)
    assert msg.startswith("broken.bsd:"), msg
    for n in needles:
        assert n in msg, msg
    return msg


def test_wrong_format_and_versions():
    d = _good()
    d["format"] = "something-else"
    _refused(d, "not a Bandsketch design")
    d = _good()
    d["version"] = FORMAT_VERSION + 1
    _refused(d, "newer")
    d = _good()
    d["version"] = "1"
    _refused(d, "version")
    d = _good()
    d["version"] = 0
    _refused(d, "version")


@pytest.mark.parametrize("key", ["format", "version", "parts"])
def test_missing_top_level_keys(key):
    d = _good()
    del d[key]
    _refused(d, "missing", key)


def test_unknown_top_level_key():
    d = _good()
    d["extra"] = 1
    _refused(d, "unknown", "extra")


def test_not_an_object():
    _refused([1, 2, 3], "expected an object")
    _refused(None, "expected an object")


@pytest.mark.parametrize(
    ("edit", "needles"),
    [
        (lambda p: p.update(kind="transformer"), ["unknown kind", "transformer"]),
        (lambda p: p.update(kind=5), ["kind", "expected text"]),
        (lambda p: p.update(name="1bad"), ["not a usable name"]),
        (lambda p: p.update(name=""), ["name", "empty"]),
        (lambda p: p.update(x="10"), ["Rs x", "expected a number"]),
        (lambda p: p.update(x=1.5), ["Rs x", "whole number"]),
        (lambda p: p.update(x=True), ["Rs x"]),
        (lambda p: p.update(x=10**400), ["Rs x"]),
        (lambda p: p.update(y=-(10**30)), ["Rs y"]),
        (lambda p: p.update(rotation=45), ["rotation"]),
        (lambda p: p.update(mirror="yes"), ["mirror"]),
        (lambda p: p.update(params=["600"]), ["params"]),
        (lambda p: p.update(params={"value": 600}), ["Rs Resistance", "expected text"]),
        (lambda p: p.update(params={"colour": "red"}), ["no field", "colour"]),
        (lambda p: p.update(params={"value": "x" * 1000}), ["1000 characters is too long", "keep it to 200"]),
        (lambda p: p.pop("x"), ["missing", "x"]),
        (lambda p: p.update(wobble=1), ["unknown key", "wobble"]),
    ],
)
def test_bad_parts(edit, needles):
    d = _good()
    edit(d["parts"][1])  # Rs
    _refused(d, *needles)


def test_duplicate_part_names():
    d = _good()
    d["parts"][2]["name"] = "rs"  # names differ only in case
    _refused(d, "part 3", "Rs")


@pytest.mark.parametrize(
    ("wires", "needles"),
    [
        ({"points": []}, ["wires"]),
        ([{"points": [[0, 0]]}], ["wire 1", "2 to 1000"]),
        ([{"points": [[0, 0], [0]]}], ["wire 1 point 2", "[x, y]"]),
        ([{"points": [[0, 0], ["a", 1]]}], ["wire 1 point 2", "expected a number"]),
        ([{"pts": [[0, 0], [0, 1]]}], ["wire 1", "unknown key"]),
        ([[0, 0]], ["wire 1", "expected an object"]),
    ],
)
def test_bad_wires(wires, needles):
    d = _good()
    d["wires"] = wires
    _refused(d, *needles)


def test_bad_input_bands_targets():
    d = _good()
    d["input"] = "Rs"
    _refused(d, "input", "Rs")
    d = _good()
    d["input"] = 3
    _refused(d, "input")
    d = _good()
    d["bands"] = {"Cin": "middle"}
    _refused(d, "Cin is pinned")
    d = _good()
    d["bands"] = ["Cin"]
    _refused(d, "bands")
    d = _good()
    d["targets"] = {"speed": "1"}
    _refused(d, "unknown target", "speed")
    d = _good()
    d["targets"] = {"gain": 40}
    _refused(d, "target gain")
    d = _good()
    d["title"] = ["x"]
    _refused(d, "title")


def _write(tmp_path, text, name="bad.bsd"):
    path = tmp_path / name
    path.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8"))
    return path


def _load_refused(path, *needles):
    with pytest.raises(DesignFileError) as info:
        load_design(path)
    msg = str(info.value)
    assert path.name in msg
    for n in needles:
        assert n in msg, msg
    return msg


def test_truncated_json(tmp_path):
    text = json.dumps(_good())
    _load_refused(_write(tmp_path, text[: len(text) // 2]), "not valid JSON", "line")


def test_nan_and_infinity_are_refused(tmp_path):
    text = json.dumps(_good()).replace('"x": 60', '"x": NaN', 1)
    assert "NaN" in text
    _load_refused(_write(tmp_path, text), "NaN")
    text = json.dumps(_good()).replace('"x": 60', '"x": -Infinity', 1)
    _load_refused(_write(tmp_path, text), "Infinity")
    text = json.dumps(_good()).replace('"x": 60', '"x": 1e999', 1)  # parses as inf
    _load_refused(_write(tmp_path, text), "Rs x")


def test_deeply_nested(tmp_path):
    text = '{"format": "bandsketch-design", "version": 1, "parts": ' + "[" * 100000 + "]" * 100000 + "}"
    _load_refused(_write(tmp_path, text))


def test_too_large_file(tmp_path):
    path = tmp_path / "huge.bsd"
    with open(path, "wb") as fh:
        fh.truncate(MAX_FILE_BYTES + 1)
    _load_refused(path, "larger")


def test_not_utf8_missing_and_directory(tmp_path):
    _load_refused(_write(tmp_path, b"\xff\xfe{\x00"), "UTF-8")
    _load_refused(tmp_path / "absent.bsd", "cannot be read")
    (tmp_path / "dir.bsd").mkdir()
    _load_refused(tmp_path / "dir.bsd", "cannot be read")


def test_wrong_types_in_a_file(tmp_path):
    d = _good()
    d["parts"] = {"R1": 1}
    _load_refused(_write(tmp_path, json.dumps(d)), "parts")
    _load_refused(_write(tmp_path, "42", "num.bsd"), "expected an object")
    _load_refused(_write(tmp_path, "", "empty.bsd"), "not valid JSON")


def test_save_is_atomic_and_leaves_no_temporary_files(tmp_path):
    path = tmp_path / "design.bsd"
    save_design(_design(), path)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["design.bsd"]


def test_failed_save_keeps_the_previous_file(tmp_path, monkeypatch):
    path = tmp_path / "design.bsd"
    save_design(_design(), path)
    before = path.read_bytes()
    changed = _design()
    changed.set_meta(title="changed")

    def refuse(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", refuse)
    with pytest.raises(DesignFileError, match="design.bsd"):
        save_design(changed, path)
    monkeypatch.undo()
    assert path.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["design.bsd"]


def test_save_into_a_missing_folder_is_a_design_file_error(tmp_path):
    with pytest.raises(DesignFileError, match="could not be saved"):
        save_design(_design(), tmp_path / "no" / "such" / "place.bsd")


# -- any damage to a good design is refused with a DesignFileError, never another exception --
from hypothesis import given  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

JSON_VALUES = st.recursive(
    st.none() | st.booleans() | st.integers(-(10**30), 10**30) | st.floats(allow_nan=True)
    | st.text(max_size=8) | st.sampled_from(["resistor", "low", "Vsig", "Rs", "1k", ""]),
    lambda inner: st.lists(inner, max_size=3) | st.dictionaries(st.text(max_size=6), inner, max_size=3),
    max_leaves=8,
)


def _paths(obj, prefix=()):
    yield prefix
    if isinstance(obj, dict):
        for k, v in obj.items():
            yield from _paths(v, prefix + (k,))
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from _paths(v, prefix + (i,))


GOOD_PATHS = list(_paths(document_to_dict(_design())))[1:]


@given(st.sampled_from(GOOD_PATHS), JSON_VALUES, st.booleans())
def test_damaged_designs_are_refused_cleanly(path, value, delete):
    # Fuzzing by replacing or deleting one value of a good file: common practice, no source.
    data = _good()
    holder = data
    for key in path[:-1]:
        holder = holder[key]
    if delete:
        del holder[path[-1]]
    else:
        holder[path[-1]] = value
    try:
        document_from_dict(data, "damaged.bsd")
    except DesignFileError as exc:
        assert str(exc).startswith("damaged.bsd:")


# Bands are one enum whose members are the words themselves, so a file keeps "low" and
# "high" while the document holds the enum (common practice, no source).
def test_band_pins_are_the_enum_and_the_file_keeps_the_words():
    from bandsketch.engine.core.band import Band
    doc = _design()
    assert doc.band_pins["Cin"] is Band.LOW and doc.band_pins["Q1.cmu"] is Band.HIGH
    text = json.dumps(document_to_dict(doc))
    assert '"Cin": "low"' in text and '"Q1.cmu": "high"' in text and "Band" not in text
    with pytest.raises(ValueError, match="must be one of low, high"):
        doc.set_band_pin("Cin", Band.NEUTRAL)


def test_time_targets_and_sizes_round_trip(tmp_path):
    # The step targets are held like the corner targets, and a MOSFET's sizes like its other
    # fields: saved, opened, and saved again to the same bytes.
    doc = _design()
    for key, text in (("rise_time_max", "20n"), ("overshoot_max", "5 %"), ("settling_time_max", "1.5u")):
        doc.set_target(key, text)
    doc.add_part(_part("mosfet", "M9", 400, 0, params={"mode": "bias", "vth": "0.7", "kp": "", "kprime": "200u",
                                                       "w": "20u", "l": "1u", "cox": "8.6m", "cov": "0.3n"}))
    path = tmp_path / "sized.json"
    save_design(doc, path)
    again = load_design(path)
    assert dict(again.targets) == dict(doc.targets)
    assert again.parts["M9"].params["w"] == "20u" and again.parts["M9"].params["cox"] == "8.6m"
    first = path.read_bytes()
    save_design(again, path)
    assert path.read_bytes() == first
