"""Built-in consequence and HGVS from a reference sequence and transcript models.

Used when a VCF carries no CSQ/ANN annotation and the user names a reference FASTA and a
GFF3/GTF of transcripts (``irdtriage annotate``, ``triage --reference --transcripts``).

* :mod:`.providers` -- sequence (FASTA via pysam, or an in-memory region) and transcript models (GFF3/GTF)
* :mod:`.lrg` -- sequence and transcripts from a Locus Reference Genomic XML record
* :mod:`.hgvs_c` -- genome <-> transcript coordinates, 3' rule, HGVS c./n.
* :mod:`.hgvs_p` -- predicted protein change, HGVS p.
* :mod:`.consequence` -- Sequence Ontology terms from positions
* :mod:`.annotate` -- per allele and transcript, and the pipeline's Annotation objects
* :mod:`.vcf_writer` -- the ``annotate`` command's output VCF
"""
