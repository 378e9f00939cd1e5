"""Copy-number and structural variants: from symbolic VCF records to classified findings.

* :mod:`irdtriage.sv.intake` -- validate and normalise records (VCF 4.3 symbolic alleles, FORMAT CN,
  explicit-sequence alleles of at least 50 bp) into events;
* :mod:`irdtriage.sv.overlap` -- genes and exons of the panel transcript an event covers, reading
  frame and NMD, in plain words;
* :mod:`irdtriage.sv.classify` -- PVS1 for deletions/duplications (Abou Tayoun et al. 2018) and the
  Riggs et al. 2020 section points as a second opinion;
* :mod:`irdtriage.sv.findings` -- events as findings for the pipeline;
* :mod:`irdtriage.sv.pairing` -- deletions and small variants in one gene (genotype reasoning);
* :mod:`irdtriage.sv.settings` -- ``panels/structural.yaml``.
"""
