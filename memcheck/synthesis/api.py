"""``synthesize``: the shortest March test that detects every instance of the requested fault
classes on a memory, with the proof of minimality (see docs/synthesis.md)."""

from __future__ import annotations

import difflib
import itertools
import time
from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from memcheck.errors import FaultModelError, MemcheckError, SynthesisError
from memcheck.faults import CLASSES, DISCLAIMER, Arrangement, CoverageReport, coverage
from memcheck.faults.universe import class_named, parse_universe, require_layout
from memcheck.march.library import ALGORITHMS
from memcheck.march.notation import MarchTest
from memcheck.synthesis.beam import DEFAULT_BEAM_WIDTH, BeamOutcome, BeamSearch, beam_search
from memcheck.synthesis.elements import DOWN, UP
from memcheck.synthesis.evaluate import detects_all, instance_detected, steps_of, to_test
from memcheck.synthesis.passes import expand_passes
from memcheck.synthesis.rows import RowModel, build_model, builder_for, complement_closed, mirror_closed
from memcheck.synthesis.search import CUT_TIME, Search, SearchOutcome, Step
from memcheck.synthesis.sof import sof_supported

DEFAULT_WORDS = 64
DEFAULT_MAX_LENGTH = 32
MIN_LENGTH = 2  # a test that detects anything writes and reads
MAX_BACKGROUNDS = 7  # the standard set of 64-bit words; the rows to build grow with the bit pairs (width^2)
BEAM_SHARE = 0.5  # of --time-limit the beam search may take before the exact search starts
DEFAULT_MEMORY_LIMIT = 4 << 30  # bytes of search states; beyond it the exact search stops (said in the proof)
_MAX_ANY_CHECK = 6  # ⇕ elements whose 2^k direction assignments are all confirmed with the engine


@dataclass(frozen=True)
class Proof:
    """Why the answer is shortest. ``complete_below``: every length below it was searched
    exhaustively and no test in the space detects every instance; ``space``: the space's rules;
    ``cut_by``: what stopped the exact search before it finished (``"time limit"``,
    ``"memory limit"``; None: it finished)."""

    space: tuple[str, ...]
    complete_below: int
    states_per_length: tuple[int, ...]
    exhausted: bool
    cut_by: str | None
    seconds: float

    @property
    def timed_out(self) -> bool:
        return self.cut_by == CUT_TIME


@dataclass(frozen=True)
class SynthesisResult:
    """The outcome: ``test`` (None when none was found), its coverage on the memory, the proof, and
    for a search cut short the shortest library test that detects the classes (``fallback``).
    ``found_by``: ``"exact search"`` or ``"beam search"`` (see :mod:`memcheck.synthesis.beam`);
    ``beam``: what the beam search did (None when it was not run)."""

    classes: tuple[str, ...]
    setup: Arrangement
    max_length: int
    test: MarchTest | None
    report: CoverageReport | None
    proof: Proof
    fallback: MarchTest | None = None
    found_by: str | None = None
    beam: BeamOutcome | None = None
    universe: str = "all"

    @property
    def length(self) -> int | None:
        return None if self.test is None else self.test.length

    @property
    def minimal(self) -> bool:
        """The test is proven shortest: every shorter length was searched exhaustively."""
        return self.test is not None and self.proof.complete_below >= self.test.length

    def to_json(self) -> dict[str, Any]:
        s, p = self.setup, self.proof
        return {
            "classes": list(self.classes),
            "words": s.words,
            "layout": None if s.layout is None else list(s.layout),
            "universe": self.universe,
            "width": s.width,
            "order": s.order,
            "backgrounds": s.background_spec if isinstance(s.background_spec, str) else list(s.background_spec),
            "seed": s.seed,
            "max_length": self.max_length,
            "found": self.test is not None,
            "found_by": self.found_by,
            "minimal": self.minimal,
            "notation": None if self.test is None else self.test.to_unicode(),
            "ascii": None if self.test is None else self.test.to_ascii(),
            "length": self.length,
            "proof": {
                "space": list(p.space),
                "no_test_below": p.complete_below,
                "states_per_length": list(p.states_per_length),
                "exhausted": p.exhausted,
                "timed_out": p.timed_out,
                "cut_by": p.cut_by,
                "seconds": round(p.seconds, 3),
            },
            "beam": None if self.beam is None else _beam_json(self.beam),
            "fallback": None
            if self.fallback is None
            else {"name": self.fallback.name, "notation": self.fallback.to_unicode(), "length": self.fallback.length},
            "coverage": None if self.report is None else self.report.to_json(),
            "note": DISCLAIMER,
        }


def _beam_json(b: BeamOutcome) -> dict[str, Any]:
    return {
        "width": b.width,
        "max_element": b.max_element,
        "length": b.length,
        "cut_by": b.cut_by,
        "seconds": round(b.seconds, 3),
    }


def parse_fault_classes(spec: str | Sequence[str]) -> tuple[str, ...]:
    """Class names (comma-separated or a sequence), canonical spelling and order; unknown names get
    a did-you-mean."""
    names = [s.strip() for s in (spec.split(",") if isinstance(spec, str) else spec) if s.strip()]
    if not names:
        raise SynthesisError("no fault class given: pass --faults with classes such as SAF,AF,TF")
    out = []
    for n in names:
        try:
            cls = class_named(n)
        except FaultModelError as exc:
            lowered = {c.lower(): c for c in CLASSES}
            close = difflib.get_close_matches(n.lower(), list(lowered), n=2, cutoff=0.5)
            hint = f" Did you mean {' or '.join(lowered[c] for c in close)}?" if close else ""
            raise SynthesisError(f"{exc}.{hint} Known classes: {', '.join(CLASSES)}.") from None
        out.append(cls)
        if builder_for(cls) is None:
            raise SynthesisError(
                f"fault class {cls} has no cell-level model for the synthesis search yet; leave it "
                "out and check it afterwards with `memcheck coverage`."
            )
    return tuple(c for c in CLASSES if c in out)


def _setup(
    words: int,
    width: int,
    order: str,
    backgrounds: str | None,
    seed: int | None,
    layout: tuple[int, int] | None = None,
) -> Arrangement:
    setup = Arrangement(words, width, layout, order, backgrounds, seed)
    rs = setup.resolve()
    if rs.nbg > MAX_BACKGROUNDS:
        raise SynthesisError(
            f"the synthesis search runs the test once per data background and tracks every pass's start state; "
            f"{setup.background_spec!r} gives {rs.nbg} backgrounds for {width}-bit words, more than the "
            f"{MAX_BACKGROUNDS} it handles (words of up to 64 bits with the standard set). Pass --backgrounds with "
            "fewer."
        )
    return setup


def _check_scope(cls: tuple[str, ...], setup: Arrangement, universe: str) -> str:
    """The universe kind (``all`` or ``neighbours``), checked against the classes and memory."""
    kind = parse_universe(universe).kind
    if kind not in ("all", "neighbours"):
        raise SynthesisError(
            f"the synthesis search covers every instance of a universe: use --universe all or neighbours, not "
            f"{universe!r} (a sampled universe is for `memcheck coverage`)"
        )
    if kind == "neighbours":
        require_layout(setup)
    if "SOF" in cls and not sof_supported(setup):
        raise SynthesisError(
            "SOF in the synthesis search needs data backgrounds that treat every word alike (solid, the standard "
            f"set); {setup.background_spec!r} flips words by address. Leave SOF out or change --backgrounds."
        )
    return kind


def _undetectable(model: RowModel) -> list[str]:
    """Instances no March test in the space detects, found by exhausting each one's own space. An
    instance some library test detects (run through the row model) is detectable and skipped."""
    seen = np.zeros(len(model.instances), bool)
    for alg in sorted(ALGORITHMS, key=lambda a: -a.length):  # long tests first: usually one suffices
        seen |= instance_detected(model, steps_of(alg.test))
        if seen.all():
            return []
    bad = []
    for i in np.flatnonzero(~seen).tolist():
        sub = expand_passes(model.restrict(i))
        out = Search(sub, allow_delay=True).run(64)
        if out.exhausted and out.steps is None:
            bad.append(model.instances[i].label)
    return bad


def _space(classes: Sequence[str], comp: bool, mirror: bool) -> tuple[str, ...]:
    rules = [
        "elements of r/w of 0/1, each read expecting the value a fault-free memory holds",
        "every word's first operation is a write (reads before it compare nothing)",
        "delay elements allowed (not counted in the length)" if "DRF" in classes else "no delay elements",
    ]
    if comp:
        rules.append("first write is w0 (0/1 symmetry of the fault classes)")
    if mirror:
        rules.append("first element walks ⇑ (⇑/⇓ mirror symmetry of the fault universe)")
    return tuple(rules)


def _any_elements(model: RowModel, steps: tuple[Step, ...]) -> list[int]:
    """Elements whose direction does not matter (every assignment still detects all), greedily."""
    chosen: list[int] = []
    for i, st in enumerate(steps):
        if st.ops is None or len(chosen) >= _MAX_ANY_CHECK:
            continue
        trial = [*chosen, i]
        ok = True
        for dirs in itertools.product((UP, DOWN), repeat=len(trial)):
            alt = list(steps)
            for j, d in zip(trial, dirs, strict=True):
                alt[j] = replace(alt[j], direction=d)
            if not detects_all(model, alt):
                ok = False
                break
        if ok:
            chosen = trial
    return chosen


def _confirm(
    steps: tuple[Step, ...], anys: list[int], setup: Arrangement, classes: tuple[str, ...], universe: str
) -> CoverageReport:
    """Coverage of the test on the memory with the fault engine, for every walk of its ⇕ elements."""
    report: CoverageReport | None = None
    for dirs in itertools.product((UP, DOWN), repeat=len(anys)):
        alt = list(steps)
        for j, d in zip(anys, dirs, strict=True):
            alt[j] = replace(alt[j], direction=d)
        rep = coverage(to_test(alt), setup, classes=classes, universe=universe)
        if any(c.detected != c.faults for c in rep.classes):
            raise SynthesisError(
                f"internal check failed: the fault engine does not confirm {to_test(alt).to_unicode()} for "
                f"{','.join(classes)}; please report this with the command line"
            )
        report = report or rep
    assert report is not None
    test = to_test(steps, anys)
    return coverage(test, setup, classes=classes, universe=universe)


def shortest_library_test(setup: Arrangement, classes: tuple[str, ...], universe: str = "all") -> MarchTest | None:
    """The shortest library test that detects every instance on the memory, if any."""
    for alg in sorted(ALGORITHMS, key=lambda a: a.length):
        if alg.test.delays and "DRF" not in classes:
            continue
        try:
            rep = coverage(alg.test, setup, classes=classes, universe=universe)
        except MemcheckError:
            continue
        if all(c.detected == c.faults for c in rep.classes):
            return alg.test
    return None


def synthesize(
    classes: str | Sequence[str],
    *,
    words: int = DEFAULT_WORDS,
    width: int = 1,
    order: str = "linear",
    backgrounds: str | None = None,
    seed: int | None = None,
    max_length: int = DEFAULT_MAX_LENGTH,
    time_limit: float | None = None,
    beam_width: int = DEFAULT_BEAM_WIDTH,
    memory_limit: int | None = DEFAULT_MEMORY_LIMIT,
    universe: str = "all",
    layout: tuple[int, int] | None = None,
) -> SynthesisResult:
    """The shortest March test (in the space of docs/synthesis.md) that detects every instance of
    ``classes`` on a ``words`` x ``width`` memory, from every power-up state.

    A beam search (:mod:`memcheck.synthesis.beam`, ``beam_width`` states per length; 0 skips it)
    first finds a short test, taking at most half of the time left of ``time_limit``; the exact search then
    tries every shorter length. The result is proven shortest (:attr:`SynthesisResult.minimal`)
    when the exact search finishes; when the time limit or ``memory_limit`` (bytes of search
    states) cuts it, the beam's test is returned with the lengths the exact search ruled out.

    Raises:
        SynthesisError: unknown or unsupported class, several data backgrounds, a length bound below
            any possible test, or a class set no March test detects (the offending instances named).
        FaultModelError: a geometry the fault engine cannot build.
    """
    t0 = time.monotonic()
    cls = parse_fault_classes(classes)
    _check_bounds(max_length, beam_width)
    setup = _setup(words, width, order, backgrounds, seed, layout)
    kind = _check_scope(cls, setup, universe)
    base = build_model(cls, setup, kind)
    _require_detectable(base, cls, words, width)
    model = expand_passes(base)
    comp, mirror = complement_closed(cls), mirror_closed(setup, kind)
    delay, writes, dirs = "DRF" in cls, (0,) if comp else (0, 1), (UP,) if mirror else (UP, DOWN)
    deadline = None if time_limit is None else t0 + time_limit
    beam = None
    if beam_width > 0:
        now = time.monotonic()
        share = None if deadline is None else now + BEAM_SHARE * max(0.0, deadline - now)
        searcher = BeamSearch(model, delay, writes, dirs, share, memory_limit, width=beam_width)
        beam = beam_search(searcher, max_length)
    bound = max_length if beam is None or beam.length is None else beam.length - 1
    exact: SearchOutcome = Search(model, delay, writes, dirs, deadline, memory_limit).run(bound)
    proof = Proof(
        _space(cls, comp, mirror),
        exact.complete_below,
        exact.stats.states_per_length,
        exact.exhausted,
        exact.cut_by,
        time.monotonic() - t0,
    )
    steps, found_by = (exact.steps, "exact search") if exact.steps is not None else (None, None)
    if steps is None and beam is not None and beam.steps is not None:
        steps, found_by = beam.steps, "beam search"
    fallback = shortest_library_test(setup, cls, kind) if exact.cut_by is not None else None
    if steps is None:
        return SynthesisResult(cls, setup, max_length, None, None, proof, fallback, None, beam, kind)
    report = _confirm(steps, _any_elements(model, steps), setup, cls, kind)
    proof = replace(proof, seconds=time.monotonic() - t0)
    return SynthesisResult(cls, setup, max_length, report.test, report, proof, fallback, found_by, beam, kind)


def _check_bounds(max_length: int, beam_width: int) -> None:
    if isinstance(max_length, bool) or not isinstance(max_length, int) or max_length < MIN_LENGTH:
        raise SynthesisError(
            f"--max-length {max_length!r} is below any possible test: a March test that detects a fault writes a "
            f"value and reads it back, so it has at least {MIN_LENGTH} operations per word"
        )
    if isinstance(beam_width, bool) or not isinstance(beam_width, int) or beam_width < 0:
        raise SynthesisError(f"--beam-width {beam_width!r} must be a whole number of states, 0 or more (0: no beam)")


def _require_detectable(base: RowModel, cls: tuple[str, ...], words: int, width: int) -> None:
    bad = _undetectable(base)
    if bad:
        shown = "; ".join(bad[:5]) + (f"; and {len(bad) - 5} more" if len(bad) > 5 else "")
        raise SynthesisError(
            f"no March test detects every instance of {','.join(cls)} on this {words} x {width} memory: the "
            f"search exhausted every reachable state of these cases without detecting them: {shown}. Drop the "
            "class, or change the geometry or data background."
        )
