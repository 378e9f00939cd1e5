"""Population allele frequencies from a local bgzipped, tabix-indexed VCF (gnomAD-style INFO).

Per-population fields are discovered from the header: every ``AC_<pop>`` with a matching
``AN_<pop>`` (plus ``AF_<pop>`` and ``nhomalt_<pop>`` when present).  Sex-split fields
(``AC_nfe_XX``) and ``raw`` are ignored.
"""
from __future__ import annotations

import re
from typing import Any, Optional



from .alleles import contig_for, trim
from .faf import filtering_af
from .indexed import open_indexed_vcf
from .values import first_int, max_number

_POP = re.compile(r"^AC_([A-Za-z]+)$")
_SKIP = {"XX", "XY", "male", "female", "raw", "Hom", "Het", "Hemi"}


def _allele_value(rec, key: str, alt_index: int):
    if key not in rec.info:
        return None
    v = rec.info[key]
    if isinstance(v, tuple):
        return v[alt_index] if alt_index < len(v) else None
    return v


class PopulationSource:
    def __init__(self, path: str, config):
        self.path = path
        self.config = config
        self.vf = open_indexed_vcf(path, "population-frequency VCF")
        info = set(self.vf.header.info.keys())
        self.populations = sorted(
            m.group(1) for k in info if (m := _POP.match(k)) and m.group(1) not in _SKIP and f"AN_{m.group(1)}" in info)
        self.contigs = set(self.vf.header.contigs.keys()) | set(getattr(self.vf.index, "keys", lambda: [])())

    def close(self) -> None:
        self.vf.close()

    def lookup(self, chrom: str, pos: int, ref: str, alt: str, confidence: float = 0.95) -> dict[str, Any]:
        want = trim(pos, ref, alt)
        contig = contig_for(chrom, self.contigs)
        base = {"source": "population_vcf", "path": self.path, "found": False, "af": None, "ac": None,
                "an": None, "nhomalt": None, "populations": {}, "popmax_af": None, "popmax_population": None,
                "faf95": None, "faf95_population": None}
        if contig is None:
            base["note"] = f"contig {chrom} not in the population file"
            return base
        start = max(0, pos - 1 - len(ref) - 2)
        for rec in self.vf.fetch(contig, start, pos + len(ref) + 2):
            for i, a in enumerate(rec.alts or ()):
                if a is None or a.startswith("<") or a == "*":
                    continue
                if trim(rec.pos, rec.ref, a) != want:
                    continue
                return self._record(rec, i, base, confidence)
        # Not present: treated as absent (allele count 0); the file is assumed to cover the site.
        base.update(af=0.0, ac=0, note="allele absent from the population file (site coverage not checked)")
        return base

    def _record(self, rec, i: int, out: dict, confidence: float) -> dict:
        c = self.config
        get = lambda keys: next((v for k in keys if (v := _allele_value(rec, k, i)) is not None), None)  # noqa: E731
        ac, an = first_int(get(c.pop_ac_keys)), first_int(get(c.pop_an_keys))
        af = max_number(get(c.pop_af_keys))
        if af is None and ac is not None and an:
            af = ac / an
        out.update(found=True, af=af, ac=ac, an=an, nhomalt=first_int(get(c.pop_hom_keys)))
        for p in self.populations:
            pac, pan = first_int(_allele_value(rec, f"AC_{p}", i)), first_int(_allele_value(rec, f"AN_{p}", i))
            paf = max_number(_allele_value(rec, f"AF_{p}", i))
            if paf is None and pac is not None and pan:
                paf = pac / pan
            out["populations"][p] = {
                "ac": pac, "an": pan, "af": paf, "nhomalt": first_int(_allele_value(rec, f"nhomalt_{p}", i)),
                "faf95": filtering_af(pac, pan, confidence) if pac is not None and pan else None,
            }
        out["faf95"] = filtering_af(ac, an, confidence) if ac is not None and an else None
        return out


def summarise(pop: Optional[dict], continental: tuple[str, ...], min_an: int = 0) -> dict[str, Any]:
    """Popmax AF and filtering AF over continental populations with at least ``min_an`` alleles."""
    res = {"popmax_af": None, "popmax_population": None, "popmax_an": None, "faf": None, "faf_population": None}
    if not pop:
        return res
    for name, p in (pop.get("populations") or {}).items():
        if name not in continental or p.get("af") is None:
            continue
        if min_an and (p.get("an") or 0) < min_an:
            continue
        if res["popmax_af"] is None or p["af"] > res["popmax_af"]:
            res.update(popmax_af=p["af"], popmax_population=name, popmax_an=p.get("an"))
        if p.get("faf95") is not None and (res["faf"] is None or p["faf95"] > res["faf"]):
            res.update(faf=p["faf95"], faf_population=name)
    return res
