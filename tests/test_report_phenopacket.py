"""Phenopacket writer validated by the GA4GH reference implementation: the protobuf classes of
the `phenopackets` PyPI package (json_format.ParseDict, unknown fields refused), the fields the
phenopacket-schema v2 documentation marks REQUIRED (typed below from the docs, independent of
the writer's own check), and compared with case records of the GA4GH phenopacket-store
(../shared/refdata/phenopackets)."""
import json
from pathlib import Path

from irdtriage.pipeline import triage

import phenopackets
import pysam
import pytest
from google.protobuf import json_format

from irdtriage import CAUTION, __version__
from irdtriage.errors import InputError
from irdtriage.report.phenopacket_out import InvalidPhenopacket, to_phenopacket, write_phenopacket

FIXTURE = Path(__file__).parent / "fixtures" / "result_example.json"
REFDATA = Path(__file__).resolve().parents[1].parent / "shared" / "refdata" / "phenopackets"


def _parse(obj):
    return json_format.ParseDict(obj, phenopackets.Phenopacket(), ignore_unknown_fields=False)


# Source: GA4GH phenopacket-schema v2 documentation (phenopacket-schema.readthedocs.io, docs/*.rst
# of github.com/phenopackets/phenopacket-schema): phenopacket.rst "id 1..1 REQUIRED";
# metadata.rst created, created_by, resources (1..*), phenopacket_schema_version all 1..1;
# resource.rst "Phenopacket requirements": id, name, namespace_prefix, url, version, iri_prefix
# required; ontologyclass.rst id and label required, and the id's prefix MUST be the namespace
# prefix of a Resource in MetaData; interpretation.rst Interpretation.id, progress_status 1..1 and
# Diagnosis.disease 1..1 REQUIRED; genomic-interpretation.rst subject_or_biosample_id,
# interpretation_status, call REQUIRED; variant-interpretation.rst acmgPathogenicityClassification
# and the variant required; gene.rst GeneDescriptor value_id and symbol REQUIRED.
def doc_required_problems(pp: dict) -> list[str]:
    out = []
    need = lambda obj, keys, where: out.extend(f"{where}.{k}" for k in keys if not (obj or {}).get(k))  # noqa: E731
    need(pp, ["id", "metaData"], "$")
    md = pp.get("metaData") or {}
    need(md, ["created", "createdBy", "resources", "phenopacketSchemaVersion"], "metaData")
    prefixes = set()
    for i, r in enumerate(md.get("resources") or []):
        need(r, ["id", "name", "namespacePrefix", "url", "version", "iriPrefix"], f"resources[{i}]")
        prefixes.add(r.get("namespacePrefix"))
    terms = []
    for i, pf in enumerate(pp.get("phenotypicFeatures") or []):
        terms.append((pf.get("type"), f"phenotypicFeatures[{i}].type"))
    for i, it in enumerate(pp.get("interpretations") or []):
        need(it, ["id", "progressStatus"], f"interpretations[{i}]")
        if "diagnosis" in it:
            dx = it["diagnosis"]
            terms.append((dx.get("disease"), f"interpretations[{i}].diagnosis.disease"))
            for j, gi in enumerate(dx.get("genomicInterpretations") or []):
                w = f"interpretations[{i}].gi[{j}]"
                need(gi, ["subjectOrBiosampleId", "interpretationStatus"], w)
                vi = gi.get("variantInterpretation")
                if not vi and not gi.get("gene"):
                    out.append(f"{w}.call")
                if vi:
                    need(vi, ["acmgPathogenicityClassification", "variationDescriptor"], w)
                    vd = vi.get("variationDescriptor") or {}
                    need(vd, ["id"], w + ".variationDescriptor")
                    if "geneContext" in vd:
                        need(vd["geneContext"], ["valueId", "symbol"], w + ".geneContext")
                    if "allelicState" in vd:
                        terms.append((vd["allelicState"], w + ".allelicState"))
    for t, where in terms:
        need(t, ["id", "label"], where)
        if t and ":" in (t.get("id") or "") and t["id"].split(":")[0] not in prefixes:
            out.append(f"{where}: prefix {t['id'].split(':')[0]} has no Resource")
    return out


# MANE v1.5 summary (NCBI / EMBL-EBI MANE project), RPE65 MANE Select row.
RPE65 = {"hgnc_id": "HGNC:10294", "nm": "NM_000329.3", "np": "NP_000320.1",
         "enst": "ENST00000262340.6", "ensp": "ENSP00000262340.5"}


def test_new_phenopacket_validates_and_round_trips(tmp_path):
    r = json.loads(FIXTURE.read_text())
    path = write_phenopacket(r, tmp_path / "x.phenopacket.json")
    pp = json.loads(path.read_text())
    msg = _parse(pp)  # source: GA4GH Phenopacket v2 schema (phenopackets package)
    again = _parse(json_format.MessageToDict(msg))
    assert again == msg
    assert msg.subject.id == "EXAMPLE-PROBAND" and phenopackets.Sex.Name(msg.subject.sex) == "FEMALE"
    assert msg.meta_data.phenopacket_schema_version == "2.0"
    assert msg.meta_data.created_by == f"irdtriage {__version__}"
    assert {res.id for res in msg.meta_data.resources} >= {"hp", "geno", "so", "hgnc"}
    assert [pf.type.id for pf in msg.phenotypic_features] == ["HP:0000510", "HP:0000662"]
    (interp,) = msg.interpretations
    assert phenopackets.Interpretation.ProgressStatus.Name(interp.progress_status) == "IN_PROGRESS"
    assert " ".join(CAUTION.split()) in interp.summary
    gis = interp.diagnosis.genomic_interpretations
    assert len(gis) == 3
    vi = gis[0].variant_interpretation
    assert phenopackets.AcmgPathogenicityClassification.Name(vi.acmg_pathogenicity_classification) == "LIKELY_PATHOGENIC"
    # no protein is known to pair with NM_EXAMPLE1.1: c. only, never a p. without its reference
    assert [(x.syntax, x.value) for x in vi.variation_descriptor.expressions] == [
        ("hgvs.c", "NM_EXAMPLE1.1:c.100C>T")]
    vr = vi.variation_descriptor.vcf_record
    assert (vr.genome_assembly, vr.chrom, vr.pos, vr.ref, vr.alt) == ("GRCh38", "chr1", 1000100, "C", "T")
    assert phenopackets.GenomicInterpretation.InterpretationStatus.Name(gis[2].interpretation_status) == "CANDIDATE"
    assert doc_required_problems(pp) == []


def test_diagnosis_always_names_a_disease_with_a_declared_resource():
    # Diagnosis.disease is 1..1 REQUIRED (phenopacket-schema v2 interpretation.rst); before this
    # the diagnosis was written without it whenever the result had no disease id.
    r = json.loads(FIXTURE.read_text())
    pp = to_phenopacket(r)
    assert doc_required_problems(pp) == []
    disease = pp["interpretations"][0]["diagnosis"]["disease"]
    assert disease["id"] == "IRDTRIAGE_CONDITION:GENEA"
    assert "not an ontology class" in disease["label"] and "example retinal condition A" in disease["label"]
    (res,) = [x for x in pp["metaData"]["resources"] if x["namespacePrefix"] == "IRDTRIAGE_CONDITION"]
    assert res["url"].startswith("urn:")  # a local name, never presented as a resolvable ontology


def test_disease_term_used_when_given():
    r = json.loads(FIXTURE.read_text())
    # OMIM:180069 "Leber congenital amaurosis 2" (OMIM entry for RPE65-related LCA; from memory)
    r["genes"][0]["diseases"] = [{"id": "OMIM:180069", "label": "Leber congenital amaurosis 2"}]
    pp = to_phenopacket(r)
    assert pp["interpretations"][0]["diagnosis"]["disease"] == {"id": "OMIM:180069", "label": "Leber congenital amaurosis 2"}
    assert "OMIM" in {x["namespacePrefix"] for x in pp["metaData"]["resources"]}
    assert doc_required_problems(pp) == []


def test_no_reported_finding_means_no_diagnosis():
    r = json.loads(FIXTURE.read_text())
    for f in r["findings"]:
        f.update(interpretation_status="REJECTED", classification="Uncertain significance")
    pp = to_phenopacket(r)
    assert "diagnosis" not in pp["interpretations"][0]
    assert doc_required_problems(pp) == [] and _parse(pp)


def test_feature_labels_are_hpo_names_not_ids():
    # HPO term names (Human Phenotype Ontology, hp.obo): HP:0000510 "Rod-cone dystrophy",
    # HP:0000662 "Nyctalopia", HP:0000639 "Nystagmus" (from memory; bundled with hpo3).
    r = json.loads(FIXTURE.read_text())
    r["phenotype"]["present"] = [{"id": "HP:0000510", "label": ""}, {"id": "HP:0000662", "label": "HP:0000662"}]
    r["phenotype"]["excluded"] = [{"id": "HP:0000639", "label": ""}]
    pp = to_phenopacket(r)
    assert [(f["type"]["id"], f["type"]["label"], f.get("excluded", False)) for f in pp["phenotypicFeatures"]] == [
        ("HP:0000510", "Rod-cone dystrophy", False), ("HP:0000662", "Nyctalopia", False),
        ("HP:0000639", "Nystagmus", True)]
    (hp,) = [x for x in pp["metaData"]["resources"] if x["namespacePrefix"] == "HP"]
    assert hp["version"] != "unknown"  # the hpo3 ontology's release


def _rpe65_result(transcript, protein_accession):
    r = json.loads(FIXTURE.read_text())
    g = r["genes"][0]
    g.update(symbol="RPE65", hgnc_id=RPE65["hgnc_id"], transcript=RPE65["nm"], refseq_protein=RPE65["np"],
             ensembl_transcript=RPE65["enst"])
    f = r["findings"][0]
    f.update(gene="RPE65", transcript=transcript, protein_accession=protein_accession)
    return r


@pytest.mark.parametrize("transcript, protein, want_c, want_p", [
    # Ensembl transcript with its own ENSP (CSQ field): the Ensembl pair
    (RPE65["enst"], RPE65["ensp"], RPE65["enst"], RPE65["ensp"]),
    # the MANE Ensembl transcript without an ENSP: the MANE RefSeq pair (same sequence)
    (RPE65["enst"], None, RPE65["nm"], RPE65["np"]),
    # the MANE RefSeq transcript: NM_ with NP_
    (RPE65["nm"], None, RPE65["nm"], RPE65["np"]),
    # another Ensembl transcript, no protein known: c. only
    ("ENST00000999999.1", None, "ENST00000999999.1", None),
])
def test_hgvs_c_and_p_on_one_transcript_pair(transcript, protein, want_c, want_p):
    pp = to_phenopacket(_rpe65_result(transcript, protein))
    vd = pp["interpretations"][0]["diagnosis"]["genomicInterpretations"][0]["variantInterpretation"]["variationDescriptor"]
    exprs = {e["syntax"]: e["value"] for e in vd["expressions"]}
    assert exprs["hgvs.c"] == f"{want_c}:c.100C>T"
    assert exprs.get("hgvs.p") == (f"{want_p}:p.(Arg34Ter)" if want_p else None)
    assert vd["geneContext"] == {"valueId": RPE65["hgnc_id"], "symbol": "RPE65"}


# Genotype Ontology allelic states: GENO:0000135 heterozygous and GENO:0000136 homozygous
# (phenopacket-schema v2 docs, interpretation.rst examples); GENO:0000134 hemizygous,
# GENO:0000602 homoplasmic, GENO:0000603 heteroplasmic, GENO:0000137 unspecified zygosity
# (GENO zygosity terms as mapped by the Alliance of Genome Resources loaders and listed in the
# phenopackets library documentation).
@pytest.mark.parametrize("zygosity, geno", [
    ("heterozygous", ("GENO:0000135", "heterozygous")),
    ("homozygous", ("GENO:0000136", "homozygous")),
    ("hemizygous", ("GENO:0000134", "hemizygous")),
    ("homoplasmic", ("GENO:0000602", "homoplasmic")),
    ("heteroplasmic", ("GENO:0000603", "heteroplasmic")),
    ("haploid call", ("GENO:0000137", "unspecified zygosity")),
])
def test_allelic_state_for_each_zygosity(zygosity, geno):
    r = json.loads(FIXTURE.read_text())
    r["findings"][0]["zygosity"] = zygosity
    pp = to_phenopacket(r)
    st = pp["interpretations"][0]["diagnosis"]["genomicInterpretations"][0]["variantInterpretation"][
        "variationDescriptor"]["allelicState"]
    assert (st["id"], st["label"]) == geno
    assert doc_required_problems(pp) == []


def _write_rpe65_vcf(path: Path) -> str:
    # RPE65 MANE Select (MANE v1.5): NM_000329.3 / ENST00000262340.6 / ENSP00000262340.5, chr1
    # 68,428,822-68,449,954 (GRCh38). The variant is constructed for the test.
    fields = "Allele|Consequence|IMPACT|SYMBOL|Feature_type|Feature|BIOTYPE|EXON|HGVSc|HGVSp|ENSP|Protein_position"
    csq = "|".join(["A", "stop_gained", "HIGH", "RPE65", "Transcript", RPE65["enst"], "protein_coding", "5/14",
                    f"{RPE65['enst']}:c.400C>T", f"{RPE65['ensp']}:p.(Gln134Ter)", RPE65["ensp"], "134/533"])
    lines = ["##fileformat=VCFv4.2", "##reference=GRCh38", "##contig=<ID=chr1,length=248956422>",
             f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {fields}">',
             '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
             '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">',
             '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">',
             '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
             "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tP1",
             f"chr1\t68431000\t.\tG\tA\t500\tPASS\tCSQ={csq}\tGT:AD:DP:GQ\t1/1:0,30:30:99"]
    path.write_text("\n".join(lines) + "\n")
    pysam.tabix_index(str(path), preset="vcf", force=True)
    return str(path) + ".gz"


def test_pipeline_result_gives_named_features_and_one_transcript_pair(tmp_path):
    # with --hpo the result carried the id as the label (the label lookup never ran)
    vcf = _write_rpe65_vcf(tmp_path / "p1.vcf")
    r = triage(vcf, hpo="HP:0000510,HP:0000662")
    assert [(t["id"], t["label"]) for t in r["phenotype"]["present"]] == [
        ("HP:0000510", "Rod-cone dystrophy"), ("HP:0000662", "Nyctalopia")]  # HPO names (from memory)
    pp = to_phenopacket(r)
    _parse(pp)
    assert doc_required_problems(pp) == []
    assert [f["type"]["label"] for f in pp["phenotypicFeatures"]] == ["Rod-cone dystrophy", "Nyctalopia"]
    gi = pp["interpretations"][0]["diagnosis"]["genomicInterpretations"][0]
    vd = gi["variantInterpretation"]["variationDescriptor"]
    exprs = {e["syntax"]: e["value"] for e in vd["expressions"]}
    assert exprs == {"hgvs.c": f"{RPE65['enst']}:c.400C>T", "hgvs.p": f"{RPE65['ensp']}:p.(Gln134Ter)"}
    assert vd["allelicState"] == {"id": "GENO:0000136", "label": "homozygous"}
    assert pp["interpretations"][0]["diagnosis"]["disease"]["id"] == "IRDTRIAGE_CONDITION:RPE65"


def test_invalid_output_is_refused(tmp_path):
    r = json.loads(FIXTURE.read_text())
    r["sample"]["sex"] = "NOT_A_SEX"
    with pytest.raises(InvalidPhenopacket):
        write_phenopacket(r, tmp_path / "bad.json")
    assert not list(tmp_path.iterdir())


def test_invalid_input_phenopacket_is_input_error():
    r = json.loads(FIXTURE.read_text())
    with pytest.raises(InputError, match="not a valid GA4GH Phenopacket"):
        to_phenopacket(r, {"id": "x", "subject": {"id": "y", "sexx": "MALE"}}, "in.json")


@pytest.mark.skipif(not REFDATA.is_dir(), reason="../shared/refdata/phenopackets is absent (GA4GH phenopacket-store extract)")
def test_with_phenopacket_store_case_as_input():
    # source: GA4GH phenopacket-store case record; its allelicState terms are the reference for GENO ids
    src = sorted((REFDATA / "RPGRIP1").glob("*.json"))[0]
    original = json.loads(src.read_text())
    answer = original.pop("interpretations")
    ref_states = {}
    for it in answer:
        for gi in it["diagnosis"]["genomicInterpretations"]:
            st = gi["variantInterpretation"]["variationDescriptor"].get("allelicState")
            if st:
                ref_states[st["label"]] = st["id"]
    r = json.loads(FIXTURE.read_text())
    for f in r["findings"]:
        f["zygosity"] = "homozygous" if "homozygous" in ref_states else "heterozygous"
    pp = to_phenopacket(r, original, src)
    _parse(pp)
    assert pp["phenotypicFeatures"] == original["phenotypicFeatures"]  # the input is kept
    assert pp["subject"] == original["subject"]
    gi = pp["interpretations"][-1]["diagnosis"]["genomicInterpretations"][0]
    assert gi["subjectOrBiosampleId"] == original["subject"]["id"]
    state = gi["variantInterpretation"]["variationDescriptor"]["allelicState"]
    assert ref_states[state["label"]] == state["id"]
    assert pp["metaData"]["updates"][-1]["updatedBy"] == f"irdtriage {__version__}"
    assert "CAUTION" in pp["metaData"]["updates"][-1]["comment"]


@pytest.mark.skipif(not REFDATA.is_dir(), reason="../shared/refdata/phenopackets is absent (GA4GH phenopacket-store extract)")
def test_geno_ids_match_phenopacket_store():
    # source: every allelicState used in the phenopacket-store extract (heterozygous, homozygous)
    from irdtriage.report.phenopacket_out import ALLELIC_STATE

    seen = {}
    for p in REFDATA.glob("*/*.json"):
        for it in json.loads(p.read_text()).get("interpretations", []):
            for gi in it.get("diagnosis", {}).get("genomicInterpretations", []):
                st = gi.get("variantInterpretation", {}).get("variationDescriptor", {}).get("allelicState")
                if st:
                    seen[st["label"]] = st["id"]
    assert {"heterozygous", "homozygous"} <= set(seen)
    for label, gid in seen.items():
        if label in ALLELIC_STATE:
            assert ALLELIC_STATE[label]["id"] == gid, label
