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
