"""Predicted protein consequence (HGVS p.) of a change inside a transcript's exons.

Written from the HGVS recommendations (den Dunnen et al., Hum Mutat 2016;37:564-569;
varnomen.hgvs.org, protein section):

* three-letter amino-acid codes, ``Ter`` for a stop codon; a predicted consequence (no protein
  studied) is put in parentheses: ``p.(Arg97Cys)``;
* no change: ``p.(Leu54=)``; a new stop: ``p.(Trp24Ter)``;
* frameshift: the first changed residue, the new residue, ``fs`` and ``Ter`` with the length of
  the new reading frame counted from that first changed residue (= 1) to the stop:
  ``p.(Arg97ProfsTer23)``; ``Ter?`` when no stop follows in the transcript;
* in-frame deletion / insertion / duplication / deletion-insertion of residues, at the most
  C-terminal position the protein allows (3' rule): ``p.(Lys23_Val25del)``,
  ``p.(Lys2_Gly3insGlnSerLys)``, ``p.(Gly4_Gln6dup)``, ``p.(Cys28_Lys29delinsTrp)``;
* a change of the stop codon to a sense codon extends the protein: ``p.(Ter110GlnextTer17)``,
  the new stop counted from the former stop position (from memory), ``extTer?`` when none follows;
* a change of the translation start codon: the consequence cannot be predicted, ``p.(Met1?)``.

The standard genetic code (NCBI translation table 1) is used.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

_BASES = "TCAG"
_AA1 = "FFLLSSSSYY**CC*WLLLLPPPPHHQQRRRRIIIMTTTTNNKKSSRRVVVVAAAADDEEGGGG"  # NCBI table 1, TCAG order
CODON = {a + b + c: _AA1[16 * i + 4 * j + k]
         for i, a in enumerate(_BASES) for j, b in enumerate(_BASES) for k, c in enumerate(_BASES)}
AA3 = {"A": "Ala", "R": "Arg", "N": "Asn", "D": "Asp", "C": "Cys", "Q": "Gln", "E": "Glu", "G": "Gly",
       "H": "His", "I": "Ile", "L": "Leu", "K": "Lys", "M": "Met", "F": "Phe", "P": "Pro", "S": "Ser",
       "T": "Thr", "W": "Trp", "Y": "Tyr", "V": "Val", "*": "Ter", "X": "Xaa", "U": "Sec"}


def translate(seq: str, to_stop: bool = False) -> str:
    """Codon by codon; a codon with a base other than ACGT is X. ``to_stop``: end after the first
    stop (kept as "*")."""
    out = []
    for i in range(0, len(seq) - 2, 3):
        aa = CODON.get(seq[i:i + 3], "X")
        out.append(aa)
        if to_stop and aa == "*":
            break
    return "".join(out)


def three(aas: str) -> str:
    return "".join(AA3.get(a, "Xaa") for a in aas)


@dataclass(frozen=True)
class ProteinChange:
    hgvs: str  # "p.(Gly2313Ter)"; "" when the protein is not changed by the edit's position
    term: str  # Sequence Ontology term of the coding consequence
    position: Optional[int] = None  # first changed residue (1-based)
    length: Optional[int] = None  # reference protein length (residues, stop not counted)
    new_stop_last_base: Optional[int] = None  # cDNA position (altered transcript) of the new stop's last base
    fs_ter: Optional[int] = None


def protein_change(tx_seq: str, cds_start: int, cds_end: int, a: int, b: int, alt: str,
                   ref_prot: Optional[str] = None) -> ProteinChange:
    """Consequence of replacing cDNA positions ``a..b`` (1-based; ``a == b + 1`` is an insertion
    between ``b`` and ``a``) of ``tx_seq`` by ``alt`` (transcript orientation). The change must
    touch the coding region ``cds_start..cds_end`` (stop codon included). ``ref_prot``: the
    reference translation (to its stop, kept), when the caller has it."""
    if ref_prot is None:
        ref_prot = translate(tx_seq[cds_start - 1:cds_end], to_stop=True)
    length = len(ref_prot) - 1 if ref_prot.endswith("*") else len(ref_prot)
    delta = len(alt) - (b - a + 1)
    # start codon touched (an insertion right after its A or G counts; one before c.1 does not)
    if a <= cds_start + 2 and b >= cds_start and not (a == cds_start and b == cds_start - 1):
        alt_tx = tx_seq[:a - 1] + alt + tx_seq[b:]
        if alt_tx[cds_start - 1:cds_start + 2] != tx_seq[cds_start - 1:cds_start + 2] or delta:
            return ProteinChange("p.(Met1?)", "start_lost", 1, length)
    alt_tx = tx_seq[:a - 1] + alt + tx_seq[b:]
    first_codon = max(0, (a - cds_start) // 3)
    begin = cds_start - 1 + 3 * first_codon
    if delta % 3 == 0 and b <= cds_end - 3:
        # in frame and clear of the stop codon: beyond the changed codons the protein is the reference's
        last_ref_codon = (b - cds_start) // 3
        last_alt_codon = (b + delta - cds_start) // 3
        window = translate(alt_tx[begin:cds_start - 1 + 3 * (last_alt_codon + 1)], to_stop=True)
        tail = "" if "*" in window else ref_prot[last_ref_codon + 1:]
        alt_prot = ref_prot[:first_codon] + window + tail
    else:
        alt_prot = ref_prot[:first_codon] + translate(alt_tx[begin:], to_stop=True)
    i = first_codon
    n = min(len(ref_prot), len(alt_prot))
    while i < n and ref_prot[i] == alt_prot[i]:
        i += 1
    if i == len(ref_prot) and i == len(alt_prot):  # the same protein
        k = min(first_codon, len(ref_prot) - 1)
        term = "stop_retained_variant" if ref_prot[k] == "*" else "synonymous_variant"
        return ProteinChange(f"p.({three(ref_prot[k])}{k + 1}=)", term, k + 1, length)
    alt_stop = alt_prot.find("*")
    new_stop_last = cds_start - 1 + 3 * (alt_stop + 1) if alt_stop >= 0 else None
    if delta % 3:  # frameshift
        if i < len(alt_prot) and alt_prot[i] == "*":
            return ProteinChange(f"p.({three(ref_prot[i])}{i + 1}Ter)", "stop_gained", i + 1, length,
                                 new_stop_last)
        if i < len(ref_prot) and ref_prot[i] == "*":
            return _extension(ref_prot, alt_prot, i, length, "frameshift_variant", new_stop_last)
        ter = f"Ter{alt_stop - i + 1}" if alt_stop >= 0 else "Ter?"
        return ProteinChange(f"p.({three(ref_prot[i])}{i + 1}{three(alt_prot[i])}fs{ter})", "frameshift_variant",
                             i + 1, length, new_stop_last, alt_stop - i + 1 if alt_stop >= 0 else None)
    # in frame
    if i < len(ref_prot) and ref_prot[i] == "*":
        return _extension(ref_prot, alt_prot, i, length, "stop_lost", new_stop_last)
    ref_stop = len(ref_prot) - 1
    if alt_stop >= 0 and alt_stop < ref_stop + delta // 3:  # a stop before the reference's (length change counted)
        if alt_prot[i] == "*":
            return ProteinChange(f"p.({three(ref_prot[i])}{i + 1}Ter)", "stop_gained", i + 1, length, new_stop_last)
        last = max(i, (b - cds_start) // 3)
        return ProteinChange(f"p.({_range(ref_prot, i, last)}delins{three(alt_prot[i:alt_stop + 1])})",
                             "stop_gained", i + 1, length, new_stop_last)
    s = _common_suffix(ref_prot, alt_prot, min(len(ref_prot), len(alt_prot)) - i)
    ref_seg, alt_seg = ref_prot[i:len(ref_prot) - s], alt_prot[i:len(alt_prot) - s]
    if not ref_seg:  # insertion after residue i (1-based), placed C-terminally by the prefix-first trim
        k = len(alt_seg)
        if i >= k and ref_prot[i - k:i] == alt_seg:
            return ProteinChange(f"p.({_range(ref_prot, i - k, i - 1)}dup)", "inframe_insertion", i - k + 1, length)
        return ProteinChange(f"p.({three(ref_prot[i - 1])}{i}_{three(ref_prot[i])}{i + 1}ins{three(alt_seg)})",
                             "inframe_insertion", i + 1, length)
    if not alt_seg:
        return ProteinChange(f"p.({_range(ref_prot, i, i + len(ref_seg) - 1)}del)", "inframe_deletion", i + 1, length)
    if len(ref_seg) == 1 and len(alt_seg) == 1:
        return ProteinChange(f"p.({three(ref_seg)}{i + 1}{three(alt_seg)})", "missense_variant", i + 1, length)
    term = ("inframe_deletion" if len(ref_seg) > len(alt_seg) else
            "inframe_insertion" if len(alt_seg) > len(ref_seg) else "missense_variant")
    return ProteinChange(f"p.({_range(ref_prot, i, i + len(ref_seg) - 1)}delins{three(alt_seg)})", term, i + 1,
                         length)


def _common_suffix(x: str, y: str, limit: int) -> int:
    """Length of the common suffix of x and y, at most ``limit`` (compared in blocks)."""
    s, block = 0, 256
    while s + block <= limit and x[len(x) - s - block:len(x) - s] == y[len(y) - s - block:len(y) - s]:
        s += block
    while s < limit and x[-1 - s] == y[-1 - s]:
        s += 1
    return s


def _range(prot: str, i: int, j: int) -> str:
    """Residues i..j (0-based) as "Lys23" or "Lys23_Val25"."""
    if i == j:
        return f"{three(prot[i])}{i + 1}"
    return f"{three(prot[i])}{i + 1}_{three(prot[j])}{j + 1}"


def _extension(ref_prot: str, alt_prot: str, i: int, length: int, term: str,
               new_stop_last: Optional[int]) -> ProteinChange:
    new = alt_prot[i] if i < len(alt_prot) else "X"
    j = alt_prot.find("*", i + 1)
    ter = f"Ter{j - i}" if j >= 0 else "Ter?"
    return ProteinChange(f"p.(Ter{i + 1}{three(new)}ext{ter})", term, i + 1, length, new_stop_last)
