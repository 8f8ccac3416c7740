"""Per-part sourcing: knob status, E series and tolerance; the version 2 design file.

Sources: the E-series defaults by kind are common practice, no source; the file format is
our own, so these tests hold it to its own documented promises (version 1 reads unchanged,
version 2 round-trips).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from bandsketch.engine.advise.knobs import knobs
from bandsketch.engine.advise.tolerance import design_tolerances
from bandsketch.engine.core.errors import BadValueError, DesignFileError
from bandsketch.engine.design.designfile import FORMAT_VERSION, document_from_dict, document_to_dict, load_design
from bandsketch.engine.design.netlist import design_to_circuit
from bandsketch.engine.design.sourcing import Sourcing, tolerance_fraction

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"
SAMPLE_FILES = sorted(SAMPLES.glob("*.json"))


def _ce():
    return load_design(SAMPLES / "ce_hydrophone_preamp.json")


def test_knobs_are_the_designers_values_only():
    doc = _ce()
    found = knobs(doc)
    # The sample is biased from the sheet: its rails' voltages and Q1's I_S (the choice of
    # transistor) are the designer's too.
    # The sample holds its source resistance and its load fixed (they are the stage's given).
    assert {k.part for k in found} == {p.name for p in doc.parts.values()
                                        if p.kind in ("resistor", "capacitor", "rail")} - {"Rsig", "RL"} | {"Q1"}
    assert {k.key for k in found if k.part == "Q1"} == {"isat"}
    assert not any(k.device for k in found)
    assert {k.series for k in found if k.part.startswith("R")} == {"E24"}
    assert {k.series for k in found if k.part.startswith("C")} == {"E6"}


def test_choosing_another_device_and_holding_a_part_fixed():
    doc = _ce()
    doc.replace_part("Q1", doc.parts["Q1"].with_sourcing(knob="yes"))
    doc.replace_part("RL", doc.parts["RL"].with_sourcing(knob="no"))
    doc.replace_part("RC", doc.parts["RC"].with_sourcing(series="E96"))
    found = {k.label: k for k in knobs(doc)}
    assert "RL" not in found
    assert found["RC"].series == "E96"
    device = {label for label, k in found.items() if k.device}
    # Q1 is biased from the sheet, so its I_C is solved, never a knob.
    assert {"Q1 β", "Q1 f_T"} <= device and "Q1 I_C" not in found  # offered only because the designer ticked it
    assert all(found[label].part == "Q1" for label in device)
    assert "Q1 Temperature" not in found  # a condition of use, never a knob


VERSION_1_FILES = [p for p in SAMPLE_FILES if json.loads(p.read_text(encoding="utf-8"))["version"] == 1]


def test_samples_of_both_versions_ship():
    assert VERSION_1_FILES and len(VERSION_1_FILES) < len(SAMPLE_FILES)


@pytest.mark.parametrize("path", VERSION_1_FILES, ids=lambda p: p.stem)
def test_version_1_files_read_unchanged(path):
    raw = json.loads(path.read_text(encoding="utf-8"))
    doc = load_design(path)
    assert doc.read_version == 1
    assert all(p.sourcing == Sourcing() for p in doc.parts.values())
    again = document_to_dict(doc)
    assert again["version"] == FORMAT_VERSION == 2
    # Everything else the file said comes back as it was (no sourcing is written for defaults).
    for key in ("title", "description", "input", "bands", "targets"):
        assert again[key] == raw.get(key, again[key])
    for mine, theirs in zip(again["parts"], raw["parts"]):
        assert "sourcing" not in mine
        assert mine["params"] == {**mine["params"], **theirs.get("params", {})}
        assert (mine["kind"], mine["name"], mine["x"], mine["y"]) == (theirs["kind"], theirs["name"],
                                                                      theirs["x"], theirs["y"])


def test_version_2_round_trip_with_per_part_tolerances():
    doc = _ce()
    doc.replace_part("RC", doc.parts["RC"].with_sourcing(tolerance="1 %", series="E96"))
    doc.replace_part("CE", doc.parts["CE"].with_sourcing(tolerance="20 %"))
    doc.replace_part("Q1", doc.parts["Q1"].with_sourcing(knob="yes"))
    data = json.loads(json.dumps(document_to_dict(doc)))
    assert data["parts"][[p["name"] for p in data["parts"]].index("RC")]["sourcing"] == \
        {"series": "E96", "tolerance": "1 %"}
    back = document_from_dict(data)
    assert dict(back.parts) == dict(doc.parts)
    assert back.read_version == 2
    tols = {t.value.element: t for t in design_tolerances(back, design_to_circuit(back))}
    assert tols["RC"].tolerance == pytest.approx(0.01) and tols["RC"].source == "set for this part"
    assert tols["CE"].tolerance == pytest.approx(0.20)
    assert tols["R1"].tolerance == pytest.approx(0.05)  # the default by kind


@pytest.mark.parametrize("sourcing, message", [
    ({"knob": "maybe"}, "sourcing knob 'maybe'"),
    ({"series": "E7"}, "sourcing series 'E7'"),
    ({"tolerance": "five"}, "not a percentage"),
    ({"tolerance": "120 %"}, "give 0 to 99 %"),
    ({"colour": "red"}, "unknown key(s) colour"),
])
def test_bad_sourcing_is_refused_by_name(sourcing, message):
    data = document_to_dict(_ce())
    data["parts"][2]["sourcing"] = sourcing
    with pytest.raises(DesignFileError, match=r"part Rsig") as exc:
        document_from_dict(data, "x.json")
    assert message in str(exc.value)


def test_sourcing_in_a_version_1_file_is_refused():
    data = document_to_dict(_ce())
    data["version"] = 1
    data["parts"][2]["sourcing"] = {"tolerance": "1 %"}
    with pytest.raises(DesignFileError, match="version 1 files do not hold"):
        document_from_dict(data, "x.json")


def test_tolerance_texts():
    assert tolerance_fraction("5 %") == pytest.approx(0.05)
    assert tolerance_fraction("0.5%") == pytest.approx(0.005)
    assert tolerance_fraction("") is None
    with pytest.raises(BadValueError, match="RC tolerance"):
        tolerance_fraction("-3 %", "RC")
