"""The document's copy and its change notices (common practice, no source: behaviour of our own model)."""

from bandsketch.engine.core.values import db_unit, error_text, format_value
from bandsketch.engine.design.document import ChangeKind, Document, Part, Wire


def _doc():
    doc = Document("copied")
    doc.description = "an invented scenario"
    doc.add_part(Part("resistor", "R1", 0, 0, params={"value": "1k"}))
    doc.add_wire(Wire(doc.new_wire_id(), ((0, 0), (40, 0))))
    doc.set_target("f_high_min", "1M")
    return doc


def test_a_copy_holds_everything_and_later_edits_do_not_reach_it():
    doc = _doc()
    twin = doc.copy()
    assert (twin.title, twin.description, dict(twin.parts), dict(twin.wires), dict(twin.targets)) == (
        doc.title, doc.description, dict(doc.parts), dict(doc.wires), dict(doc.targets))
    seen = []
    twin.changed.connect(seen.append)
    doc.replace_part("R1", doc.parts["R1"].with_params(value="2k"))
    doc.set_target("f_high_min", None)
    assert twin.parts["R1"].params["value"] == "1k" and twin.targets == {"f_high_min": "1M"}
    assert not seen  # the copy has signals of its own


def test_every_change_announces_its_kind():
    doc, seen = Document(), []
    doc.changed.connect(lambda change: seen.append(change.what))
    doc.add_part(Part("resistor", "R1"))
    doc.replace_part("R1", doc.parts["R1"].with_params(value="2k"))
    doc.add_wire(Wire(1, ((0, 0), (0, 40))))
    doc.replace_wire(Wire(1, ((0, 0), (0, 80))))
    doc.remove_wire(1)
    doc.set_meta(title="t")
    doc.remove_part("R1")
    doc.replace_all(_doc())
    assert seen == [ChangeKind.PART_ADDED, ChangeKind.PART_CHANGED, ChangeKind.WIRE_ADDED, ChangeKind.WIRE_CHANGED,
                    ChangeKind.WIRE_REMOVED, ChangeKind.SETTINGS, ChangeKind.PART_REMOVED, ChangeKind.RESET]


def test_the_shared_text_helpers():
    # Common practice, no source: 20·log10 of a V/A gain is in dB relative to 1 Ω.
    assert (db_unit("V/V"), db_unit("V/A")) == ("dB", "dBΩ")
    assert (error_text(1.02e6, 1e6), error_text(0.98, 1.0)) == ("+2.0 %", "−2.0 %")
    assert error_text(None, 1.0) == error_text(1.0, None) == error_text(1.0, 0.0) == ""
    # A per-volt value keeps its prefix apart from the unit: "20m /V", not "20 m/V" (millivolts).
    assert format_value(0.02, "1/V") == "20m /V"
