"""The one options type of every job on RTL (``check``, ``march run`` and later ones).

A job reads the fields it needs and ignores the rest, so options pass from the command line to the
session and into the simulator process without field-by-field copies. The command line takes its
defaults from here (``SimOptions().examples`` ...) and names each flag after its field
(``--stall-timeout`` sets ``stall_timeout``). Importing this module is cheap: no simulator, no cocotb.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from memcheck.errors import MemcheckError
from memcheck.march.backgrounds import default_background_spec

#: The phases of ``memcheck check``, in the order they run.
PHASES: tuple[str, ...] = ("smoke", "sweep", "property")
#: Quiet cycles a delay element (``Del``) of a March test becomes on RTL unless told otherwise.
DEFAULT_PAUSE_CYCLES = 100
#: Shrinking a failing bulk example: at most this many simulator runs (see checking/examples.py).
BULK_SHRINK_RUNS = 40
#: Operations of the check's sweep above which it is skipped (and the report says so): the full March
#: C- over the standard backgrounds of a 65,536 x 64 memory (4,587,520 operations) fits with room to
#: spare; the sweep runs inside the simulator in batches, at roughly 100,000 operations a second.
SWEEP_OPS = 10_000_000
#: Keyword names of earlier releases, still accepted by the Python API.
ALIASES = {"stall_seconds": "stall_timeout", "sweep_max_ops": "sweep_ops"}


@dataclass(frozen=True)
class SimOptions:
    """Budget, stimulus and outputs of a job on RTL; the defaults are the commands' defaults.

    ``seed=None`` draws a fresh seed (reported in the result). ``check`` uses ``phases`` to
    ``bulk_shrink_runs`` (its sweep also ``pause_cycles``); ``march run`` uses ``order`` to
    ``max_ops`` and ``backgrounds``; both use ``seed`` and the outputs (``out_dir`` to ``waveform``).
    ``port`` is ``"NAME"`` (a port that reads and writes) or ``"WRITER,READER"``; ``None`` picks one.
    """

    # check
    phases: tuple[str, ...] = PHASES
    examples: int = 300
    bulk_examples: int = 100
    march: str = "March C-"
    sweep_ops: int = SWEEP_OPS
    max_blocks: int = 12
    bulk_shrink_runs: int = BULK_SHRINK_RUNS
    #: Directed examples the property phase may add for cover points the random ones left unhit.
    directed_examples: int = 64
    #: A check that leaves a cover point unhit exits 1 (``memcheck check --require-coverage``).
    require_coverage: bool = False
    # March tests (the sweep of check and march run)
    backgrounds: str | None = None  # None: solid for 1-bit words, else standard (backgrounds_for)
    order: str = "linear"
    any_order: str = "up"
    layout: tuple[int, int] | None = None
    port: str | None = None
    pause_cycles: int = DEFAULT_PAUSE_CYCLES
    max_ops: int = 50_000_000
    # every job
    seed: int | None = None
    out_dir: Path | None = None
    build_dir: Path | None = None
    stall_timeout: float = 30.0
    waveform: bool = True

    def replace(self, **overrides: Any) -> SimOptions:
        """A copy with ``overrides`` set (earlier keyword names accepted); unknown names raise a
        :class:`~memcheck.errors.MemcheckError` listing the allowed ones."""
        named = {ALIASES.get(k, k): v for k, v in overrides.items()}
        allowed = {f.name for f in dataclasses.fields(self)}
        unknown = sorted(set(named) - allowed)
        if unknown:
            raise MemcheckError(f"unknown option(s) {', '.join(unknown)}; allowed: {', '.join(sorted(allowed))}.")
        for key in ("out_dir", "build_dir"):
            if named.get(key) is not None:
                named[key] = Path(named[key])
        if "phases" in named:
            named["phases"] = tuple(named["phases"])
        return dataclasses.replace(self, **named)

    def to_json(self) -> dict[str, Any]:
        """The options as JSON (for the job file the simulator side reads)."""
        out = dataclasses.asdict(self)
        out["phases"] = list(self.phases)
        out["layout"] = None if self.layout is None else list(self.layout)
        out["out_dir"] = None if self.out_dir is None else str(self.out_dir)
        out["build_dir"] = None if self.build_dir is None else str(self.build_dir)
        return out

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> SimOptions:
        layout = obj.get("layout")
        return cls().replace(**{**obj, "layout": None if layout is None else (int(layout[0]), int(layout[1]))})

    def backgrounds_for(self, width: int) -> str:
        """``backgrounds``, or the one default of every command for ``width``-bit words."""
        return self.backgrounds if self.backgrounds is not None else default_background_spec(width)

    def seed_or_zero(self) -> int:
        return 0 if self.seed is None else self.seed
