"""PED reading: the six-column pedigree format (family, individual, father, mother, sex,
phenotype; sex 1/2/0, phenotype 1/2/0/-9, parent 0 = not in file) as documented for the
PLINK/linkage PED format (common practice; from memory)."""
import pytest

from irdtriage.errors import InputError
from irdtriage.pedigree import read_ped, trio_from_ped


def write(tmp_path, text, name="fam.ped"):
    p = tmp_path / name
    p.write_text(text)
    return p


GOOD = """# family individual father mother sex phenotype
FAM1\tDAD\t0\t0\t1\t1
FAM1\tMUM\t0\t0\t2\t1
FAM1 KID DAD MUM 1 2
FAM1  SIB  DAD  MUM  2  -9

FAM1 AUNT 0 0 2 0
"""


def test_read_good_ped(tmp_path):
    ped = read_ped(write(tmp_path, GOOD))
    assert list(ped.individuals) == ["DAD", "MUM", "KID", "SIB", "AUNT"]
    assert ped.parents("KID") == ("DAD", "MUM")
    assert ped.parents("DAD") == (None, None)
    assert ped.individuals["KID"].sex == "MALE" and ped.individuals["SIB"].sex == "FEMALE"
    assert ped.individuals["AUNT"].sex == "FEMALE" and ped.individuals["AUNT"].affected is None
    assert ped.affected == ["KID"]
    assert ped.unaffected == ["DAD", "MUM"]
    assert ped.individuals["SIB"].affected is None  # -9 = missing
    assert ped.relatives_in(["KID", "MUM", "SIB", "OTHER"], of="KID") == ["MUM", "SIB"]
    assert ped.full_siblings("KID") == ["SIB"]
    assert sorted(ped.children("MUM")) == ["KID", "SIB"]


def test_trio_from_ped_only_samples_in_vcf(tmp_path):
    ped = read_ped(write(tmp_path, GOOD))
    assert trio_from_ped(ped, "KID", ["KID", "MUM", "DAD"]) == ("MUM", "DAD")
    t = trio_from_ped(ped, "KID", ["KID", "MUM"])
    assert t.mother == "MUM" and t.father is None
    with pytest.raises(InputError, match="not listed"):
        trio_from_ped(ped, "NOBODY", ["KID"])


@pytest.mark.parametrize(
    "text, line, message",
    [
        ("F A 0 0 1 2\nF B 0 0 1\n", 2, "expected 6 PED columns"),
        ("F A 0 0 1 2 A A C C\n", 1, "found 10"),
        ("F A X 0 1 2\n", 1, "father 'X' of 'A' is not listed"),
        ("F A 0 0 1 2\nF A 0 0 1 2\n", 2, "duplicate individual 'A'"),
        ("F A 0 0 3 2\n", 1, "sex code"),
        ("F A 0 0 1 5\n", 1, "phenotype code"),
        ("F A 0 0 1 1.5\n", 1, "phenotype code"),
        ("F D 0 0 2 1\nF M 0 0 2 1\nF K D M 1 2\n", 3, "recorded as female"),
        ("F D 0 0 1 1\nF M 0 0 1 1\nF K D M 1 2\n", 3, "recorded as male"),
        ("F A A 0 1 2\n", 1, "own parent"),
        ("F P 0 0 0 1\nF K P P 1 2\n", 2, "father and mother"),
        ("F D 0 0 1 1\nG K D 0 1 2\n", 2, "another family"),
    ],
)
def test_bad_ped_names_file_and_line(tmp_path, text, line, message):
    p = write(tmp_path, text)
    with pytest.raises(InputError) as e:
        read_ped(p)
    assert e.value.line == line
    assert e.value.path == str(p)
    assert message in e.value.problem


def test_empty_and_missing_ped(tmp_path):
    with pytest.raises(InputError, match="no individuals"):
        read_ped(write(tmp_path, "# only a comment\n\n"))
    with pytest.raises(InputError, match="not found"):
        read_ped(tmp_path / "absent.ped")


@pytest.mark.parametrize("rows, line, needle", [
    # two people each listed as the other's father (both male, same family)
    ("F A B 0 1 2\nF B A 0 1 1\n", 1, "'A' -> 'B' -> 'A'"),
    # a three-generation loop: A's mother is C, C's father is B, B's father is A
    ("F A 0 C 1 2\nF B A 0 1 1\nF C B 0 2 1\n", 1, "cannot be their own ancestor"),
    # the loop sits below a founder-rooted family: the error names the first line of the loop
    ("F P 0 0 1 1\nF Q 0 0 2 1\nF X Y 0 1 2\nF Y X 0 1 1\n", 3, "'X' -> 'Y' -> 'X'"),
])
def test_pedigree_cycle_is_an_input_error(tmp_path, rows, line, needle):
    # PED format: parents are earlier generations; nobody can be their own ancestor.
    p = write(tmp_path, rows)
    with pytest.raises(InputError) as e:
        read_ped(p)
    assert e.value.path == str(p) and e.value.line == line
    assert needle in e.value.problem and "\n" not in str(e.value)


def test_pedigree_cycle_through_the_cli_is_one_line(tmp_path):
    import os
    import subprocess
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    vcf = tmp_path / "s.vcf"
    vcf.write_text("##fileformat=VCFv4.2\n##contig=<ID=chr1,length=248956422>\n"
                   '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">\n'
                   "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tA\tB\n"
                   "chr1\t68444600\t.\tG\tA\t50\tPASS\t.\tGT\t0/1\t0/1\n")
    ped = write(tmp_path, "F A B 0 1 2\nF B A 0 1 1\n")
    out = tmp_path / "out"
    r = subprocess.run([sys.executable, "-m", "irdtriage", "triage", str(vcf), "--sample", "A", "--ped", str(ped),
                        "--out", str(out)], capture_output=True, text=True, cwd=root, timeout=600,
                       env=dict(os.environ, NO_COLOR="1", PYTHONPATH=str(root)))
    assert r.returncode == 2
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and f"{ped}:1" in lines[0] and "pedigree cycle" in lines[0]
    assert not out.exists() or not any(out.iterdir())
