"""Built-in consequence and HGVS from a reference sequence and transcript models.

Used when a VCF carries no CSQ/ANN annotation (``irdtriage annotate``, ``triage``): transcript
models from a GFF3/GTF the user names (``--transcripts``), else the panel's own structure
(:mod:`.panel_models`); sequence from a reference FASTA (``--reference``) when given.

* :mod:`.providers` -- sequence (FASTA via pysam, or an in-memory region) and transcript models (GFF3/GTF)
* :mod:`.panel_models` -- the panel's exon/CDS table (panels/transcripts.yaml) as transcript models
* :mod:`.lrg` -- sequence and transcripts from a Locus Reference Genomic XML record
* :mod:`.hgvs_c` -- genome <-> transcript coordinates, 3' rule, HGVS c./n.
* :mod:`.hgvs_p` -- predicted protein change, HGVS p.
* :mod:`.consequence` -- Sequence Ontology terms from positions
* :mod:`.annotate` -- per allele and transcript, and the pipeline's Annotation objects
* :mod:`.vcf_writer` -- the ``annotate`` command's output VCF
"""
