"""PM3 (and PS2/PM6) point scale tested at each strength boundary.

Source: ClinGen SVI Recommendation for in trans Criterion (PM3), Version 1.0 (from memory: the
document could not be re-read here): summed points 0.5 Supporting, 1.0 Moderate, 2.0 Strong,
4.0 Very Strong; per observation in trans with Pathogenic 1.0, with Likely pathogenic 0.5,
with Uncertain significance 0.25; phase unknown with Pathogenic 0.5, with Likely pathogenic
0.25; homozygous 0.5.  The same scale is used for de novo points (ClinGen SVI de novo
recommendation v1.1, from memory).
"""
from __future__ import annotations

import pytest

from irdtriage.family_criteria import PM3_HOMOZYGOUS, PM3_POINTS, points_to_strength


@pytest.mark.parametrize("points,strength", [
    (0.0, None), (0.25, None), (0.49, None),
    (0.5, "Supporting"), (0.51, "Supporting"), (0.75, "Supporting"), (0.99, "Supporting"),
    (1.0, "Moderate"), (1.5, "Moderate"), (1.99, "Moderate"),
    (2.0, "Strong"), (3.0, "Strong"), (3.99, "Strong"),
    (4.0, "VeryStrong"), (4.5, "VeryStrong"), (10.0, "VeryStrong"),
])
def test_point_scale_boundaries(points, strength):
    assert points_to_strength(points) == strength


def test_sums_of_quarter_points_reach_the_boundaries():
    # Four phase-unknown Likely pathogenic partners (4 x 0.25) reach Moderate exactly; two give
    # Supporting; floating-point sums of the table's values must not fall short of a boundary.
    assert points_to_strength(sum([0.25] * 4)) == "Moderate"
    assert points_to_strength(sum([0.25] * 2)) == "Supporting"
    assert points_to_strength(sum([0.25] * 8)) == "Strong"
    assert points_to_strength(sum([0.25] * 16)) == "VeryStrong"
    # 0.3 - 0.1 + 0.3 is 0.49999999999999994 in binary floating point: still half a point.
    assert points_to_strength(0.3 - 0.1 + 0.3) == "Supporting"


@pytest.mark.parametrize("phase,partner,points", [
    ("trans", "Pathogenic", 1.0),
    ("trans", "Likely pathogenic", 0.5),
    ("trans", "Uncertain significance", 0.25),
    ("unknown", "Pathogenic", 0.5),
    ("unknown", "Likely pathogenic", 0.25),
])
def test_points_per_observation(phase, partner, points):
    assert PM3_POINTS[(phase, partner)] == points


def test_homozygous_observation_points():
    assert PM3_HOMOZYGOUS == 0.5
    assert points_to_strength(PM3_HOMOZYGOUS) == "Supporting"
