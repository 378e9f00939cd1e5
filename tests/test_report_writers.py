"""write_outputs: every format written, names as documented, nothing written when rendering fails.
Outputs are re-read by their outside readers (json/jsonschema, pysam, phenopackets)."""
import json
from pathlib import Path

import phenopackets
import pysam
import pytest
from google.protobuf import json_format

from irdtriage.report.json_out import load_result
from irdtriage.report.phenopacket_out import InvalidPhenopacket
from irdtriage.report.writers import FORMATS, write_outputs

FIXTURE = Path(__file__).parent / "fixtures" / "result_example.json"


def test_all_formats(tmp_path):
    r = json.loads(FIXTURE.read_text())
    r.pop("cascade")
    steps = [{"id": "photon_capture", "title": "opsin catches light", "kind": "chain", "order": 1},
             {"id": "pde6_effector", "title": "PDE6 hydrolyses cGMP", "kind": "chain", "order": 2}]
    out = write_outputs(r, tmp_path / "out", cascade_steps=steps)
    assert tuple(out) == FORMATS
    names = sorted(p.name for p in (tmp_path / "out").iterdir())
    assert names == ["EXAMPLE-PROBAND.phenopacket.json", "findings.tsv", "findings.vcf.gz", "findings.vcf.gz.tbi",
                     "report.html", "result.json"]
    again = load_result(out["json"])  # jsonschema validation
    assert again["cascade"] == steps
    with pysam.VariantFile(str(out["vcf"])) as vf:
        assert len(list(vf)) == 3
    json_format.ParseDict(json.loads(out["phenopacket"].read_text()), phenopackets.Phenopacket())
    assert 'data-step="photon_capture"' in out["html"].read_text()
    assert "cascade" not in r  # the caller's dict is not changed


def test_nothing_written_when_rendering_fails(tmp_path):
    r = json.loads(FIXTURE.read_text())
    r["sample"]["sex"] = "NOT_A_SEX"  # the phenopacket cannot validate
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    (out_dir / "report.html").write_text("previous")
    with pytest.raises(InvalidPhenopacket):
        write_outputs(r, out_dir)
    assert sorted(p.name for p in out_dir.iterdir()) == ["report.html"]
    assert (out_dir / "report.html").read_text() == "previous"


def test_subset_and_unknown_format(tmp_path):
    r = json.loads(FIXTURE.read_text())
    out = write_outputs(r, tmp_path, formats=("tsv",))
    assert list(out) == ["tsv"] and [p.name for p in tmp_path.iterdir()] == ["findings.tsv"]
    with pytest.raises(ValueError, match="unknown output format"):
        write_outputs(r, tmp_path, formats=("pdf",))


def test_hostile_sample_id_makes_safe_file_name(tmp_path):
    r = json.loads(FIXTURE.read_text())
    r["sample"]["id"] = "../../etc/x y"
    out = write_outputs(r, tmp_path / "o", formats=("phenopacket", "vcf"))
    assert out["phenopacket"].parent == tmp_path / "o"
    assert out["phenopacket"].name == "etc_x_y.phenopacket.json"
