"""The criteria rules file loads, is hashed, and rejects bad values with file:line errors."""
import hashlib
from pathlib import Path

import pytest

from irdtriage.acmg.rules import default_path, load_rules
from irdtriage.errors import InputError


def test_default_rules_load_and_hash():
    import yaml

    r = load_rules()
    doc = yaml.safe_load(Path(default_path()).read_text())  # the file read by PyYAML, independently
    assert (r.name, r.version) == (doc["name"], doc["version"])
    assert r.sha256 == hashlib.sha256(Path(r.path).read_bytes()).hexdigest()
    assert Path(default_path()).name == "criteria.yaml"


def test_published_thresholds_in_file():
    r = load_rules()
    rv = r.in_silico["scores"]["revel"]
    # Pejaver et al. 2022 Table 2 (REVEL)
    assert rv["pp3"] == {"Supporting": 0.644, "Moderate": 0.773, "Strong": 0.932}
    assert rv["bp4"] == {"Supporting": 0.290, "Moderate": 0.183, "Strong": 0.016}
    # Walker et al. 2023 SpliceAI cut-offs
    assert (r.in_silico["spliceai_pp3"], r.in_silico["spliceai_benign"]) == (0.2, 0.1)
    # Ghosh et al. 2018 BA1
    assert r.frequency["ba1_af"] == 0.05


def _write(tmp_path, text):
    p = tmp_path / "criteria.yaml"
    p.write_text(text)
    return p


def _base():
    return Path(default_path()).read_text()


def test_unknown_key_names_line(tmp_path):
    text = _base().replace("  ba1_af: 0.05\n", "  ba1_af: 0.05\n  ba1_typo: 1\n")
    line = text.splitlines().index("  ba1_typo: 1") + 1
    with pytest.raises(InputError) as e:
        load_rules(_write(tmp_path, text))
    assert e.value.line == line and "ba1_typo" in e.value.problem


def test_out_of_range_value(tmp_path):
    text = _base().replace("  ba1_af: 0.05\n", "  ba1_af: 5\n")
    with pytest.raises(InputError) as e:
        load_rules(_write(tmp_path, text))
    assert "outside" in e.value.problem and e.value.line is not None


def test_overlapping_score_intervals(tmp_path):
    text = _base().replace("bp4: {Supporting: 0.290,", "bp4: {Supporting: 0.700,")
    with pytest.raises(InputError):
        load_rules(_write(tmp_path, text))


def test_bad_strength_in_gene(tmp_path):
    text = _base().replace("    bs2: true  # recessive", "    start_lost_strength: Huge\n    bs2: true  # recessive")
    with pytest.raises(InputError) as e:
        load_rules(_write(tmp_path, text))
    assert "start_lost_strength" in e.value.problem


def test_bad_yaml_and_missing_file(tmp_path):
    with pytest.raises(InputError) as e:
        load_rules(_write(tmp_path, "name: [unclosed\n"))
    assert e.value.line
    with pytest.raises(InputError):
        load_rules(tmp_path / "nope.yaml")


def test_absent_when_declared_empty_must_be_boolean(tmp_path):
    text = _base().replace("absent_when_declared_empty: true", "absent_when_declared_empty: maybe")
    line = text.splitlines().index("  absent_when_declared_empty: maybe") + 1
    with pytest.raises(InputError) as e:
        load_rules(_write(tmp_path, text))
    assert e.value.line == line and "true or false" in e.value.problem
    # optional: a rules file without the setting loads and treats it as off
    text = _base().replace("  absent_when_declared_empty: true\n", "")
    assert load_rules(_write(tmp_path, text)).frequency.get("absent_when_declared_empty", False) is False
