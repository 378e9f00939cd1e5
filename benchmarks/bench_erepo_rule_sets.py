"""Agreement of each bundled combining rule set with the ClinGen expert panels, per panel.

Reads the ClinGen Evidence Repository export (default ../shared/refdata/clingen_erepo/erepo_dev.tsv.gz,
see that folder's README), combines each row's met criteria, as the panel wrote them, with every rule
set of panels/combining.yaml, and prints per panel how many rows reproduce the panel's class. It also
prints the two counts behind the choice of the default rule set:

* rows where pathogenic and benign criteria are both met and their net points (Tavtigian et al.,
  Hum Mutat 2020, Table 3) leave the uncertain band: how often the panel kept the netted class and
  how often Uncertain significance (Richards et al. 2015 Table 5 "Uncertain significance (ii)");
* rows with a single Strong benign criterion and nothing else: how often the panel said Likely benign
  and how often Uncertain significance.

Figures only; nothing is asserted (the exact per-row check is tests/external/test_erepo_agreement.py).

    python benchmarks/bench_erepo_rule_sets.py [--erepo PATH]
"""
from __future__ import annotations

import argparse
import csv
import gzip
from collections import Counter
from pathlib import Path

from irdtriage.acmg.combine import _met, _stand_alone, point_class, points, rule_class
from irdtriage.acmg.rulesets import load_combining
from irdtriage.classify import parse_criteria
from irdtriage.models import BENIGN_CODES, PATHOGENIC_CODES

ROOT = Path(__file__).resolve().parents[1]
PANEL_CLASS = {"Pathogenic": "Pathogenic", "Likely Pathogenic": "Likely pathogenic",
               "Uncertain Significance": "Uncertain significance", "Likely Benign": "Likely benign",
               "Benign": "Benign"}
UNCERTAIN = "Uncertain significance"


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--erepo", type=Path,
                    default=ROOT.parent / "shared" / "refdata" / "clingen_erepo" / "erepo_dev.tsv.gz")
    args = ap.parse_args(argv)
    with gzip.open(args.erepo, "rt", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh, delimiter="\t"))
    comb = load_combining()
    sets = list(comb.rule_sets.values())
    total: Counter = Counter()
    agree = {rs.name: Counter() for rs in sets}
    netted: Counter = Counter()
    single: Counter = Counter()
    for r in rows:
        panel, want = r["expert_panel"], PANEL_CLASS[r["assertion"]]
        met = _met(parse_criteria(r["criteria_met"]))
        total[panel] += 1
        for rs in sets:
            agree[rs.name][panel] += rule_class(met, rs)[0] == want
        if _stand_alone(met):
            continue
        has_p = any(c.code in PATHOGENIC_CODES for c in met)
        has_b = any(c.code in BENIGN_CODES for c in met)
        if has_p and has_b and point_class(points(met)) != UNCERTAIN:
            netted["panel kept the netted class" if want == point_class(points(met)) else
                   "panel said Uncertain significance" if want == UNCERTAIN else "panel said another class"] += 1
        if not has_p and len(met) == 1 and met[0].strength == "Strong":
            single[f"panel said {want}"] += 1
    names = [rs.name for rs in sets]
    print(f"{len(rows):,} rows from {len(total)} panels ({args.erepo.name}); default rule set: {comb.default}")
    print("panel\trows\t" + "\t".join(names))
    for panel in sorted(total):
        print(f"{panel}\t{total[panel]}\t" + "\t".join(str(agree[n][panel]) for n in names))
    print("all panels\t" + str(sum(total.values())) + "\t" + "\t".join(str(sum(agree[n].values())) for n in names))
    better = sum(agree[comb.default][p] > agree["acmg-2015-svi"][p] for p in total)
    worse = sum(agree[comb.default][p] < agree["acmg-2015-svi"][p] for p in total)
    print(f"default vs the plain 2015 table: more rows agree in {better} panels, fewer in {worse}")
    print("contradictory criteria whose net points leave the uncertain band: " + ", ".join(
        f"{k} {v}" for k, v in sorted(netted.items())))
    print("a single Strong benign criterion alone: " + ", ".join(f"{k} {v}" for k, v in sorted(single.items())))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
