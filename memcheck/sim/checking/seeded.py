"""A property search seeded from a failing window, for a sweep failure that will not shrink on its own.

Some sweep failures do not fail as any short independent example: the first candidates of
:mod:`memcheck.sim.checking.stretch` all pass from the canonical state (for example when the bug
needs a word left alone for longer than any window, or a state the canonical fill never makes).
Then bulk examples (:mod:`memcheck.sim.checking.bulk`) are drawn with their hot addresses and data
words taken from the failing window (the failing read's addresses first, then the busiest ones), each
run from the canonical state; the first that fails is shrunk like any other failure
(:func:`memcheck.sim.checking.minimise.shrink_stretch`). Hypothesis draws them from the run's seed
(plus 2), without its own shrinking.
"""

from __future__ import annotations

from collections import Counter

from memcheck.model_fast import WRITE, Columns, limbs_to_ints
from memcheck.sim.checking.compare import ArrayCheck
from memcheck.sim.checking.minimise import Shrunk, shrink_stretch
from memcheck.sim.checking.runner import Runner
from memcheck.sim.checking.stretch import acting, failing_addresses

#: Bulk examples a seeded search runs at most.
SEEDED_EXAMPLES = 50
_POOL = 16
_DATA = 4


def seed_pools(runner: Runner, stretch: Columns) -> tuple[list[int], list[int]]:
    """Hot addresses (the failing read's first, then the busiest of the last window) and the most
    written data words of the last window of ``stretch`` (whose last row shows the difference)."""
    c = runner.contract
    window = stretch[max(0, len(stretch) - runner.window_max) :]
    first = sorted(failing_addresses(c, stretch, len(stretch) - 1))
    act = acting(c, window)
    busy = Counter(int(a) for a in window.address[act].tolist())
    pool = list(dict.fromkeys(first + [a for a, _ in busy.most_common()]))[:_POOL]
    writes = window.kind == WRITE
    words = limbs_to_ints(window.data[writes]) if writes.any() else []
    data = [d for d, _ in Counter(words).most_common(_DATA)]
    return pool or [0], data


def seeded_search(runner: Runner, stretch: Columns, examples: int = SEEDED_EXAMPLES) -> Shrunk | None:
    """Bulk examples seeded from ``stretch``'s failing window; the first failing one shrunk (None: none
    failed, or it did not shrink to a short trace)."""
    if examples < 1:
        return None
    from hypothesis import HealthCheck, Phase, given, settings
    from hypothesis import seed as hyp_seed

    from memcheck.sim.checking.bulk import BulkSpec, bulk_specs, decode

    c = runner.contract
    pool, data = seed_pools(runner, stretch)
    runner.where = {"phase": "sweep", "what": "property search seeded from the failing window", "total": examples}
    found: list[ArrayCheck] = []

    @hyp_seed((runner.options.seed_or_zero() + 2) & ((1 << 64) - 1))
    @settings(
        max_examples=examples,
        deadline=None,
        database=None,
        derandomize=False,
        phases=[Phase.generate],
        suppress_health_check=list(HealthCheck),
    )
    @given(bulk_specs(c, pool=pool, data_pool=data))
    def search(spec: BulkSpec) -> None:
        if found:
            return
        checked = runner.run_example_columns(decode(c, spec))
        runner.counts["seeded_examples"] = runner.counts.get("seeded_examples", 0) + 1
        if not checked.ok:
            found.append(checked)

    search()
    if not found:
        return None
    k = found[0].first_mismatch
    assert k is not None
    return shrink_stretch(runner, found[0].cols, k)
