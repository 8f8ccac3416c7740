"""The JSON schemas published in docs/schemas hold what Bandsketch reads and writes: every sample
design and every saved design validates against the design schema, files the loader refuses for
their shape fail it too, its lists of kinds, fields, rotations and targets are the catalogue's,
and the analysis JSON of every sample validates against the analysis schema. Every ``--json``
output leads with its ``format`` and ``version``.

Validation by jsonschema (Draft 2020-12, the dialect the schemas declare).
"""

from __future__ import annotations

import json
from pathlib import Path

import jsonschema
import pytest

from bandsketch.app.cli import main
from bandsketch.engine.design.designfile import FORMAT_NAME, FORMAT_VERSION, document_to_dict
from bandsketch.engine.design.parts import KINDS, ROTATIONS
from bandsketch.engine.design.samples import list_samples, load_sample
from bandsketch.engine.design.schema import TARGET_KEYS
from bandsketch.engine.solve.analysisjson import ANALYSIS_FORMAT, ANALYSIS_FORMAT_VERSION

ROOT = Path(__file__).resolve().parent.parent
SCHEMAS = ROOT / "docs" / "schemas"
SAMPLES = [s.name for s in list_samples()]


def _validator(name: str):
    schema = json.loads((SCHEMAS / f"{name}.schema.json").read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


@pytest.fixture(scope="module")
def design_schema():
    return _validator("design")


@pytest.fixture(scope="module")
def analysis_schema():
    return _validator("analysis")


@pytest.mark.parametrize("name", SAMPLES)
def test_every_sample_file_and_its_saved_form_fit_the_design_schema(design_schema, name):
    raw = json.loads((ROOT / "sample_designs" / f"{name}.json").read_text(encoding="utf-8"))
    design_schema.validate(raw)
    design_schema.validate(json.loads(json.dumps(document_to_dict(load_sample(name)))))


def test_the_design_schema_names_what_the_catalogue_holds(design_schema):
    schema = design_schema.schema
    assert schema["properties"]["format"]["const"] == FORMAT_NAME
    assert schema["properties"]["version"]["maximum"] == FORMAT_VERSION
    part = schema["$defs"]["part"]
    assert part["properties"]["kind"]["enum"] == list(KINDS)
    assert part["properties"]["rotation"]["enum"] == list(ROTATIONS)
    assert list(schema["properties"]["targets"]["properties"]) == list(TARGET_KEYS)
    fields = {rule["if"]["properties"]["kind"]["const"]: list(rule["then"]["properties"]["params"]["properties"])
              for rule in part["allOf"]}
    assert fields == {kind: [f.key for f in entry.fields] for kind, entry in KINDS.items()}


@pytest.mark.parametrize("broken", [
    lambda d: d.update(format="something-else"),
    lambda d: d["parts"][0].update(kind="transformer"),
    lambda d: d["parts"][0].update(rotation=45),
    lambda d: d["parts"][0]["params"].update(colour="red"),
    lambda d: d["wires"][0].update(points=[[0, 0]]),
    lambda d: d.update(targets={"f_middle": "1k"}),
    lambda d: d.update(extra=1),
])
def test_files_the_loader_refuses_for_their_shape_fail_the_schema(design_schema, broken):
    raw = json.loads((ROOT / "sample_designs" / "ce_hydrophone_preamp.json").read_text(encoding="utf-8"))
    broken(raw)
    assert not design_schema.is_valid(raw)


@pytest.mark.parametrize("name", SAMPLES)
def test_the_analysis_json_of_every_sample_fits_its_schema(analysis_schema, capsys, name):
    assert main(["analyze", "--sample", name, "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    analysis_schema.validate(data)
    assert (data["format"], data["version"]) == (ANALYSIS_FORMAT, ANALYSIS_FORMAT_VERSION)


@pytest.mark.parametrize("command", [["step"], ["spread", "--samples", "50"], ["analyze"]])
def test_every_json_output_names_its_format_and_version(capsys, command):
    assert main([*command, "--sample", "ce_hydrophone_preamp", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert list(data)[:2] == ["format", "version"] and data["format"].startswith("bandsketch-")
    assert isinstance(data["version"], int)
