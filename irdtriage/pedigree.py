"""Read a PED pedigree file and answer simple family questions.

PED is the plain six-column pedigree format used by linkage and association tools:

    family  individual  father  mother  sex  phenotype

* father / mother: an individual id in the same file, or ``0`` when not in the file;
* sex: ``1`` male, ``2`` female, ``0`` unknown;
* phenotype: ``1`` unaffected, ``2`` affected, ``0`` or ``-9`` unknown.

Columns are separated by tabs or spaces; blank lines and lines starting with ``#`` are
skipped. Anything else (a wrong column count, a parent id that is not in the file, a
duplicate individual, a bad sex or phenotype code, a father recorded as female or a
mother as male, a person who is their own parent or ancestor) is an :class:`InputError` naming the
file and line.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Iterable, NamedTuple, Optional

from .errors import InputError

SEX_CODES = {"1": "MALE", "2": "FEMALE", "0": None}
PHENOTYPE_CODES = {"1": False, "2": True, "0": None, "-9": None}
MISSING_PARENT = "0"


@dataclass(frozen=True)
class Person:
    family: str
    id: str
    father: Optional[str]
    mother: Optional[str]
    sex: Optional[str]  # "MALE", "FEMALE" or None (Phenopacket words)
    affected: Optional[bool]  # True affected, False unaffected, None unknown
    line: int = 0


@dataclass
class Pedigree:
    individuals: dict[str, Person] = field(default_factory=dict)  # by id, in file order
    path: str = ""

    def parents(self, id: str) -> tuple[Optional[str], Optional[str]]:
        """(father, mother) of ``id``; None where not in the file."""
        p = self.individuals[id]
        return p.father, p.mother

    @property
    def affected(self) -> list[str]:
        return [i for i, p in self.individuals.items() if p.affected is True]

    @property
    def unaffected(self) -> list[str]:
        return [i for i, p in self.individuals.items() if p.affected is False]

    def relatives_in(self, samples: Iterable[str], of: Optional[str] = None) -> list[str]:
        """Pedigree members that are also VCF samples (same family as ``of`` when given), file order."""
        wanted = set(samples)
        fam = self.individuals[of].family if of is not None and of in self.individuals else None
        return [i for i, p in self.individuals.items()
                if i in wanted and i != of and (fam is None or p.family == fam)]

    def children(self, id: str) -> list[str]:
        return [i for i, p in self.individuals.items() if id in (p.father, p.mother)]

    def full_siblings(self, id: str) -> list[str]:
        """Individuals with the same known father and mother as ``id``."""
        p = self.individuals[id]
        if p.father is None or p.mother is None:
            return []
        return [i for i, q in self.individuals.items()
                if i != id and q.father == p.father and q.mother == p.mother]


class Trio(NamedTuple):
    mother: Optional[str]
    father: Optional[str]


def read_ped(path: str | Path) -> Pedigree:
    path = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError("PED file not found", path)
    except (OSError, UnicodeDecodeError) as e:
        raise InputError(f"cannot read PED file ({e})", path)

    rows: list[tuple[int, list[str]]] = []
    for n, raw in enumerate(text.splitlines(), 1):
        s = raw.strip()
        if not s or s.startswith("#"):
            continue
        cols = s.split()
        if len(cols) != 6:
            raise InputError(
                f"expected 6 PED columns (family, individual, father, mother, sex, phenotype), found {len(cols)}",
                path, n)
        rows.append((n, cols))
    if not rows:
        raise InputError("PED file lists no individuals", path)

    people: dict[str, Person] = {}
    for n, (fam, iid, fa, mo, sex, pheno) in rows:
        if iid == MISSING_PARENT:
            raise InputError("individual id 0 is reserved for a missing parent", path, n)
        if iid in people:
            raise InputError(f"duplicate individual {iid!r} (first on line {people[iid].line})", path, n)
        if sex not in SEX_CODES:
            raise InputError(f"sex code must be 1 (male), 2 (female) or 0 (unknown), got {sex!r}", path, n)
        if pheno not in PHENOTYPE_CODES:
            raise InputError(
                f"phenotype code must be 1 (unaffected), 2 (affected), 0 or -9 (unknown), got {pheno!r}", path, n)
        father = None if fa == MISSING_PARENT else fa
        mother = None if mo == MISSING_PARENT else mo
        if iid in (father, mother):
            raise InputError(f"individual {iid!r} is listed as their own parent", path, n)
        if father is not None and father == mother:
            raise InputError(f"the same id {father!r} is given as father and mother", path, n)
        people[iid] = Person(fam, iid, father, mother, SEX_CODES[sex], PHENOTYPE_CODES[pheno], n)

    for p in people.values():
        for role, pid, bad_sex in (("father", p.father, "FEMALE"), ("mother", p.mother, "MALE")):
            if pid is None:
                continue
            parent = people.get(pid)
            if parent is None:
                raise InputError(f"{role} {pid!r} of {p.id!r} is not listed in the PED file", path, p.line)
            if parent.family != p.family:
                raise InputError(f"{role} {pid!r} of {p.id!r} belongs to another family ({parent.family!r})",
                                 path, p.line)
            if parent.sex == bad_sex:
                raise InputError(
                    f"{pid!r} is the {role} of {p.id!r} but is recorded as {bad_sex.lower()} "
                    f"on line {parent.line}", path, p.line)
    cycle = _find_cycle(people)
    if cycle:
        first = min((people[i] for i in cycle[:-1]), key=lambda q: q.line)
        raise InputError(f"pedigree cycle: {' -> '.join(repr(i) for i in cycle)} (each is a parent of the "
                         f"next; a person cannot be their own ancestor)", path, first.line)
    return Pedigree(people, path)


def _find_cycle(people: dict[str, Person]) -> Optional[list[str]]:
    """A parent-to-child loop as a list of ids [a, b, ..., a] (each a parent of the next), or None."""
    state: dict[str, int] = {}  # 1 on the current path, 2 done
    for start in people:
        if state.get(start):
            continue
        stack = [(start, iter(_parents_of(people[start])))]
        path = [start]
        state[start] = 1
        while stack:
            node, it = stack[-1]
            nxt = next(it, None)
            if nxt is None:
                state[node] = 2
                stack.pop()
                path.pop()
                continue
            if state.get(nxt) == 1:  # nxt is an ancestor of itself through this path
                loop = path[path.index(nxt):] + [nxt]
                return list(reversed(loop))
            if not state.get(nxt):
                state[nxt] = 1
                path.append(nxt)
                stack.append((nxt, iter(_parents_of(people[nxt]))))
    return None


def _parents_of(p: Person) -> list[str]:
    return [x for x in (p.father, p.mother) if x is not None]


def trio_from_ped(ped: Pedigree, proband: str, vcf_samples: Iterable[str]) -> Trio:
    """Mother and father of ``proband`` that are also samples in the VCF (None when absent)."""
    samples = set(vcf_samples)
    if proband not in ped.individuals:
        raise InputError(f"proband {proband!r} is not listed in the PED file", ped.path or None)
    father, mother = ped.parents(proband)
    return Trio(mother if mother in samples else None, father if father in samples else None)
