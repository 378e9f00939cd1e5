"""Phenotype input: GA4GH Phenopacket v2 reading and HPO term ID validation.

Sources: GA4GH phenopacket-store case records (../shared/refdata/phenopackets, BSD-3-Clause)
for real files; the Human Phenotype Ontology as shipped in hpo3 for term IDs, names and
obsolete-term replacements.
"""
from __future__ import annotations

import json
import warnings
from pathlib import Path

import pytest

from irdtriage.errors import InputError
from irdtriage.phenopacket_in import ObsoleteTermWarning, parse_hpo_terms, profile_from_terms, read_phenopacket

REFDATA = Path(__file__).resolve().parents[1].parent / "shared" / "refdata"
PP = REFDATA / "phenopackets"
needs_refdata = pytest.mark.skipif(not PP.is_dir(), reason="../shared/refdata/phenopackets not present on this machine")

NRL_CASE = PP / "NRL" / "PMID_15591106_family_7080_brother.json"


@needs_refdata
def test_all_refdata_phenopackets_load_with_their_features():
    # Source: phenopacket-store — every file is a valid Phenopacket v2; the profile must carry
    # exactly the observed and excluded HPO IDs the file lists (read independently with json).
    files = sorted(PP.glob("*/*.json"))
    assert len(files) >= 200
    for f in files:
        data = json.loads(f.read_text())
        prof = read_phenopacket(f, validate_terms=False)
        obs = [x["type"]["id"] for x in data.get("phenotypicFeatures", []) if not x.get("excluded")]
        exc = [x["type"]["id"] for x in data.get("phenotypicFeatures", []) if x.get("excluded")]
        assert list(prof.present) == list(dict.fromkeys(obs)), f
        assert list(prof.excluded) == list(dict.fromkeys(exc)), f
        sex = data.get("subject", {}).get("sex")
        assert prof.sex == (sex if sex in ("MALE", "FEMALE") else None), f
        assert prof.subject_id == data["subject"]["id"]


@needs_refdata
def test_nrl_case_details():
    # Source: phenopacket-store NRL/PMID_15591106_family_7080_brother.json (male; Abnormal
    # Ishihara plate test HP:0030586 excluded; Nyctalopia HP:0000662 observed).
    prof = read_phenopacket(NRL_CASE)
    assert prof.sex == "MALE"
    assert prof.excluded == ("HP:0030586",)
    assert "HP:0000662" in prof.present and len(prof.present) == 10
    assert prof.labels["HP:0000662"] == "Nyctalopia"
    assert prof.source == str(NRL_CASE)


@needs_refdata
def test_interpretations_are_not_read(tmp_path):
    # The diagnosis block must not influence the profile: removing it changes nothing.
    data = json.loads(NRL_CASE.read_text())
    data.pop("interpretations")
    f = tmp_path / "p.json"
    f.write_text(json.dumps(data))
    a, b = read_phenopacket(NRL_CASE), read_phenopacket(f)
    assert (a.present, a.excluded, a.sex) == (b.present, b.excluded, b.sex)


def _write(tmp_path, text, name="bad.json"):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_malformed_json_names_file_and_line(tmp_path):
    p = _write(tmp_path, '{\n  "id": "x",\n  "subject": {"id": "s"},\n}\n')  # trailing comma
    with pytest.raises(InputError) as e:
        read_phenopacket(p)
    assert e.value.path == str(p) and e.value.line == 4


def test_schema_violation_names_the_field_line(tmp_path):
    # "phenotypicFeature" (singular) is not a Phenopacket v2 field (GA4GH Phenopacket v2 schema).
    p = _write(tmp_path, '{\n  "id": "x",\n  "phenotypicFeature": []\n}\n')
    with pytest.raises(InputError) as e:
        read_phenopacket(p)
    assert "Phenopacket" in e.value.problem and e.value.line == 3


def test_bad_sex_enum(tmp_path):
    p = _write(tmp_path, '{\n  "id": "x",\n  "subject": {"id": "s", "sex": "M"}\n}\n')
    with pytest.raises(InputError) as e:
        read_phenopacket(p)
    assert e.value.line == 3


def test_unknown_term_in_phenopacket(tmp_path):
    feats = [{"type": {"id": "HP:0000662"}}, {"type": {"id": "HP:9999999", "label": "nothing"}}]
    p = _write(tmp_path, json.dumps({"id": "x", "phenotypicFeatures": feats}, indent=2))
    with pytest.raises(InputError) as e:
        read_phenopacket(p)
    assert "HP:9999999" in e.value.problem and e.value.line is not None


def test_missing_file(tmp_path):
    with pytest.raises(InputError):
        read_phenopacket(tmp_path / "none.json")


def test_parse_hpo_terms_forms(tmp_path):
    # HPO: HP:0000510 Rod-cone dystrophy, HP:0000662 Nyctalopia (hpo3 ontology data).
    assert parse_hpo_terms("HP:0000510,HP:0000662") == ["HP:0000510", "HP:0000662"]
    assert parse_hpo_terms(["HP:0000510", "HP:0000662 HP:0000510"]) == ["HP:0000510", "HP:0000662"]
    f = tmp_path / "terms.txt"
    f.write_text("# patient\nHP:0000510  # rod-cone dystrophy\n\nHP:0000662\n")
    assert parse_hpo_terms("@" + str(f)) == ["HP:0000510", "HP:0000662"]


@pytest.mark.parametrize("tok", ["HP:510", "HP_0000510", "0000510", "HP:00005100", "hp:0000510x"])
def test_malformed_ids_name_the_token(tok):
    with pytest.raises(InputError) as e:
        parse_hpo_terms(f"HP:0000662,{tok}")
    assert tok in e.value.problem


def test_bad_id_in_file_names_line(tmp_path):
    f = tmp_path / "terms.txt"
    f.write_text("HP:0000510\nHP:12\n")
    with pytest.raises(InputError) as e:
        parse_hpo_terms("@" + str(f))
    assert e.value.path == str(f) and e.value.line == 2


def test_unknown_id():
    with pytest.raises(InputError) as e:
        parse_hpo_terms("HP:9999999")
    assert "not in the ontology" in e.value.problem


def test_obsolete_id_replaced_with_warning():
    # HPO (hpo3 data): HP:0000547 "obsolete Tapetoretinal degeneration" is replaced by
    # HP:0000510 Rod-cone dystrophy.
    with pytest.warns(ObsoleteTermWarning):
        assert parse_hpo_terms("HP:0000547") == ["HP:0000510"]


def test_profile_from_terms_labels():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        prof = profile_from_terms("HP:0000510", excluded="HP:0000662")
    assert prof.present == ("HP:0000510",) and prof.excluded == ("HP:0000662",)
    assert prof.labels["HP:0000510"] == "Rod-cone dystrophy"
