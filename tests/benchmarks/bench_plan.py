"""Speed of the search plan on the shallow demo (1 ha, hand-held or sled, lanes 2 m apart).

Run by hand: ``python tests/benchmarks/bench_plan.py``. Prints the median time of one link
budget (the baseline, measured in the same run), of the link-budget lateral range estimate
(ten depths), of ``plan_search`` on a given estimate, of the spacing trade-off (16
spacings) and of a plan-board redraw after a spacing change (estimate and spacing curve
cached), with ratios to the baseline. Goal: a redraw under 0.5 s.
"""

from __future__ import annotations

from timing import median_s

from snowprobe_widgets.budget import link_budget
from snowprobe_widgets.plan import (
    PLATFORMS,
    DebrisArea,
    lateral_range_from_budget,
    plan_search,
    spacing_tradeoff,
)
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.widgets import SearchPlanBoard

GOAL_S = 0.5


def main() -> None:
    sc = Scenario.example("shallow_dry_powder")
    sled = PLATFORMS["hand-held or sled"]
    area = DebrisArea.rectangle(100.0, 100.0)
    lateral = lateral_range_from_budget(sc, antenna_height_m=sled.antenna_height_m)
    board = SearchPlanBoard()
    spacings = iter([1.5, 2.5] * 50)

    def redraw() -> None:
        board.spacing.value = next(spacings)

    base = median_s(lambda: link_budget(sc), 10)
    rows = (
        ("one link budget (baseline)", base),
        ("lateral range estimate, 10 depths", median_s(
            lambda: lateral_range_from_budget(sc, antenna_height_m=0.3), 5)),
        ("plan_search", median_s(lambda: plan_search(lateral, area, sled, 2.0), 10)),
        ("spacing trade-off, 16 spacings", median_s(
            lambda: spacing_tradeoff(lateral, area, sled, [0.5 * 1.3**k for k in range(16)]),
            5)),
        ("board redraw after a spacing change", median_s(redraw, 10)),
        ("one link budget (baseline, again at the end)", median_s(lambda: link_budget(sc), 10)),
    )
    print(f"{'what':<48} {'ms':>9} {'x budget':>9}")
    for name, s in rows:
        print(f"{name:<48} {1e3 * s:9.1f} {s / base:9.2f}")
    verdict = "meets" if rows[4][1] < GOAL_S else "misses"
    print(f"board redraw {verdict} the {GOAL_S:g} s goal")


if __name__ == "__main__":
    main()
