"""Reference cases from GA4GH phenopacket-store, turned into inputs for irdtriage.

Source: GA4GH phenopacket-store (Monarch Initiative, BSD-3-Clause), read from
../shared/refdata/phenopackets/<GENE>/*.json (never copied into the repository). Each case
becomes

* a GRCh38 VCF holding the case's ``vcfRecord``s, genotype from ``allelicState``
  (heterozygous 0/1, homozygous 1/1, hemizygous haploid 1 on chrX of a male), a CSQ-style
  ``CSQ`` annotation built from the case's HGVS expressions, plus heterozygous *decoy*
  carrier variants taken from cases of other, recessive-only genes;
* the phenopacket JSON with ``interpretations`` removed (that block is the answer).

Inheritance per case comes from the HPO annotation of the case's OMIM disease (``diseases``
block of the phenopacket, looked up in the ``hpo3`` OMIM annotations: HP:0000006
autosomal dominant, HP:0000007 autosomal recessive, HP:0001419 X-linked recessive,
HP:0001423 X-linked dominant, HP:0001417 X-linked). Importable by tests and benchmarks.
"""
from __future__ import annotations

import copy
import gzip
import hashlib
import json
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Optional, Sequence

ROOT = Path(__file__).resolve().parents[2]
REFDATA = ROOT.parent / "shared" / "refdata"
PHENOPACKETS = REFDATA / "phenopackets"
MANE = REFDATA / "mane" / "MANE.GRCh38.v1.5.summary.txt.gz"

# Genes of the refdata whose cases present outside the retina (README of ../shared/refdata).
NON_RETINAL_GENES = frozenset({"IFT140"})

# GRCh38 primary-assembly chromosome lengths (from memory; they match the lengths in
# irdtriage/build.py for the chromosomes listed there). Header data only, never a check value.
GRCH38_LENGTHS = {
    "chr1": 248956422, "chr2": 242193529, "chr3": 198295559, "chr4": 190214555, "chr5": 181538259,
    "chr6": 170805979, "chr7": 159345973, "chr8": 145138636, "chr9": 138394717, "chr10": 133797422,
    "chr11": 135086622, "chr12": 133275309, "chr13": 114364328, "chr14": 107043718, "chr15": 101991189,
    "chr16": 90338345, "chr17": 83257441, "chr18": 80373285, "chr19": 58617616, "chr20": 64444167,
    "chr21": 46709983, "chr22": 50818468, "chrX": 156040895, "chrY": 57227415, "chrM": 16569,
}
CHROM_ORDER = {c: i for i, c in enumerate(GRCH38_LENGTHS)}

CSQ_FIELDS = (
    "Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|"
    "cDNA_position|CDS_position|Protein_position|Amino_acids|Codons|Existing_variation|DISTANCE|"
    "STRAND|FLAGS|SYMBOL_SOURCE|HGNC_ID|MANE_SELECT"
)

# SO consequence -> impact class as annotators group them (common practice)
IMPACT = {
    "stop_gained": "HIGH", "frameshift_variant": "HIGH", "splice_donor_variant": "HIGH",
    "splice_acceptor_variant": "HIGH", "start_lost": "HIGH", "exon_loss_variant": "HIGH",
    "stop_lost": "HIGH",
    "missense_variant": "MODERATE", "inframe_deletion": "MODERATE", "inframe_insertion": "MODERATE",
    "protein_altering_variant": "MODERATE",
    "splice_region_variant": "LOW", "synonymous_variant": "LOW",
    "intron_variant": "MODIFIER", "5_prime_UTR_variant": "MODIFIER", "3_prime_UTR_variant": "MODIFIER",
    "coding_sequence_variant": "MODIFIER",
}
_AA3 = {
    "Ala": "A", "Arg": "R", "Asn": "N", "Asp": "D", "Cys": "C", "Gln": "Q", "Glu": "E", "Gly": "G",
    "His": "H", "Ile": "I", "Leu": "L", "Lys": "K", "Met": "M", "Phe": "F", "Pro": "P", "Ser": "S",
    "Thr": "T", "Trp": "W", "Tyr": "Y", "Val": "V", "Ter": "*", "Sec": "U",
}
INHERITANCE_TERMS = {6: "AD", 7: "AR", 1419: "XLR", 1423: "XLD", 1417: "XL"}


@dataclass
class CaseVariant:
    chrom: str  # "chr14"
    pos: int
    ref: str
    alt: str
    allelic_state: str  # heterozygous / homozygous / hemizygous
    gene: str
    hgvs_c: str = ""
    hgvs_p: str = ""
    hgnc_id: str = ""

    @property
    def key(self) -> tuple[int, int, str, str]:
        return (CHROM_ORDER.get(self.chrom, 99), self.pos, self.ref, self.alt)


@dataclass
class RefCase:
    id: str
    gene: str  # folder name = causal gene
    path: Path
    subject_id: str
    sample: str  # subject id usable as a VCF sample name
    sex: Optional[str]  # "MALE" / "FEMALE" / None
    disease_id: str
    inheritance: tuple[str, ...]
    variants: list[CaseVariant]
    missing_records: int  # causal variants without a vcfRecord (not written to the VCF)
    data: dict = field(repr=False, default_factory=dict)

    @property
    def expected_gene(self) -> str:
        return self.gene

    @property
    def retinal(self) -> bool:
        return self.gene not in NON_RETINAL_GENES

    @property
    def complete(self) -> bool:
        return self.missing_records == 0 and bool(self.variants)

    @property
    def expected_fit(self) -> str:
        """Genotype fit implied by the allelic states and the disease's inheritance."""
        states = [v.allelic_state for v in self.variants]
        n_alleles = len(states) + self.missing_records
        if "homozygous" in states:
            return "homozygous"
        if "hemizygous" in states:
            return "hemizygous"
        if n_alleles >= 2:
            return "biallelic phase unknown"
        if any(i in ("AD", "XLD") for i in self.inheritance):
            return "heterozygous in a dominant gene"
        return "single heterozygous in a recessive gene"


def _omim_inheritance(disease_id: str) -> tuple[str, ...]:
    """Inheritance of an OMIM disease from its HPO annotations (hpo3)."""
    from irdtriage.phenotype import get_ontology

    if not disease_id.startswith("OMIM:"):
        return ()
    ont = get_ontology()
    num = int(disease_id.split(":")[1])
    for d in ont.omim_diseases:
        if d.id == num:
            return tuple(v for k, v in INHERITANCE_TERMS.items() if k in set(d.hpo))
    return ()


def load_cases(root: Path | str = PHENOPACKETS) -> list[RefCase]:
    """All cases under ``root/<GENE>/*.json``, sorted by gene then file name."""
    root = Path(root)
    inh_cache: dict[str, tuple[str, ...]] = {}
    cases: list[RefCase] = []
    for path in sorted(root.glob("*/*.json")):
        data = json.loads(path.read_text(encoding="utf-8"))
        gene = path.parent.name
        subject = data.get("subject") or {}
        sid = subject.get("id") or data.get("id") or path.stem
        sample = re.sub(r"[^A-Za-z0-9._-]+", "_", sid)
        sex = {"MALE": "MALE", "FEMALE": "FEMALE"}.get(subject.get("sex", ""))
        diseases = [d["term"]["id"] for d in data.get("diseases", []) if d.get("term")]
        variants: list[CaseVariant] = []
        missing = 0
        for it in data.get("interpretations", []):
            dis = (it.get("diagnosis") or {}).get("disease", {}).get("id")
            if dis and not diseases:
                diseases.append(dis)
            for gi in (it.get("diagnosis") or {}).get("genomicInterpretations", []):
                vd = (gi.get("variantInterpretation") or {}).get("variationDescriptor") or {}
                rec = vd.get("vcfRecord")
                if not rec:
                    missing += 1
                    continue
                ex = {e["syntax"]: e["value"] for e in vd.get("expressions", [])}
                chrom = rec["chrom"] if rec["chrom"].startswith("chr") else "chr" + rec["chrom"]
                variants.append(
                    CaseVariant(
                        chrom=chrom, pos=int(rec["pos"]), ref=rec["ref"], alt=rec["alt"],
                        allelic_state=(vd.get("allelicState") or {}).get("label", "heterozygous"),
                        gene=(vd.get("geneContext") or {}).get("symbol", gene),
                        hgvs_c=ex.get("hgvs.c", ""), hgvs_p=ex.get("hgvs.p", ""),
                        hgnc_id=(vd.get("geneContext") or {}).get("valueId", ""),
                    )
                )
        disease = diseases[0] if diseases else ""
        if disease not in inh_cache:
            inh_cache[disease] = _omim_inheritance(disease)
        cases.append(
            RefCase(
                id=data.get("id", path.stem), gene=gene, path=path, subject_id=sid, sample=sample, sex=sex,
                disease_id=disease, inheritance=inh_cache[disease], variants=variants,
                missing_records=missing, data=data,
            )
        )
    return cases


def recessive_only_genes(cases: Sequence[RefCase]) -> set[str]:
    """Genes whose every case has an autosomal-recessive-only disease."""
    genes: dict[str, bool] = {}
    for c in cases:
        ok = c.inheritance == ("AR",) or set(c.inheritance) == {"AR"}
        genes[c.gene] = genes.get(c.gene, True) and ok
    return {g for g, ok in genes.items() if ok}


def pick_decoys(case: RefCase, cases: Sequence[RefCase], n: int = 2) -> list[CaseVariant]:
    """``n`` heterozygous carrier variants from cases of other recessive-only genes.

    Deterministic: chosen by a hash of the case id; distinct genes when possible.
    """
    rec = recessive_only_genes(cases) - {case.gene}
    own = {(v.chrom, v.pos, v.ref, v.alt) for v in case.variants}
    pool: dict[tuple, CaseVariant] = {}
    for c in cases:
        if c.gene in rec:
            for v in c.variants:
                k = (v.chrom, v.pos, v.ref, v.alt)
                if k not in own and v.chrom != "chrX":
                    pool.setdefault(k, v)
    items = sorted(pool.values(), key=lambda v: (v.gene, v.key))
    if not items:
        return []
    h = int(hashlib.sha256(case.id.encode()).hexdigest(), 16)
    chosen: list[CaseVariant] = []
    used_genes: set[str] = set()
    for step in range(len(items)):
        v = items[(h + step * 7919) % len(items)]
        if v in chosen or (v.gene in used_genes and len({i.gene for i in items}) > len(used_genes)):
            continue
        chosen.append(CaseVariant(v.chrom, v.pos, v.ref, v.alt, "heterozygous", v.gene, v.hgvs_c, v.hgvs_p, v.hgnc_id))
        used_genes.add(v.gene)
        if len(chosen) == n:
            break
    return chosen


# ---------------------------------------------------------------------------
# CSQ annotation from HGVS expressions
# ---------------------------------------------------------------------------
def consequence_from_hgvs(hgvs_c: str, hgvs_p: str) -> str:
    """Sequence Ontology consequence inferred from HGVS c./p. syntax (den Dunnen et al. 2016)."""
    c = hgvs_c.split(":", 1)[-1]
    p = hgvs_p.split(":", 1)[-1].strip()
    pc = p.replace("(", "").replace(")", "")
    if pc and pc not in ("p.?", "p.0"):
        if re.match(r"p\.Met1(?!\d)", pc) and not pc.endswith("="):
            return "start_lost"  # any change of the initiator methionine (p.Met1?, p.Met1Val, ...)
        if "fs" in pc:
            return "frameshift_variant"
        if pc.endswith("=") or pc == "p.=":
            return "synonymous_variant"
        if re.search(r"(Ter|\*)\d*ext", pc):
            return "stop_lost"
        if "delins" in pc:
            return "protein_altering_variant"
        if re.search(r"(Ter|\*)$", pc):
            return "stop_gained"
        if "del" in pc:
            return "inframe_deletion"
        if "ins" in pc or "dup" in pc:
            return "inframe_insertion"
        return "missense_variant"
    # no protein consequence given: use the c. position
    body = c[2:] if c.startswith("c.") else c
    positions = re.findall(r"([-*]?\d+)([+-]\d+)?", body.split("del")[0].split("dup")[0].split("ins")[0].split(">")[0])
    offsets = [int(o) for _, o in positions if o]
    if len(positions) == 2 and positions[0][1] and positions[1][1] and positions[0][0] != positions[1][0]:
        return "exon_loss_variant"  # a deletion/duplication spanning whole exon(s)
    if len(positions) == 2 and bool(positions[0][1]) != bool(positions[1][1]):
        # a range from an exon into the intron (or back) removes the exon-intron boundary itself:
        # e.g. c.2212_2215+21del takes out the donor site, c.801-25_843del the acceptor site
        intronic = positions[0] if positions[0][1] else positions[1]
        return "splice_donor_variant" if intronic[1].startswith("+") else "splice_acceptor_variant"
    if offsets:
        o = min(offsets, key=abs)
        if 1 <= o <= 2:
            return "splice_donor_variant"
        if -2 <= o <= -1:
            return "splice_acceptor_variant"
        if -8 <= o <= 8:
            return "splice_region_variant"
        return "intron_variant"
    if len(positions) == 1 and positions[0][0] in ("1", "2", "3"):
        return "start_lost"  # a change inside the initiation codon, c.1 to c.3
    if body.startswith("-"):
        return "5_prime_UTR_variant"
    if body.startswith("*"):
        return "3_prime_UTR_variant"
    return "coding_sequence_variant"


def _enc(v: str) -> str:
    """Escape characters not allowed inside a VCF INFO value (percent encoding, as annotators do)."""
    return v.replace("%", "%25").replace(";", "%3B").replace("=", "%3D").replace(",", "%2C").replace(" ", "%20")


_MANE_CACHE: dict[str, dict[str, str]] = {}


def mane_row(symbol: str) -> dict[str, str]:
    """MANE Select row for a gene from the MANE v1.5 summary (empty dict if absent)."""
    if not _MANE_CACHE and MANE.is_file():
        with gzip.open(MANE, "rt") as fh:
            header = fh.readline().lstrip("#").rstrip("\n").split("\t")
            for line in fh:
                row = dict(zip(header, line.rstrip("\n").split("\t")))
                if row.get("MANE_status") == "MANE Select":
                    _MANE_CACHE[row["symbol"]] = row
    return _MANE_CACHE.get(symbol, {})


def csq_for(v: CaseVariant, strip_evidence: bool = False) -> str:
    """The CSQ value for one variant from its HGVS expressions.

    ``strip_evidence``: annotate the allele as a missense change on the same transcript with no
    HGVS, no positions and no amino acids, so nothing but the consequence is known (no PVS1,
    PM1, PM4, PS1/PM5 or splice evidence; no scores): a benchmark's "evidence removed" condition.
    """
    cons = "missense_variant" if strip_evidence else consequence_from_hgvs(v.hgvs_c, v.hgvs_p)
    tx = v.hgvs_c.split(":", 1)[0] if ":" in v.hgvs_c else ""
    mane = mane_row(v.gene)
    strand = {"+": "1", "-": "-1"}.get(mane.get("chr_strand", ""), "")
    p = v.hgvs_p.split(":", 1)[-1].replace("(", "").replace(")", "") if v.hgvs_p else ""
    m = re.match(r"p\.([A-Z][a-z]{2})(\d+)([A-Z][a-z]{2})?", p)
    prot_pos = m.group(2) if m else ""
    aa = ""
    if m and cons == "missense_variant" and m.group(3):
        aa = f"{_AA3.get(m.group(1), 'X')}/{_AA3.get(m.group(3), 'X')}"
    elif m and cons == "stop_gained":
        aa = f"{_AA3.get(m.group(1), 'X')}/*"
    cm = re.match(r"c\.(\d+)(?:_(\d+))?(?:del|dup|ins|[ACGT]>|$)", v.hgvs_c.split(":", 1)[-1])
    cds = ""
    if cm:
        cds = cm.group(1) + (f"-{cm.group(2)}" if cm.group(2) else "")
    hgvs_c, hgvs_p = v.hgvs_c, v.hgvs_p
    if strip_evidence:
        hgvs_c = hgvs_p = cds = prot_pos = aa = ""
    alt = v.alt
    if len(v.ref) != len(v.alt) and v.ref[:1] == v.alt[:1]:
        alt = v.alt[1:] or "-"  # the CSQ allele string for indels with a shared padding base
    fields = [
        alt, cons, IMPACT.get(cons, "MODIFIER"), v.gene, mane.get("Ensembl_Gene", ""), "Transcript", tx,
        "protein_coding", "", "", hgvs_c, hgvs_p, "", cds, prot_pos, aa, "", "", "", strand, "",
        "HGNC", v.hgnc_id or mane.get("HGNC_ID", ""), tx if tx and tx == mane.get("RefSeq_nuc") else "",
    ]
    return "|".join(_enc(f) for f in fields)


def write_case_vcf(case: RefCase, path: Path | str, decoys: Sequence[CaseVariant] = (),
                   strip_causal_evidence: bool = False) -> Path:
    """Write the case's GRCh38 VCF (causal records + heterozygous decoys, sorted).

    ``strip_causal_evidence``: the case's own records are annotated by ``csq_for(v, strip_evidence=True)``
    (missense, nothing else known); decoys keep their annotation.
    """
    causal = {(v.chrom, v.pos, v.ref, v.alt) for v in case.variants}
    path = Path(path)
    lines = [
        "##fileformat=VCFv4.2",
        "##reference=GRCh38",
        *(f"##contig=<ID={c},length={n},assembly=GRCh38>" for c, n in GRCH38_LENGTHS.items()),
        '##FILTER=<ID=PASS,Description="All filters passed">',
        f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations from the published HGVS expressions. Format: {CSQ_FIELDS}">',
        '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
        '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths for the ref and alt alleles">',
        '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Read depth">',
        '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
        f"##source=phenopacket-store case {case.id} (GA4GH phenopacket-store, BSD-3-Clause)",
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\t" + case.sample,
    ]
    records = []
    seen = set()
    for v in list(case.variants) + list(decoys):
        k = (v.chrom, v.pos, v.ref, v.alt)
        if k in seen:
            continue
        seen.add(k)
        state = v.allelic_state
        if state == "hemizygous" or (v.chrom == "chrX" and case.sex == "MALE" and state == "homozygous"):
            sample = "1:0,32:32:99"
        elif state == "homozygous":
            sample = "1/1:0,31:31:99"
        else:
            sample = "0/1:16,15:31:99"
        records.append((v.key, f"{v.chrom}\t{v.pos}\t.\t{v.ref}\t{v.alt}\t60\tPASS\tCSQ={csq_for(v, strip_causal_evidence and k in causal)}\tGT:AD:DP:GQ\t{sample}"))
    records.sort(key=lambda r: r[0])
    path.write_text("\n".join(lines + [r[1] for r in records]) + "\n", encoding="utf-8")
    return path


def write_case_phenopacket(case: RefCase, path: Path | str) -> Path:
    """The case's phenopacket with ``interpretations`` removed and the subject id = VCF sample."""
    data = copy.deepcopy(case.data)
    data.pop("interpretations", None)
    data.setdefault("subject", {})["id"] = case.sample
    path = Path(path)
    path.write_text(json.dumps(data, indent=2) + "\n", encoding="utf-8")
    return path


def candidate_genes() -> list[str]:
    """Genes to rank: the project panel (a broken panel is an error, never a switch to another list)."""
    from irdtriage.panel import load_panel

    return list(load_panel().genes)
