"""Automated criteria against ClinGen expert panels (ClinGen Evidence Repository export).

Source: ../shared/refdata/clingen_erepo/erepo_dev.tsv.gz (ClinGen Evidence Repository export,
5,288 expert-panel classifications; see ../shared/refdata/README.md), with the MANE v1.5 summary
(../shared/refdata/mane/) for the genes' transcripts and spans.

Rows used: those in genes of the product panel (panels/genes.yaml) and, because those are few,
every row whose GRCh38 genomic HGVS is a single-base substitution (``NC_0000xx.yy:g.NNNA>G``,
the accession checked against MANE's GRCh38 chromosome accessions). Other rows (indels,
GRCh37-only) need reference bases to become VCF records and are left out.

Each row becomes a heterozygous call of one sample in a GRCh38 VCF. Its CSQ annotation holds
only what the row itself gives: transcript, HGVS c. and p. from the ``variation`` column, the
consequence read from that HGVS (``phenopacket_cases.consequence_from_hgvs``), the gene and the
MANE Select flag when the row's transcript version is MANE's. Rows are packed so that a VCF has
at most one row per gene (criteria are per allele; PM3/BP2 pair alleles of one gene only), and
the sample is stated female so heterozygous chrX calls are coherent.

The pipeline (``irdtriage.pipeline.triage``, ``all_variants=True`` so alleles the reporting filter
would hide are classified too) runs with a panel written to a temporary folder: the product
panel's own entries for its genes, and for the other genes an entry from MANE (identifiers,
GRCh38 span and strand), the inheritance the export states for the gene's rows, the rows'
diseases, and the mechanism given by ``--assume-mechanism`` (default LOF for every gene: an
assumption, not curated, which matters for PVS1 only).

Then, per ACMG/AMP code, the automated call (met with its strength / not met / not evaluable)
is set against the panel's met and not-met lists; PVS1 strength as a table; and the class
against the panel's assertion. A benchmark: prints tables, exits 0 (1 when the data are absent).

    python benchmarks/bench_erepo_automated.py [--refdata ../shared/refdata] [--limit N]
        [--assume-mechanism LOF|none]
"""
from __future__ import annotations

import argparse
import csv
import gzip
import re
import sys
import tempfile
import time
from collections import Counter, defaultdict
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "external"))

import phenopacket_cases  # noqa: E402
from phenopacket_cases import GRCH38_LENGTHS, CSQ_FIELDS, CaseVariant, csq_for  # noqa: E402

DEFAULT_REFDATA = ROOT.parent / "shared" / "refdata"
SUBST = re.compile(r"^(NC_0000(\d\d)\.\d+):g\.(\d+)([ACGT])>([ACGT])$")
CODES = ("PVS1", "PS1", "PS2", "PS3", "PS4", "PM1", "PM2", "PM3", "PM4", "PM5", "PM6", "PP1", "PP2", "PP3",
         "PP4", "PP5", "BA1", "BS1", "BS2", "BS3", "BS4", "BP1", "BP2", "BP3", "BP4", "BP5", "BP6", "BP7")
# Richards et al. 2015: a code's strength when written without a suffix.
DEFAULT_STRENGTH = {"PVS": "VeryStrong", "PS": "Strong", "PM": "Moderate", "PP": "Supporting",
                    "BA": "StandAlone", "BS": "Strong", "BP": "Supporting"}
SUFFIX = {"supporting": "Supporting", "moderate": "Moderate", "strong": "Strong", "very strong": "VeryStrong",
          "verystrong": "VeryStrong", "stand alone": "StandAlone", "standalone": "StandAlone"}
PANEL_CLASS = {"Pathogenic": "Pathogenic", "Likely Pathogenic": "Likely pathogenic",
               "Uncertain Significance": "Uncertain significance", "Likely Benign": "Likely benign",
               "Benign": "Benign"}
CLASSES = ("Pathogenic", "Likely pathogenic", "Uncertain significance", "Likely benign", "Benign")
SHORT = {"Pathogenic": "P", "Likely pathogenic": "LP", "Uncertain significance": "VUS", "Likely benign": "LB",
         "Benign": "B"}
# The export's mode of inheritance -> the panel vocabulary (AD, AR, XLR, XLD).
INHERITANCE = [("semidominant", ("AD", "AR")), ("autosomal dominant", ("AD",)), ("autosomal recessive", ("AR",)),
               ("x-linked inheritance (dominant", ("XLD",)), ("x-linked inheritance (recessive", ("XLR",)),
               ("x-linked", ("XLR", "XLD"))]
# What the VCF cannot carry (the report names it beside the figures).
LACKING = ("population frequency (BA1, BS1, BS2, PM2)", "in-silico and splice scores (PP3, BP4, BP7's splice part)",
           "exon numbers and protein length (PVS1's NMD and removed-share branches, unless the panel has a model)",
           "functional data (PS3, BS3)", "case counts (PS4)", "family, segregation and de novo data (PS2, PM6, PP1, BS4)",
           "a second allele (PM3, BP2)", "phenotype (PP4)", "clinical assertions at the same residue (PS1, PM5)",
           "gene-level curation for genes outside the panel (PM1 hotspots, PP2, BP1, BP3 repeats)")


def default_strength(code: str) -> str:
    return DEFAULT_STRENGTH["PVS" if code.startswith("PVS") else code[:2]]


def parse_items(text: str) -> dict[str, str]:
    """'PS3, PM2_Supporting, BS1_Stand Alone' -> {code: strength}."""
    out = {}
    for item in (text or "").split(","):
        item = item.strip()
        if not item:
            continue
        code, _, suf = item.partition("_")
        code = code.strip().upper()
        if code not in CODES:
            continue
        strength = SUFFIX.get(suf.strip().lower()) if suf else default_strength(code)
        out[code] = strength or suf.strip()
    return out


def parse_variation(text: str) -> tuple[str, str, str]:
    """'NM_000277.2(PAH):c.1A>G (p.Met1Val)' -> ('NM_000277.2', 'c.1A>G', 'p.Met1Val')."""
    m = re.match(r"^(N[MR]_\d+\.\d+)(?:\([^)]*\))?:(c\.[^ ]+|n\.[^ ]+)(?:\s+\((p\.[^)]*\)?)\))?", text.strip())
    if not m:
        return "", "", ""
    return m.group(1), m.group(2), (m.group(3) or "")


def inheritance_of(modes: list[str]) -> list[str]:
    out: list[str] = []
    for mode in modes:
        low = mode.lower()
        for key, vals in INHERITANCE:
            if low.startswith(key):
                out += [v for v in vals if v not in out]
                break
    return out or ["AD", "AR"]


def read_mane(path: Path) -> tuple[dict[str, dict[str, str]], dict[str, str]]:
    """MANE Select rows by symbol, and GRCh38 chromosome accession -> bare chromosome name."""
    rows, acc = {}, {}
    with gzip.open(path, "rt", encoding="utf-8") as fh:
        header = fh.readline().lstrip("#").rstrip("\n").split("\t")
        for line in fh:
            row = dict(zip(header, line.rstrip("\n").split("\t")))
            if row.get("MANE_status") != "MANE Select":
                continue
            rows[row["symbol"]] = row
            m = re.match(r"NC_0000(\d\d)\.\d+$", row["GRCh38_chr"])
            if m:
                n = int(m.group(1))
                acc[row["GRCh38_chr"]] = {23: "X", 24: "Y"}.get(n, str(n))
    return rows, acc


def select_rows(erepo: Path, panel_genes: set[str], acc: dict[str, str]) -> tuple[list[dict], Counter]:
    with gzip.open(erepo, "rt", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh, delimiter="\t"))
    why: Counter = Counter()
    kept = []
    for r in rows:
        m = SUBST.match(r["hgvs_grch38"].strip())
        if not m:
            why["in a panel gene but not a GRCh38 substitution" if r["gene"] in panel_genes
                else "not a GRCh38 single-base substitution"] += 1
            continue
        if m.group(1) not in acc:
            why["genomic accession not a GRCh38 chromosome of MANE"] += 1
            continue
        r["_chrom"] = acc[m.group(1)]
        r["_pos"], r["_ref"], r["_alt"] = int(m.group(3)), m.group(4), m.group(5)
        r["_in_panel"] = r["gene"] in panel_genes
        kept.append(r)
    why["rows in the export"] = len(rows)
    return kept, why


def build_panel(rows: list[dict], mane: dict, tmp: Path, mechanism: str) -> tuple[Path, set[str], list[str]]:
    """A genes.yaml for the rows' genes; returns (path, genes, genes left out)."""
    import yaml

    from irdtriage.panel import default_panel_path, load_cascade

    product = yaml.safe_load(default_panel_path().read_text(encoding="utf-8"))
    own = {g["symbol"]: g for g in product["genes"]}
    _v, steps, _b = load_cascade()
    placeholder_step = next(iter(steps))  # a required field; not meaningful outside the retina
    modes, diseases = defaultdict(list), defaultdict(list)
    for r in rows:
        modes[r["gene"]].append(r["mode_of_inheritance"])
        if r["disease"] and r["disease"] not in diseases[r["gene"]]:
            diseases[r["gene"]].append(r["disease"])
    genes, missing = [], []
    for sym in sorted(modes):
        if sym in own:
            genes.append(own[sym])
            continue
        m = mane.get(sym)
        if m is None or not m.get("RefSeq_prot"):
            missing.append(sym)
            continue
        chrom = re.match(r"NC_0000(\d\d)", m["GRCh38_chr"]).group(1)
        chrom = {"23": "X", "24": "Y"}.get(chrom, str(int(chrom)))
        genes.append({
            "symbol": sym, "hgnc_id": m["HGNC_ID"], "name": m["name"], "refseq_transcript": m["RefSeq_nuc"],
            "ensembl_transcript": m["Ensembl_nuc"], "refseq_protein": m["RefSeq_prot"], "strand": m["chr_strand"],
            "grch38": {"chrom": chrom, "start": int(m["chr_start"]), "end": int(m["chr_end"])}, "grch37": None,
            "inheritance": inheritance_of(modes[sym]), "mechanisms": [mechanism] if mechanism != "none" else [],
            "conditions": diseases[sym][:5] or ["not stated"], "cascade_step": placeholder_step,
            "notes": ["benchmark-only entry: identifiers and span from MANE v1.5, inheritance and conditions from "
                      "the ClinGen export rows, mechanism assumed"],
        })
    path = tmp / "genes.yaml"
    path.write_text(yaml.safe_dump({"name": "erepo-benchmark", "version": "1", "genes": genes}, sort_keys=False),
                    encoding="utf-8")
    return path, {g["symbol"] for g in genes}, missing


def batches(rows: list[dict]) -> list[list[dict]]:
    """Pack rows so that a batch holds at most one row per gene and one record per position."""
    out: list[list[dict]] = []
    used: list[tuple[set, set]] = []
    for r in rows:
        key = (r["_chrom"], r["_pos"])
        for i, (genes, pos) in enumerate(used):
            if r["gene"] not in genes and key not in pos:
                out[i].append(r)
                genes.add(r["gene"])
                pos.add(key)
                break
        else:
            out.append([r])
            used.append(({r["gene"]}, {key}))
    return out


def write_vcf(batch: list[dict], path: Path, mane: dict) -> None:
    lines = [
        "##fileformat=VCFv4.2",
        "##reference=GRCh38",
        *(f"##contig=<ID={c},length={n},assembly=GRCh38>" for c, n in GRCH38_LENGTHS.items()),
        '##FILTER=<ID=PASS,Description="All filters passed">',
        f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations from the ClinGen row\'s HGVS. '
        f'Format: {CSQ_FIELDS}">',
        '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
        '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths for the ref and alt alleles">',
        '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Read depth">',
        '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
        "##source=ClinGen Evidence Repository export rows (expert-panel classifications)",
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tROW",
    ]
    recs = []
    order = {c: i for i, c in enumerate(GRCH38_LENGTHS)}
    for r in batch:
        tx, c, p = parse_variation(r["variation"])
        v = CaseVariant(chrom="chr" + r["_chrom"], pos=r["_pos"], ref=r["_ref"], alt=r["_alt"],
                        allelic_state="heterozygous", gene=r["gene"],
                        hgvs_c=f"{tx}:{c}" if tx and c.startswith("c.") else "", hgvs_p=p,
                        hgnc_id=(mane.get(r["gene"]) or {}).get("HGNC_ID", ""))
        recs.append(((order[v.chrom], v.pos), f"{v.chrom}\t{v.pos}\t{r['clingen_uuid']}\t{v.ref}\t{v.alt}\t60\tPASS\t"
                     f"CSQ={csq_for(v)}\tGT:AD:DP:GQ\t0/1:16,15:31:99"))
    recs.sort()
    path.write_text("\n".join(lines + [x[1] for x in recs]) + "\n", encoding="utf-8")


def tool_call(c: dict) -> tuple[str, str | None]:
    if c.get("met") is None:
        return "not evaluable", None
    return ("met", c.get("strength")) if c["met"] else ("not met", None)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--refdata", default=str(DEFAULT_REFDATA),
                    help="the shared reference data folder (default ../shared/refdata beside the project)")
    ap.add_argument("--limit", type=int, default=0, help="at most N rows (for a quick look)")
    ap.add_argument("--assume-mechanism", choices=("LOF", "none"), default="LOF",
                    help="disease mechanism written for genes outside the product panel (default LOF)")
    args = ap.parse_args(argv)
    refdata = Path(args.refdata)
    erepo = refdata / "clingen_erepo" / "erepo_dev.tsv.gz"
    mane_path = refdata / "mane" / "MANE.GRCh38.v1.5.summary.txt.gz"
    for p, what in ((erepo, "ClinGen Evidence Repository export"), (mane_path, "MANE v1.5 summary")):
        if not p.is_file():
            print(f"{what} not found at {p}; nothing to measure (see ../shared/refdata/README.md)")
            return 1
    phenopacket_cases.MANE = mane_path

    from irdtriage.panel import load_panel
    from irdtriage.pipeline import triage

    mane, acc = read_mane(mane_path)
    product_genes = set(load_panel().genes)
    rows, why = select_rows(erepo, product_genes, acc)
    why["GRCh38 single-base substitutions"] = len(rows)
    if args.limit:
        rows = rows[:args.limit]
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmpd:
        tmp = Path(tmpd)
        panel_path, panel_genes, missing = build_panel(rows, mane, tmp, args.assume_mechanism)
        skipped_gene = [r for r in rows if r["gene"] not in panel_genes]
        rows = [r for r in rows if r["gene"] in panel_genes]
        results: dict[str, dict] = {}
        errors = []
        packs = batches(rows)
        for i, batch in enumerate(packs):
            vcf = tmp / f"b{i}.vcf"
            write_vcf(batch, vcf, mane)
            try:
                res = triage(str(vcf), sample="ROW", sex="FEMALE", build="GRCh38", panel_path=str(panel_path),
                             all_variants=True)
            except Exception as exc:
                errors.append(f"batch {i}: {type(exc).__name__}: {exc}")
                continue
            for f in res.get("findings", []):
                if f.get("vcf_id"):
                    results[f["vcf_id"]] = f
    wall = time.perf_counter() - t0

    print("Automated ACMG/AMP criteria vs ClinGen expert panels (ClinGen Evidence Repository export, "
          f"{erepo.name}; MANE v1.5)")
    print(f"rows: {why['rows in the export']} in the export; {why['GRCh38 single-base substitutions']} GRCh38 "
          f"single-base substitutions; {len(rows) + len(skipped_gene)} run"
          f"{' (--limit)' if args.limit else ''}, {sum(r['_in_panel'] for r in rows)} of them in product panel genes; "
          + "; ".join(f"{n} {k}" for k, n in why.items()
                      if k not in ("rows in the export", "GRCh38 single-base substitutions"))
          + (f"; {len(skipped_gene)} rows in genes without a MANE Select protein ({', '.join(missing)})" if missing else ""))
    print(f"{len(packs)} VCFs, {len(panel_genes)} genes, mechanism outside the product panel: {args.assume_mechanism}; "
          f"pipeline wall {wall:.0f} s")
    if errors:
        print(f"pipeline errors: {len(errors)}; first: {errors[0][:300]}")

    matched = []
    for r in rows:
        f = results.get(r["clingen_uuid"])
        if f is None:
            why["no finding from the pipeline"] += 1
            continue
        matched.append((r, f))
    print(f"rows with a classified finding: {len(matched)}; without: {why['no finding from the pipeline']}"
          + (" (e.g. " + ", ".join(f"{r['variation']} {r['hgvs_grch38']}" for r in rows
                                   if r["clingen_uuid"] not in results)[:400] + ")"
             if why["no finding from the pipeline"] else ""))
    if not matched:
        return 0
    report(matched, "all kept rows")
    inpanel = [(r, f) for r, f in matched if r["_in_panel"]]
    if inpanel:
        report(inpanel, "rows in product panel genes", short=True)
    print("\nevidence the VCF cannot carry, so the automated calls lack it: " + "; ".join(LACKING) + ".")
    return 0


def report(matched: list[tuple[dict, dict]], title: str, short: bool = False) -> None:
    n = len(matched)
    print(f"\n== {title}: {n} rows ==")
    per = {code: Counter() for code in CODES}
    strength_agree = Counter()
    pvs1 = Counter()
    pvs1_missed = Counter()
    for r, f in matched:
        met, not_met = parse_items(r["criteria_met"]), parse_items(r["criteria_not_met"])
        calls = {c["code"]: tool_call(c) for c in f.get("criteria", [])}
        for code in CODES:
            call, strength = calls.get(code, ("absent", None))
            panel = "met" if code in met else "not met" if code in not_met else "not listed"
            per[code][(panel, call)] += 1
            if panel == "met" and call == "met":
                strength_agree[(code, strength == met[code])] += 1
        ps = met.get("PVS1", "not met" if "PVS1" in not_met else "not listed")
        ts = calls.get("PVS1", ("absent", None))
        pvs1[(ps, ts[1] if ts[0] == "met" else ts[0])] += 1
        if "PVS1" in met and ts[0] == "not met":
            pvs1_missed["/".join(f.get("consequence") or ["none"])] += 1
    if not short:
        print("per criterion: panel met / not met (of rows listing the code) against the automated call")
        head = (f"{'code':5} | {'panel met':>9} {'auto met':>8} {'same str':>8} {'auto not':>8} {'n/eval':>6} | "
                f"{'panel not':>9} {'auto not':>8} {'auto met':>8} {'n/eval':>6} | {'agree*':>12} | "
                f"{'unlisted, auto met':>18}")
        print(head)
        print("-" * len(head))
        for code in CODES:
            c = per[code]
            pm = sum(v for (p, _), v in c.items() if p == "met")
            pn = sum(v for (p, _), v in c.items() if p == "not met")
            agree = c[("met", "met")] + c[("not met", "not met")]
            decided = agree + c[("met", "not met")] + c[("not met", "met")]
            print(f"{code:5} | {pm:>9} {c[('met', 'met')]:>8} {strength_agree[(code, True)]:>8} "
                  f"{c[('met', 'not met')]:>8} {c[('met', 'not evaluable')]:>6} | {pn:>9} {c[('not met', 'not met')]:>8} "
                  f"{c[('not met', 'met')]:>8} {c[('not met', 'not evaluable')]:>6} | "
                  f"{(f'{agree}/{decided} {100 * agree / decided:.0f}%' if decided else '-'):>12} | "
                  f"{c[('not listed', 'met')]:>18}")
        print("agree*: rows where the panel listed the code and the automated call was met or not met "
              "(not evaluable left out); same str: met by both at the same strength")
        print("\nPVS1: panel (rows) x automated")
        cols = ["VeryStrong", "Strong", "Moderate", "Supporting", "not met", "not evaluable"]
        print(f"{'panel':>12} | " + " ".join(f"{c:>13}" for c in cols))
        for prow in ["VeryStrong", "Strong", "Moderate", "Supporting", "not met", "not listed"]:
            vals = [pvs1[(prow, c)] for c in cols]
            if sum(vals):
                print(f"{prow:>12} | " + " ".join(f"{v:>13}" for v in vals))
        if pvs1_missed:
            print("PVS1 met by the panel, not met automated, by the consequence read from the row's HGVS: "
                  + ", ".join(f"{k} {v}" for k, v in pvs1_missed.most_common()))
    classes = Counter((PANEL_CLASS.get(r["assertion"], r["assertion"]), f.get("classification")) for r, f in matched)
    same = sum(v for (a, b), v in classes.items() if a == b)
    print(f"\nclass: automated = panel in {same}/{n} ({100 * same / n:.0f} %); panel (rows) x automated")
    print(f"{'panel':>6} | " + " ".join(f"{SHORT[c]:>6}" for c in CLASSES))
    for a in CLASSES:
        vals = [classes[(a, b)] for b in CLASSES]
        if sum(vals):
            print(f"{SHORT[a]:>6} | " + " ".join(f"{v:>6}" for v in vals))
    if short:
        for r, f in matched:
            calls = ", ".join(f"{c['code']}{'' if c['strength'] in (None, default_strength(c['code'])) else '_' + c['strength']}"
                              for c in f.get("criteria", []) if c.get("met"))
            print(f"  {r['variation']}: panel {SHORT.get(PANEL_CLASS.get(r['assertion']), '?')} [{r['criteria_met']}]; "
                  f"automated {SHORT.get(f.get('classification'), '?')} [{calls or 'none met'}]")


if __name__ == "__main__":
    sys.exit(main())
