"""result.json writer/loader checked with the `jsonschema` reference library (JSON Schema
draft 2020-12 meta-schema and validator, PyPI `jsonschema`)."""
import json
from pathlib import Path

import jsonschema
import pytest

from irdtriage.errors import InputError
from irdtriage.report.json_out import SCHEMA_PATH, load_result, write_result_json

FIXTURE = Path(__file__).parent / "fixtures" / "result_example.json"


def test_schema_is_valid_draft_2020_12():
    # source: JSON Schema draft 2020-12 meta-schema, as shipped in the `jsonschema` package
    schema = json.loads(SCHEMA_PATH.read_text())
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    jsonschema.Draft202012Validator.check_schema(schema)


def test_example_round_trips(tmp_path):
    r = load_result(FIXTURE)
    out = write_result_json(r, tmp_path / "result.json")
    again = load_result(out)
    assert again == r
    assert list(again) == list(r)  # contract order kept, not sorted
    assert not list(tmp_path.glob(".*part"))  # no temporary left behind


@pytest.mark.parametrize(
    "mutate, where",
    [
        (lambda r: r["findings"][1]["criteria"][3].update(code="PX9"), "$.findings[1].criteria[3].code"),
        (lambda r: r["case"].update(status="DONE"), "$.case.status"),
        (lambda r: r.pop("cautions"), "$: 'cautions' is a required property"),
        (lambda r: r["findings"][0].update(pos="12"), "$.findings[0].pos"),
    ],
)
def test_broken_result_names_file_and_json_path(tmp_path, mutate, where):
    r = json.loads(FIXTURE.read_text())
    mutate(r)
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(r))
    with pytest.raises(InputError) as e:
        load_result(bad)
    assert e.value.path == str(bad)
    assert where in e.value.problem


def test_not_json_names_line(tmp_path):
    bad = tmp_path / "bad.json"
    bad.write_text('{\n  "schema_version": "1.0",\n  oops\n}\n')
    with pytest.raises(InputError) as e:
        load_result(bad)
    assert e.value.line == 3 and "not valid JSON" in e.value.problem


def test_not_an_object(tmp_path):
    bad = tmp_path / "list.json"
    bad.write_text("[1, 2]")
    with pytest.raises(InputError, match="not an irdtriage result"):
        load_result(bad)
