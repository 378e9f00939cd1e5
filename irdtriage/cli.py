"""The `irdtriage` command: argument checking, exit codes, and nothing else.

Exit status: 0 success, 2 bad input (one line on stderr naming file, line and problem;
also an output folder that cannot be written: disk full, file-size limit, read-only, in use
by another run, holding foreign files or an input), 1 an unexpected internal error (with a
hint to re-run with --debug), 130 after SIGINT, 143 after SIGTERM, 129 after SIGHUP.
Outputs are written as one transaction (``irdtriage.atomic.output_transaction``).
"""
from __future__ import annotations

import argparse
import os
import shlex
import signal
import sys
from typing import Optional, Sequence

from . import CAUTION, __version__
from .errors import InputError
from .panel import parse_gene_option

FORMATS = ("json", "html", "tsv", "vcf", "phenopacket")


class Terminated(BaseException):
    """Raised by the SIGTERM/SIGHUP handler so that every finally-block (output clean-up) runs."""

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signum


def _raise_terminated(signum, frame):
    raise Terminated(signum)


def _install_signal_handlers():
    """SIGINT -> KeyboardInterrupt, SIGTERM/SIGHUP -> Terminated, SIGXFSZ ignored (a write past the
    file-size limit then fails with EFBIG instead of killing the process). Returns a restorer."""
    import threading

    if threading.current_thread() is not threading.main_thread():
        return lambda: None
    wanted = {signal.SIGINT: signal.default_int_handler, signal.SIGTERM: _raise_terminated}
    for name in ("SIGHUP",):
        if hasattr(signal, name):
            wanted[getattr(signal, name)] = _raise_terminated
    if hasattr(signal, "SIGXFSZ"):
        wanted[signal.SIGXFSZ] = signal.SIG_IGN
    previous = {}
    for sig, handler in wanted.items():
        try:
            previous[sig] = signal.signal(sig, handler)
        except (OSError, ValueError):  # pragma: no cover - platform without the signal
            pass

    def restore() -> None:
        for sig, handler in previous.items():
            signal.signal(sig, handler if handler is not None else signal.SIG_DFL)

    return restore


def _outcome(args) -> str:
    """What an interrupted run leaves in its output folder."""
    tx = getattr(args, "transaction", None)
    if tx is None:
        return "no output was written"
    if tx.committed:
        return f"the outputs in {tx.given} were complete before it stopped"
    return f"no output was written; {tx.given} is as it was before the run"


def _format_list(text: str) -> list[str]:
    items = [t.strip().lower() for t in text.split(",") if t.strip()]
    bad = [t for t in items if t not in FORMATS]
    if bad or not items:
        raise argparse.ArgumentTypeError(
            f"unknown format(s) {', '.join(bad) or '(none)'}; choose from {', '.join(FORMATS)}")
    return list(dict.fromkeys(items))


class _OneLineErrors(argparse.ArgumentParser):
    """Usage mistakes get the same one-line form as every other error (exit 2)."""

    def error(self, message: str):  # type: ignore[override]
        self.exit(2, f"irdtriage: error: {self.prog}: {message} (see '{self.prog} --help')\n")


def _non_negative_int(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}")
    if value < 0:
        raise argparse.ArgumentTypeError(f"must be 0 or more, got {value}")
    return value


def _formats(text: str) -> list[str]:
    """--formats of triage/demo: result.json is always written, every other output derives from it."""
    items = _format_list(text)
    return items if "json" in items else ["json"] + items


def build_parser() -> argparse.ArgumentParser:
    p = _OneLineErrors(
        prog="irdtriage",
        description="Triage variants in inherited retinal disease genes (decision support only).",
        epilog=CAUTION,
    )
    p.add_argument("--version", action="version", version=f"irdtriage {__version__}")
    p.add_argument("--debug", action="store_true", help="show a traceback on internal errors")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")

    def add_panel_opts(sp: argparse.ArgumentParser) -> None:
        sp.add_argument("--panel", metavar="FILE", help="gene panel YAML (default: the bundled IRD panel)")
        sp.add_argument("--genes", metavar="LIST", type=str,
                        help="restrict to these genes: comma-separated symbols or @file (one per line)")

    def add_output_opts(sp: argparse.ArgumentParser, default_out: Optional[str]) -> None:
        sp.add_argument("--out", metavar="DIR", default=default_out, help=f"output folder (default: {default_out})")
        sp.add_argument("--formats", type=_formats, default=list(FORMATS), metavar="LIST",
                        help=f"outputs to write, comma-separated from {','.join(FORMATS)} (default: all)")
        sp.add_argument("--quiet", "-q", action="store_true", help="print only the case call and cautions")
        sp.add_argument("--verbose", "-v", action="store_true", help="print every criterion with its reason")

    t = sub.add_parser("triage", help="triage one person's VCF", description="Triage one person's VCF.")
    t.add_argument("vcf", help="VCF/BCF file (plain, bgzipped, indexed or not)")
    t.add_argument("--sample", help="the person to triage (required when the VCF has several samples)")
    t.add_argument("--hpo", help="HPO terms, comma-separated (e.g. HP:0000510,HP:0000662) or @file")
    t.add_argument("--phenopacket", metavar="FILE", help="GA4GH Phenopacket v2 JSON with HPO features and sex")
    t.add_argument("--ped", metavar="FILE", help="PED pedigree (relatives genotyped in the same VCF)")
    t.add_argument("--sex", help="male, female or unknown (overrides the phenopacket/PED)")
    t.add_argument("--build", choices=("GRCh37", "GRCh38"), help="genome build (default: detected from the header)")
    add_panel_opts(t)
    t.add_argument("--tier", choices=("established", "moderate", "limited"), default=None,
                   help="keep only panel genes whose gene-disease evidence is at or above this level "
                        "(default: every gene except disputed ones)")
    t.add_argument("--rules", metavar="FILE", help="criteria rule set YAML (default: bundled panels/criteria.yaml)")
    t.add_argument("--curated", metavar="FILE", help="curated evidence (PS3, BS3, PS4, PP5, BP6 ...) YAML/TSV")
    t.add_argument("--population-vcf", metavar="FILE", help="population-frequency VCF (bgzipped + tabix)")
    t.add_argument("--clinical-vcf", metavar="FILE", help="clinical-assertion VCF (bgzipped + tabix)")
    t.add_argument("--sv-vcf", metavar="FILE",
                   help="copy-number / structural-variant VCF of the same person (symbolic <DEL>, <DUP>, <CNV> ... "
                        "records, or explicit alleles of 50 bp or more), read besides the main VCF")
    t.add_argument("--scores", metavar="FILE", action="append", default=[],
                   help="tabix-indexed score table with columns chrom, pos, ref, alt, score; the score is "
                        "named by the file (revel.tsv.gz) or as NAME=PATH (repeatable)")
    t.add_argument("--resources", metavar="DIR",
                   help="evidence bundle folder made by 'irdtriage resources build' (population frequencies, "
                        "clinical assertions, score tables)")
    t.add_argument("--online", action="store_true",
                   help="ask a public service (Ensembl REST) for population frequencies and clinical assertions "
                        "the local evidence lacks; sends variant coordinates only, never sample names or genotypes")
    t.add_argument("--cache", metavar="FILE", dest="online_cache",
                   help="cache file for online answers (SQLite; default: a per-user cache folder)")
    t.add_argument("--cache-days", metavar="DAYS", type=float, default=None,
                   help="online answers older than this are fetched again (default 30)")
    t.add_argument("--offline-replay", action="store_true",
                   help="use online answers from the --cache only; nothing goes over the network")
    t.add_argument("--online-url", metavar="URL", help="server of the online source (default: Ensembl REST for "
                                                       "the genome build; a mirror may be named here)")
    t.add_argument("--min-dp", type=_non_negative_int, default=None, help="minimum read depth (default 8)")
    t.add_argument("--min-gq", type=_non_negative_int, default=None, help="minimum genotype quality (default 20)")
    t.add_argument("--allow-filtered", action="store_true", help="do not flag calls whose FILTER is not PASS")
    t.add_argument("--all-variants", action="store_true",
                   help="also report common alleles (BA1) and intronic/flanking alleles without splice evidence")
    t.add_argument("--reference", metavar="FASTA",
                   help="reference FASTA for built-in annotation of records without CSQ/ANN (without it "
                        "amino-acid changes and indel HGVS c. are left unknown)")
    t.add_argument("--transcripts", metavar="FILE",
                   help="GFF3/GTF transcript models for built-in annotation of records without CSQ/ANN "
                        "(default: the panel's own exon/CDS structure, panels/transcripts.yaml; 'none': no "
                        "built-in annotation)")
    add_output_opts(t, "irdtriage-results")

    rs = sub.add_parser("resources", help="build or show a local evidence bundle",
                        description="Build a panel-sized, versioned evidence bundle from public files you already "
                                    "have, or show what a bundle holds (docs/evidence-bundle.md).")
    rs_sub = rs.add_subparsers(dest="resources_command", metavar="ACTION")
    rb = rs_sub.add_parser("build", help="extract the panel genes' regions from large evidence files")
    rb.add_argument("--population", metavar="FILE", action="append", default=[],
                    help="population-frequency sites VCF in gnomAD's layout (repeat for per-chromosome files)")
    rb.add_argument("--clinical", metavar="FILE", action="append", default=[],
                    help="clinical-assertion VCF with CLNSIG (ClinVar's VCF)")
    rb.add_argument("--scores", metavar="FILE", action="append", default=[],
                    help="score table: chrom, pos, ref, alt, score (tab-separated, plain, gzip or bgzip); named by "
                         "the file (revel.tsv.gz) or NAME=PATH (repeatable)")
    rb.add_argument("--out", metavar="DIR", required=True, help="bundle folder to write")
    rb.add_argument("--build", choices=("GRCh37", "GRCh38"), help="genome build (default: from the VCF headers)")
    rb.add_argument("--padding", type=_non_negative_int, default=None,
                    help="bases kept on each side of a gene span (default 1000)")
    add_panel_opts(rb)
    rsh = rs_sub.add_parser("show", help="what a bundle holds: sources, versions, dates, record counts")
    rsh.add_argument("folder", metavar="DIR")

    d = sub.add_parser("demo", help="run the bundled invented demo family (offline)")
    add_output_opts(d, "irdtriage-demo")

    pn = sub.add_parser("panel", help="list, show or check the gene panel")
    pn_sub = pn.add_subparsers(dest="panel_command", metavar="ACTION")
    pl = pn_sub.add_parser("list", help="one line per gene")
    add_panel_opts(pl)
    ps = pn_sub.add_parser("show", help="everything the panel says about one gene")
    ps.add_argument("gene")
    add_panel_opts(ps)
    pc = pn_sub.add_parser("check", help="validate the panel and cascade data, and its coverage of the "
                                         "HPO retinal-dystrophy gene set")
    add_panel_opts(pc)
    pc.add_argument("--no-hpo", action="store_true", help="skip the HPO coverage count")

    e = sub.add_parser("explain", help="the full criterion table for one finding")
    e.add_argument("variant", help="finding id (F1), chrom-pos-ref-alt, or HGVS c./p. text")
    e.add_argument("--result", metavar="FILE", help="the result.json of the case (required)")
    e.add_argument("--demo", action="store_true",
                   help="explain a finding of the bundled invented demo case instead of a --result")

    r = sub.add_parser("report", help="re-render outputs from a saved result.json")
    r.add_argument("result", help="result.json written by triage")
    r.add_argument("--format", dest="formats", type=_format_list, default=None, metavar="LIST",
                   help=f"formats to write from {','.join(FORMATS)} (default: all)")
    r.add_argument("--out", metavar="DIR", help="output folder (default: beside the result)")
    r.add_argument("--phenopacket", metavar="FILE", help="input phenopacket to extend with interpretations")

    an = sub.add_parser("annotate", help="add consequence and HGVS (CSQ INFO field) from transcript models and "
                                         "a reference FASTA", epilog=CAUTION)
    an.add_argument("vcf", help="VCF/BCF without CSQ/ANN annotation")
    an.add_argument("--reference", metavar="FASTA",
                    help="reference FASTA of the VCF's build (plain or bgzipped; without it amino-acid "
                         "changes and indel HGVS are left unknown)")
    an.add_argument("--transcripts", metavar="FILE",
                    help="transcript models: GFF3 or GTF (default: the panel's own exon/CDS structure, "
                         "panels/transcripts.yaml, for the VCF's build)")
    an.add_argument("--build", choices=("GRCh37", "GRCh38"),
                    help="genome build of the panel structure (default: detected from the VCF header)")
    an.add_argument("--placement", metavar="SEQID=CHROM:ANCHOR:STRAND", action="append", default=[],
                    help="place a gene-orientation record's coordinates on the genome (e.g. "
                         "NG_009497.1=1:216428397:-); repeatable")
    an.add_argument("--out", metavar="FILE", required=True, help="annotated VCF (.vcf, .vcf.gz or .bcf)")

    c = sub.add_parser("classify", help="class, rule, points and posterior for criteria as curators write them",
                       description="Combine ACMG/AMP criteria (e.g. \"PVS1, PM2_Supporting, PM3_Strong\") into a "
                                   "class with the rule set of panels/combining.yaml.", epilog=CAUTION)
    c.add_argument("criteria", nargs="?", help="met criteria, separated by commas, semicolons or spaces (PM2_Supporting, BS1_Stand Alone, "
                                              "PVS1 ...)")
    c.add_argument("--tsv", metavar="FILE", help="classify every row of a TSV with a criteria_met column (and gene "
                                                 "when present); writes the rows with class, rule_set, rule, points, "
                                                 "posterior and rule_set_sha256 added to standard output (.gz read "
                                                 "too)")
    cg = c.add_mutually_exclusive_group()
    cg.add_argument("--gene", help="use this gene's rule set (default: the default rule set)")
    cg.add_argument("--rule-set", metavar="NAME", help="use this rule set by name")

    b = sub.add_parser("batch", help="triage every case of a manifest; summary across the cases",
                       description="Triage every case of a tab-separated manifest (columns case, vcf, sample, "
                                   "phenopacket, hpo, ped, sex, previous; case and vcf required) into OUT/<case>/, "
                                   "then write OUT/batch.json, OUT/cohort.tsv, OUT/cohort_genes.tsv, "
                                   "OUT/cohort_alleles.tsv and OUT/cohort.html. Exit 0 when "
                                   "every case finished, 2 when any failed (each failure is recorded).",
                       epilog=CAUTION)
    b.add_argument("manifest", help="manifest TSV (relative paths resolve from its folder)")
    b.add_argument("--out", metavar="DIR", required=True, help="batch folder: one sub-folder per case")
    b.add_argument("--jobs", "-j", type=_non_negative_int, default=None,
                   help="local worker processes (default: all cores)")
    b.add_argument("--force", action="store_true", help="run every case again, even those unchanged since the last run")
    be = b.add_mutually_exclusive_group()
    be.add_argument("--scheduler", metavar="ADDRESS", help="run on your dask.distributed scheduler (tcp://host:port)")
    be.add_argument("--dask-local", metavar="N", type=_non_negative_int, default=None,
                    help="run on a dask LocalCluster of N worker processes on this machine")
    add_panel_opts(b)
    b.add_argument("--tier", choices=("established", "moderate", "limited"), default=None,
                   help="as for triage (default: every gene except disputed ones)")
    b.add_argument("--rules", metavar="FILE", help="criteria rule set YAML (default: the bundled one)")
    b.add_argument("--formats", type=_formats, default=list(FORMATS), metavar="LIST",
                   help=f"outputs per case, comma-separated from {','.join(FORMATS)} (default: all)")

    cm = sub.add_parser("compare", help="what changed for a case between two result.json files",
                        description="Compare an earlier result.json of a case with a new one: class changes per "
                                    "finding, new or lost findings, gene rank and genotype-fit changes, case status; "
                                    "clinically relevant changes first.", epilog=CAUTION)
    cm.add_argument("old", help="the earlier result.json")
    cm.add_argument("new", help="the new result.json")
    cm.add_argument("--json", action="store_true", help="machine-readable output")
    return p


_RUNNING: dict = {}  # the parsed arguments of the command being run (read by interrupted_message)


def interrupted_message() -> str:
    """What to say when a Ctrl-C escapes :func:`main` (it can only land before the command's signal
    handlers are in place or while they are being taken down)."""
    args = _RUNNING.get("args")
    if args is None:
        return "irdtriage: interrupted while starting; nothing was written"
    return f"irdtriage: interrupted; {_outcome(args)}"


def _ignore_late_signals() -> None:
    """The command has finished (outputs complete, or its error reported): a SIGINT/SIGTERM/SIGHUP
    landing while the process exits must not turn a finished run into a failed one."""
    for name in ("SIGINT", "SIGTERM", "SIGHUP"):
        if hasattr(signal, name):
            try:
                signal.signal(getattr(signal, name), signal.SIG_IGN)
            except (OSError, ValueError):  # pragma: no cover - not the main thread
                pass


def main(argv: Optional[Sequence[str]] = None, *, exiting: bool = False) -> int:
    """Run one command; the exit status is returned.  ``exiting``: the process ends right after
    (the ``irdtriage`` program), so signals are ignored once the command has finished instead of
    the previous handlers being restored."""
    argv = list(sys.argv[1:] if argv is None else argv)
    _quiet_htslib()
    parser = build_parser()
    args = parser.parse_args(argv)
    if not args.command:
        parser.print_help()
        return 2
    _RUNNING["args"] = args
    restore_signals = _install_signal_handlers()
    try:
        if args.command == "triage":
            return cmd_triage(args, argv)
        if args.command == "demo":
            return cmd_demo(args, argv)
        if args.command == "panel":
            return cmd_panel(args, parser)
        if args.command == "explain":
            return cmd_explain(args)
        if args.command == "report":
            return cmd_report(args)
        if args.command == "classify":
            return cmd_classify(args)
        if args.command == "resources":
            return cmd_resources(args, argv, parser)
        if args.command == "annotate":
            return cmd_annotate(args, argv)
        if args.command == "batch":
            return cmd_batch(args, argv)
        if args.command == "compare":
            return cmd_compare(args)
    except InputError as e:
        print(f"irdtriage: error: {e.one_line()}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"irdtriage: interrupted; {_outcome(args)}", file=sys.stderr)
        return 130
    except Terminated as t:
        print(f"irdtriage: stopped by {signal.Signals(t.signum).name}; {_outcome(args)}", file=sys.stderr)
        return 128 + t.signum
    except BrokenPipeError:
        return 0
    except Exception as e:  # pragma: no cover - internal errors
        if args.debug:
            raise
        print(f"irdtriage: internal error: {type(e).__name__}: {e} (re-run with --debug for details)",
              file=sys.stderr)
        return 1
    finally:
        if exiting:
            _ignore_late_signals()
        else:
            restore_signals()
    return 0


def _quiet_htslib() -> None:
    """htslib writes its own messages to stderr; problems reach the user as one InputError line."""
    try:
        import pysam

        pysam.set_verbosity(0)
    except Exception:  # pragma: no cover - pysam missing is reported when it is first used
        pass


# ---------------------------------------------------------------------------------------
def _console():
    from .report.terminal import make_console

    return make_console()


def _quality(args):
    from .vcf import QualityThresholds

    q = QualityThresholds()
    if args.min_dp is not None:
        q.min_dp = args.min_dp
    if args.min_gq is not None:
        q.min_gq = args.min_gq
    if args.allow_filtered:
        q.require_pass = False
    return q


def _run_and_write(vcf: str, kwargs: dict, args, input_phenopacket_path: Optional[str],
                   inputs: Sequence[Optional[str]]) -> dict:
    """Run the pipeline and write its outputs into --out as one transaction.

    The output folder is locked and checked before the pipeline runs (a second run into the
    same folder is refused at once); everything is written into a staging folder that is
    swapped in only when complete.
    """
    from .atomic import output_transaction
    from .pipeline import triage
    from .report.terminal import render_terminal
    from .report.writers import is_output_file, render_outputs

    with output_transaction(args.out, inputs=inputs, owned=is_output_file) as tx:
        args.transaction = tx
        result = triage(vcf, **kwargs)
        pp = None
        if input_phenopacket_path:
            import json

            with open(input_phenopacket_path, encoding="utf-8") as fh:
                pp = json.load(fh)
        staged = render_outputs(result, tx.staging, formats=args.formats, input_phenopacket=pp,
                                cascade_steps=result.get("cascade"), input_phenopacket_path=input_phenopacket_path)
    paths = [tx.final_path(p) for p in staged.values()]
    console = _console()
    render_terminal(result, console, verbose=args.verbose, quiet=args.quiet)
    if not args.quiet:
        from .report.terminal import render_written

        render_written(console, paths)
    return result


def _tier_genes(args) -> tuple[Optional[list[str]], list[str]]:
    """Genes to triage after --genes and --tier, and a warning naming what the tier left out."""
    genes, warnings, _panel = _tier_selection(args)
    return genes, warnings


def _tier_selection(args):
    """(genes, warnings, panel): as :func:`_tier_genes`, plus the panel as read (after --genes),
    so that ``triage`` reads the panel files once."""
    from .panel import genes_at_tier, load_panel

    genes = parse_gene_option(args.genes) if args.genes else None
    panel = load_panel(args.panel, genes=genes)
    if genes is not None and args.tier is None:
        # genes named with --genes are triaged whatever their evidence level; say so for disputed ones
        disputed = [s for s, g in panel.genes.items() if g.evidence_level == "disputed"]
        return genes, ([f"--genes names gene(s) whose link to disease is disputed: {', '.join(disputed)}"]
                       if disputed else []), panel
    keep = genes_at_tier(panel, args.tier)
    dropped = [s for s in panel.genes if s not in keep]
    if not dropped:
        return genes, [], panel
    if not keep:
        raise InputError(f"no panel gene is at evidence tier {args.tier or 'limited'} or above", panel.source)
    tier = args.tier or "limited (default)"
    return keep, [f"evidence tier {tier}: {len(keep)} of {len(panel.genes)} panel genes triaged; "
                  f"left out: {', '.join(dropped[:12])}{' ...' if len(dropped) > 12 else ''}"], panel


def cmd_triage(args, argv) -> int:
    from .panel import select_genes

    genes, tier_warnings, panel = _tier_selection(args)
    panel = select_genes(panel, genes)
    kwargs = dict(
        sample=args.sample, hpo=args.hpo, phenopacket=args.phenopacket, ped=args.ped, sex=args.sex,
        build=args.build, panel_path=args.panel, genes=genes, rules_path=args.rules,
        curated_path=args.curated, popfreq_vcf=args.population_vcf, clinical_vcf=args.clinical_vcf,
        sv_vcf=args.sv_vcf, score_tables=args.scores, quality=_quality(args), all_variants=args.all_variants,
        resources=args.resources, online=args.online, online_cache=args.online_cache,
        offline_replay=args.offline_replay, online_url=args.online_url, online_expire_days=args.cache_days,
        command="irdtriage " + " ".join(shlex.quote(a) for a in argv), extra_warnings=tier_warnings,
        reference=args.reference, transcripts_path=None if args.transcripts == "none" else args.transcripts,
        panel_models=args.transcripts != "none", loaded_panel=panel,
    )
    if args.reference and args.transcripts == "none":
        raise InputError("--reference needs transcript models (--transcripts none turns them off)", args.reference)
    inputs = [("VCF", args.vcf), ("phenopacket", args.phenopacket), ("PED", args.ped), ("panel", args.panel),
              ("rules", args.rules), ("curated evidence", args.curated),
              ("population-frequency VCF", args.population_vcf), ("clinical-assertion VCF", args.clinical_vcf),
              ("reference FASTA", args.reference),
              ("transcript", None if args.transcripts == "none" else args.transcripts),
              ("structural-variant VCF", args.sv_vcf)]
    inputs += [("score table", p.split("=", 1)[-1]) for p in args.scores]
    if args.resources and not os.path.isdir(args.resources):
        raise InputError("evidence bundle folder not found", args.resources)
    if args.cache_days is not None and args.cache_days <= 0:
        raise InputError(f"--cache-days must be more than 0, got {args.cache_days:g}")
    if (args.online_cache or args.online_url or args.cache_days is not None) and not (args.online or args.offline_replay):
        raise InputError("--cache, --cache-days and --online-url apply to online evidence: add --online "
                         "(or --offline-replay)")
    if args.online and args.offline_replay:
        raise InputError("--online and --offline-replay exclude each other (replay never uses the network)")
    for label, path in inputs:
        if path and not os.path.exists(path):
            raise InputError(f"{label} file not found", path)
    if args.hpo and args.hpo.startswith("@"):
        inputs.append(("HPO list", args.hpo[1:]))
    if args.genes and args.genes.startswith("@"):
        inputs.append(("gene list", args.genes[1:]))
    inputs += [("evidence bundle", args.resources), ("online cache", args.online_cache)]
    _run_and_write(args.vcf, kwargs, args, args.phenopacket, [p for _, p in inputs])
    return 0


def cmd_resources(args, argv, parser) -> int:
    """``resources build`` writes a bundle folder (one transaction); ``resources show`` prints its manifest."""
    from .evidence import bundle as bundle_mod

    if not args.resources_command:
        parser.parse_args(["resources", "--help"])
        return 2
    console = _console()
    if args.resources_command == "build":
        manifest = bundle_mod.build_bundle(
            args.out, population=args.population, clinical=args.clinical, scores=args.scores,
            panel_path=args.panel, genes=parse_gene_option(args.genes) if args.genes else None, build=args.build,
            padding=bundle_mod.DEFAULT_PADDING if args.padding is None else args.padding,
            command="irdtriage " + " ".join(shlex.quote(a) for a in argv))
        folder = args.out
    else:
        folder = args.folder
        manifest = bundle_mod.Bundle.open(folder).manifest
    _render_manifest(console, folder, manifest)
    return 0


def _render_manifest(console, folder: str, m: dict) -> None:
    """One line per bundled file and per source it came from (long lines are not wrapped, so
    file names and versions stay whole when the output is piped or searched)."""
    reg = m["regions"]
    panel = m.get("panel") or {}
    say = lambda text: console.print(text, soft_wrap=True, markup=False)  # noqa: E731
    say(f"evidence bundle {folder}: {m['genome_build']}, panel {panel.get('name')} {panel.get('version')} "
        f"({panel.get('genes')} genes), {reg.get('count')} regions, {reg.get('bases'):,} bases "
        f"(gene spans +/- {reg.get('padding')} bp), built {m.get('created')}")
    for c in m["contents"]:
        say(f"{c['kind']}{' ' + c['name'] if c.get('name') else ''}: {c['file']}, {c.get('records', 0):,} records, "
            f"sha256 {(c.get('sha256') or '')[:12]}")
        for s in c.get("sources", []):
            version = s.get("version") or "not stated"
            if s.get("version_from"):
                version += f" (from the {s['version_from']})"
            date = (s.get("date") or "unknown") + (f" (from the {s['date_from']})" if s.get("date_from") else "")
            say(f"  from {s.get('name')}: version {version}; date {date}; {s.get('records_written', 0):,} of "
                f"{s.get('records_read', 0):,} records read kept; sha256 {(s.get('sha256') or '')[:12]}")
    say(CAUTION)


def _annotate_build(vcf: str, wanted):
    import pysam

    from .build import resolve_build

    try:
        with pysam.VariantFile(vcf) as vf:
            build, _, _ = resolve_build(vf.header, wanted, vcf)
    except (OSError, ValueError) as e:
        raise InputError(f"cannot read the VCF ({e})", vcf) from None
    if build is None:
        raise InputError("the VCF header does not say its genome build; name it with --build "
                         "(the panel structure has GRCh38 and GRCh37 coordinates)", vcf)
    return build


def cmd_annotate(args, argv) -> int:
    from .annotate.annotate import Annotator
    from .annotate.providers import parse_placement
    from .annotate.vcf_writer import annotate_vcf

    for label, path in (("VCF", args.vcf), ("reference FASTA", args.reference), ("transcript", args.transcripts)):
        if path and not os.path.exists(path):
            raise InputError(f"{label} file not found", path)
    if os.path.abspath(args.out) in {os.path.abspath(p) for p in (args.vcf, args.reference, args.transcripts) if p}:
        raise InputError("the output would overwrite an input", args.out)
    placements = dict(parse_placement(p) for p in args.placement)
    build = args.build
    if not args.transcripts:  # the panel's own structure: the VCF's build decides which coordinates
        build = _annotate_build(args.vcf, args.build)
    annotator = Annotator(args.transcripts, args.reference, placements, build=build)
    try:
        counts = annotate_vcf(args.vcf, args.out, annotator,
                              command="irdtriage " + " ".join(shlex.quote(a) for a in argv))
    finally:
        annotator.close()
    print(f"{args.out}: {counts['records']} records, {counts['annotated_alleles']} of {counts['alleles']} alleles "
          f"on a transcript ({counts['entries']} transcript entries)")
    if not args.reference:
        print("no --reference: amino-acid changes and indel HGVS c. are left unknown")
    print(CAUTION)
    return 0


def cmd_demo(args, argv) -> int:
    from .demo import demo_inputs

    d = demo_inputs()
    kwargs = dict(sample=d["sample"], phenopacket=d["phenopacket"], ped=d["ped"],
                  command="irdtriage " + " ".join(shlex.quote(a) for a in argv))
    _run_and_write(d["vcf"], kwargs, args, d["phenopacket"], [d["vcf"], d["ped"], d["phenopacket"]])
    return 0


def cmd_panel(args, parser) -> int:
    from rich.table import Table

    from .panel import check_panel, load_panel

    if not args.panel_command:
        parser.parse_args(["panel", "--help"])
        return 2
    genes = parse_gene_option(args.genes) if getattr(args, "genes", None) else None
    panel = load_panel(args.panel, genes=genes)
    console = _console()
    if args.panel_command == "list":
        table = Table(title=f"{panel.name} {panel.version}: {len(panel.genes)} genes", show_lines=False)
        for col in ("gene", "inheritance", "mechanism", "evidence", "cascade step", "conditions"):
            table.add_column(col, overflow="fold")
        for g in panel.genes.values():
            step = panel.cascade.get(g.cascade_step)
            table.add_row(g.symbol, ",".join(g.inheritance), ",".join(g.mechanisms), g.evidence_level or "not graded",
                          step.title if step else g.cascade_step, "; ".join(g.conditions[:2]))
        console.print(table)
        return 0
    if args.panel_command == "show":
        sym = args.gene.upper()
        if sym not in panel.genes:
            raise InputError(f"gene {args.gene!r} is not on panel {panel.name} {panel.version}", panel.source)
        from .cascade import explain

        g = panel.genes[sym]
        rows = [
            ("symbol", g.symbol), ("HGNC", g.hgnc_id), ("name", g.name),
            ("reference (rCRS)" if g.grch38.chrom == "MT" else "MANE Select",
             f"{g.refseq_transcript} / {g.ensembl_transcript}" + (f" ({g.refseq_protein})" if g.refseq_protein else "")),
            ("GRCh38", f"chr{g.grch38.chrom}:{g.grch38.start:,}-{g.grch38.end:,} ({g.strand})"),
            ("GRCh37", f"chr{g.grch37.chrom}:{g.grch37.start:,}-{g.grch37.end:,}" if g.grch37 else "not given"),
            ("inheritance", ", ".join(g.inheritance)), ("mechanism", ", ".join(g.mechanisms)),
            ("conditions", "; ".join(g.conditions)), ("syndromic", "yes" if g.syndromic else "no"),
            ("evidence", f"{g.evidence_level or 'not graded'}" + (f" (called {g.evidence_date})" if g.evidence_date else "")),
            ("evidence source", "; ".join(g.evidence_source) or "none given"),
            ("cascade step", g.cascade_step), ("biology", explain(panel, sym)),
        ] + [("note", n) for n in g.notes]
        t = Table(show_header=False, title=f"{g.symbol} on {panel.name} {panel.version}")
        t.add_column("field", style="bold")
        t.add_column("value", overflow="fold")
        for k, v in rows:
            t.add_row(k, v)
        console.print(t)
        return 0
    if args.panel_command == "check":
        problems = check_panel(panel)
        if problems:
            for pr in problems:
                print(f"irdtriage: panel problem: {pr}", file=sys.stderr)
            return 2
        console.print(f"{panel.name} {panel.version}: {len(panel.genes)} genes, {len(panel.cascade)} cascade "
                      f"steps, sha256 {panel.sha256[:12]}: OK")
        levels = {}
        for g in panel.genes.values():
            levels[g.evidence_level or "not graded"] = levels.get(g.evidence_level or "not graded", 0) + 1
        console.print("evidence levels: " + ", ".join(f"{k} {v}" for k, v in levels.items()))
        if args.no_hpo or genes:
            return 0
        return _panel_hpo_coverage(panel, console)
    return 2


def _panel_hpo_coverage(panel, console) -> int:
    """Print the panel's coverage of the HPO retinal-dystrophy gene set; 2 when any gene is unaccounted."""
    from .panel import hpo_coverage, hpo_retinal_dystrophy_genes

    try:
        hpo_genes, release = hpo_retinal_dystrophy_genes()
    except ImportError:
        print("irdtriage: HPO coverage not checked: hpo3 is not installed", file=sys.stderr)
        return 0
    cov = hpo_coverage(panel, hpo_genes)
    console.print(f"HPO {release}: {len(hpo_genes)} genes annotated to HP:0000556 Retinal dystrophy or a "
                  f"descendant: {len(cov['in_panel'])} in the panel, {len(cov['excluded'])} excluded with a reason, "
                  f"{len(cov['unaccounted'])} unaccounted")
    if cov["excluded"]:
        from rich.table import Table

        t = Table(title="HPO retinal-dystrophy genes excluded from the panel")
        t.add_column("gene")
        t.add_column("reason", overflow="fold")
        for sym in cov["excluded"]:
            t.add_row(sym, panel.excluded[sym])
        console.print(t)
    if cov["unaccounted"]:
        print(f"irdtriage: panel problem: {len(cov['unaccounted'])} HPO retinal-dystrophy gene(s) neither on the "
              f"panel nor excluded with a reason: {', '.join(cov['unaccounted'])}", file=sys.stderr)
        return 2
    return 0


def cmd_explain(args) -> int:
    from .explain import find_finding, render_explain
    from .report.json_out import load_result

    if args.result and args.demo:
        raise InputError("explain takes either --result FILE or --demo, not both")
    if args.result:
        if not os.path.exists(args.result):
            raise InputError("result file not found", args.result)
        result = load_result(args.result)
        source = args.result
    elif args.demo:
        from .demo import demo_inputs
        from .pipeline import triage

        d = demo_inputs()
        result = triage(d["vcf"], sample=d["sample"], phenopacket=d["phenopacket"], ped=d["ped"])
        source = None
    else:
        raise InputError("explain needs --result FILE (the result.json of the case to explain); "
                         "use --demo to explain the bundled invented demo case instead")
    finding = find_finding(result, args.variant)
    render_explain(result, finding, _console(), source=source)
    return 0


def cmd_report(args) -> int:
    """Re-render outputs from a saved result.json, written as one transaction like triage's.

    Into the result's own folder (the default) the new set keeps the folder's other files
    (result.json itself is never rewritten in place); into another folder the set is exactly
    the formats asked for.
    """
    import json

    from .atomic import output_transaction
    from .report.json_out import load_result
    from .report.terminal import render_written
    from .report.writers import is_output_file, output_names, render_outputs

    if not os.path.exists(args.result):
        raise InputError("result file not found", args.result)
    if args.phenopacket and not os.path.exists(args.phenopacket):
        raise InputError("phenopacket file not found", args.phenopacket)
    result = load_result(args.result)
    source_dir = os.path.dirname(os.path.abspath(args.result))
    out = args.out or source_dir
    in_place = os.path.realpath(out) == os.path.realpath(source_dir)
    formats = list(args.formats or FORMATS)
    if in_place:
        formats = [f for f in formats if f != "json"]  # never rewrite the source in place
    pp = None
    if args.phenopacket:
        with open(args.phenopacket, encoding="utf-8") as fh:
            pp = json.load(fh)
    with output_transaction(out, inputs=[args.result, args.phenopacket], owned=is_output_file,
                            allowed_inputs=[args.result] if in_place else []) as tx:
        args.transaction = tx
        staged = render_outputs(result, tx.staging, formats=formats, input_phenopacket=pp,
                                cascade_steps=result.get("cascade"), input_phenopacket_path=args.phenopacket)
        if in_place:
            written = set(output_names(result, formats))
            tx.carry_over(sorted(p.name for p in tx.out.iterdir() if p.name not in written and is_output_file(p)))
    render_written(_console(), [tx.final_path(p) for p in staged.values()])
    return 0


def cmd_classify(args) -> int:
    from .classify import classify, classify_tsv, parse_criteria, pick_rule_set, render_text
    from .acmg.rulesets import load_combining

    if (args.criteria is None) == (args.tsv is None):
        raise InputError("give either criteria text or --tsv FILE (one of the two)")
    combining = load_combining()
    if args.rule_set:
        combining.get(args.rule_set)  # an unknown name is an input error before any work
    if args.tsv:
        import gzip

        if not os.path.exists(args.tsv):
            raise InputError("TSV file not found", args.tsv)
        opener = gzip.open if args.tsv.endswith(".gz") else open
        try:
            with opener(args.tsv, "rt", encoding="utf-8", newline="") as fh:
                text = classify_tsv(fh, args.tsv, combining, gene=args.gene, rule_set=args.rule_set)
        except (OSError, UnicodeDecodeError, EOFError) as e:
            raise InputError(f"cannot read TSV: {e}", args.tsv) from None
        sys.stdout.write(text)
        return 0
    res = classify(parse_criteria(args.criteria), pick_rule_set(combining, args.gene, args.rule_set))
    sys.stdout.write(render_text(res))
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())


def cmd_batch(args, argv) -> int:
    """Run every case of a manifest (local process pool, or dask.distributed), then the summary."""
    from .cohort.manifest import read_manifest
    from .cohort.progress import Progress
    from .cohort.runner import local_engine, run_batch
    from .cohort.summary import write_summary

    specs = read_manifest(args.manifest)
    for label, path in (("panel", args.panel), ("rules", args.rules)):
        if path and not os.path.exists(path):
            raise InputError(f"{label} file not found", path)
    genes, tier_warnings = _tier_genes(args)
    settings = {"out": os.path.abspath(args.out), "panel_path": args.panel, "rules_path": args.rules,
                "genes": list(genes) if genes else None, "formats": list(args.formats), "force": args.force,
                "extra_warnings": tier_warnings, "command": "irdtriage " + " ".join(shlex.quote(a) for a in argv)}
    if args.scheduler or args.dask_local:
        from .cohort.dask_runner import dask_engine

        engine = dask_engine(scheduler=args.scheduler, local_workers=args.dask_local)
        name = f"dask {args.scheduler}" if args.scheduler else f"dask LocalCluster ({args.dask_local} workers)"
    else:
        cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else (os.cpu_count() or 1)
        jobs = args.jobs or cores
        engine, name = local_engine(jobs), f"local pool ({jobs} processes)"
    progress = Progress(len(specs))
    try:
        batch = run_batch(specs, settings, engine, on_record=progress.update,
                          manifest=os.path.abspath(args.manifest), engine_name=name)
    except (KeyboardInterrupt, Terminated) as stop:
        progress.close()
        how = "interrupted" if isinstance(stop, KeyboardInterrupt) else f"stopped by {signal.Signals(stop.signum).name}"
        print(f"irdtriage: {how}; the cases that finished are in {args.out} (each folder complete) and recorded in "
              f"its batch.json; run the same command again to go on with the rest", file=sys.stderr)
        return 130 if isinstance(stop, KeyboardInterrupt) else 128 + stop.signum
    finally:
        progress.close()
    paths = write_summary(settings["out"], batch)
    c = batch["counts"]
    print(f"{c['cases']} case(s): {c['ok']} run, {c['unchanged']} unchanged (skipped), {c['failed']} failed; "
          f"wrote {paths['tsv']}, {paths['genes_tsv']}, {paths['alleles_tsv']} and {paths['html']}")
    print("CAUTION: " + " ".join(CAUTION.split()))
    return 2 if c["failed"] or c.get("not run") else 0


def cmd_compare(args) -> int:
    import json

    from .cohort.compare import compare, load_result, render_text

    diff = compare(load_result(args.old), load_result(args.new))
    if args.json:
        print(json.dumps({"old": args.old, "new": args.new, **diff}, indent=2, ensure_ascii=False))
    else:
        sys.stdout.write(render_text(diff, args.old, args.new))
    return 0
