"""Run one March test alone on wrapper RTL and report its first failing operation.

``memcheck check`` runs a March test as one phase among others and shrinks what it finds; a DFT
engineer choosing the algorithm a BIST controller will run wants the test itself, in the order,
backgrounds and layout of their choice, and the first operation that fails, named the way March
tests are written: element and its notation, operation within the element, address, background.

How a run works:

* :func:`plan_cycles` lays the expanded stream (:func:`memcheck.march.expand`) out as clock cycles:
  one operation per cycle, back to back, through one writing and one reading port (the same
  readwrite port by default); every other port is quiet. A delay element (``Del``) becomes
  ``pause_cycles`` quiet cycles; ``read_latency`` quiet cycles at the end let the last read's data
  come out.
* The stream runs in one fresh simulator, after the contract's reset sequence if it has one; the
  build folder is shared with ``memcheck check``. The simulator side's March job
  (:func:`memcheck.sim.march_job.run_march_job`) expands the stream chunk by chunk, runs it through the
  generated harness in batches (no Python per cycle in the harness) and compares every cycle with the
  reference model (the vectorised :mod:`memcheck.model_fast`, its state carried across batches by
  :class:`memcheck.sim.march_job.CarriedModel`; it agrees with :class:`memcheck.model.Model`) from power-up
  (or right after reset), so contract semantics apply: latency, lanes, ``initial``,
  ``idle_read_data``. It compares each read's data with the March expectation too (the background or
  its complement), for addresses the run has already written; before that only the contract model
  judges a read (it knows the initial contents only when the contract promises them). For a correct
  memory the two agree; the report says which one failed. Only counts and the first failure (its
  cycle and the last :data:`WINDOW` cycles) come back, so memory is bounded by a batch, not by the
  stream; memcheck's process keeps a *light* program (:func:`plan_light`: pauses and sizes).
* :func:`plan_cycles` and :func:`first_failure` do the same on a whole program in Python, for
  observations from anywhere (:func:`check_program`) and for the earlier replay-job way
  (``sim_job="replay"``: every cycle's comparison comes back).

The replay file and waveform hold the run up to the first failing cycle (a second, short run, when
it is at most :data:`REPLAY_MAX_CYCLES` cycles); ``memcheck replay`` re-runs them and checks the
contract model (not the March expectation). Verdicts cover the modelled behaviour on the operations
driven, nothing more: not sign-off.
"""

from __future__ import annotations

import dataclasses
import random
import shutil
import time
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any, Literal

import numpy as np
import numpy.typing as npt

from memcheck._atomic import open_atomic
from memcheck.contract import Contract, load_contract
from memcheck.errors import FaultModelError, InvalidOperation, MemcheckError, NotationError
from memcheck.march.backgrounds import limbs_to_int
from memcheck.march.expand import OP_WRITE, MarchStep, MarchStream, Pause, expand
from memcheck.march.library import resolve_test
from memcheck.march.notation import MarchElement, MarchTest
from memcheck.ops import Cycle, Expected, OpKind, PortOp, Trace
from memcheck.sim.checker import CheckedTrace, ModelStart, compare, start_model
from memcheck.sim.launch import DEFAULT_STALL_SECONDS
from memcheck.sim.layout import Observed
from memcheck.sim.result import Failure
from memcheck.strategies import drain_cycle

if TYPE_CHECKING:
    from memcheck.sim.build import Build
    from memcheck.sim.icarus import ProgressCallback

#: Quiet cycles a delay element (``Del``) becomes on RTL unless told otherwise.
DEFAULT_PAUSE_CYCLES = 100
#: Largest stream a run accepts unless told otherwise: a safety limit on run time (memory no longer
#: grows with the stream; the simulator checks it batch by batch), some minutes of simulation.
DEFAULT_MAX_OPS = 50_000_000
#: Longest run up to the failure that gets a replay file and waveform: they are made by running the
#: stream up to the failure again through the replay job, whose memory grows by about 3 KB a cycle.
REPLAY_MAX_CYCLES = 50_000
#: Ways the simulator side runs the stream: "march" (batch by batch, first failure only) or
#: "replay" (the earlier way: every cycle's comparison comes back; for comparison and bench/).
SIM_JOBS: tuple[str, ...] = ("march", "replay")
#: Cycles shown in the report's table, ending at the failing one.
WINDOW = 12
#: Extra stall allowance per cycle for the replay job: it compares every cycle with the model after
#: the last batch, without progress records, before it reports back.
_STALL_PER_CYCLE = 50e-6
#: Extra stall allowance for the March job: the model checks one batch between progress records.
_STALL_PER_BATCH = 30.0
_PHASE = "march"

Activity = Literal["read", "write", "quiet"]
IntArray = npt.NDArray[np.int64]


@dataclass(frozen=True)
class MarchRunOptions:
    """How to run a March test on RTL. ``seed`` only matters for ``order="lfsr"`` (None: a fresh
    one, reported); ``port`` is ``"NAME"`` (a port that reads and writes) or ``"WRITER,READER"``."""

    order: str = "linear"
    backgrounds: str = "standard"
    layout: tuple[int, int] | None = None
    any_order: str = "up"
    seed: int | None = None
    port: str | None = None
    pause_cycles: int = DEFAULT_PAUSE_CYCLES
    max_ops: int = DEFAULT_MAX_OPS
    out_dir: Path | None = None
    build_dir: Path | None = None
    stall_seconds: float = DEFAULT_STALL_SECONDS
    waveform: bool = True
    sim_job: str = "march"


# -- ports ---------------------------------------------------------------------------------


def choose_ports(contract: Contract, spec: str | None = None) -> tuple[int, int]:
    """(writer index, reader index) for ``spec``: ``None`` picks the first port that reads and
    writes, else the first writing and the first reading port; ``"NAME"`` must read and write;
    ``"W,R"`` writes through W and reads through R. Raises InvalidOperation naming the problem."""
    ports = contract.ports
    names = ", ".join(f"{p.name} ({p.role})" for p in ports)

    def find(name: str) -> int:
        for i, p in enumerate(ports):
            if p.name == name:
                return i
        raise InvalidOperation(f"the contract has no port {name!r}; its ports are: {names}.")

    if spec is None or not spec.strip():
        both = [i for i, p in enumerate(ports) if p.can_read and p.can_write]
        if both:
            return both[0], both[0]
        writers = [i for i, p in enumerate(ports) if p.can_write]
        readers = [i for i, p in enumerate(ports) if p.can_read]
        if not writers or not readers:
            lack = "writes" if not writers else "reads"
            raise InvalidOperation(
                f"a March test needs a port that writes and one that reads, but no port "
                f"of this contract {lack}; its ports are: {names}."
            )
        return writers[0], readers[0]
    parts = [s.strip() for s in spec.split(",")]
    if len(parts) == 1:
        i = find(parts[0])
        p = ports[i]
        if not (p.can_read and p.can_write):
            other = "write" if p.can_read else "read"
            raise InvalidOperation(
                f"port {p.name!r} is a {p.role} port and cannot {other}, but a March test both writes and "
                f"reads; name a writing and a reading port as --port WRITER,READER (ports: {names})."
            )
        return i, i
    if len(parts) != 2 or not all(parts):
        raise InvalidOperation(f"--port takes NAME or WRITER,READER, not {spec!r} (ports: {names}).")
    w, r = find(parts[0]), find(parts[1])
    if not ports[w].can_write:
        raise InvalidOperation(f"port {ports[w].name!r} is a {ports[w].role} port and cannot write (ports: {names}).")
    if not ports[r].can_read:
        raise InvalidOperation(f"port {ports[r].name!r} is a {ports[r].role} port and cannot read (ports: {names}).")
    return w, r


# -- the stream as cycles ------------------------------------------------------------------------


@dataclass(frozen=True)
class PauseSpan:
    """The quiet cycles ``start`` .. ``stop - 1`` that stand for one delay element."""

    start: int
    stop: int
    pause: Pause


@dataclass(frozen=True, eq=False)
class MarchProgram:
    """A March stream laid out as clock cycles for one contract.

    ``op_cycle[i]`` is the cycle that issues stream operation ``i``; ``cycle_op[k]`` the operation
    cycle ``k`` issues (-1: a quiet cycle). ``read_ops``, ``read_expected`` and ``read_checked`` list
    every read in stream order: its operation index, the March expectation and whether the run had
    written the address before (only then is the March expectation compared).
    """

    stream: MarchStream
    cycles: tuple[Cycle, ...]
    writer: int
    reader: int
    pause_cycles: int
    op_cycle: IntArray
    cycle_op: IntArray
    read_ops: IntArray
    read_expected: tuple[int, ...]
    read_checked: npt.NDArray[np.bool_]
    pauses: tuple[PauseSpan, ...]
    #: A *light* program (``cycles`` empty, arrays empty) knows only its pauses and sizes: what
    #: naming one cycle of a run needs, in memory that does not grow with the stream.
    light: bool = False
    light_cycles: int = 0
    quiet: Cycle = ()

    @property
    def operations(self) -> int:
        return self.stream.total_ops if self.light else int(self.op_cycle.shape[0])

    @property
    def total_cycles(self) -> int:
        return self.light_cycles if self.light else len(self.cycles)

    def op_at(self, cycle: int) -> int:
        """The operation cycle ``cycle`` issues (-1: a quiet cycle or out of range)."""
        if not self.light:
            return int(self.cycle_op[cycle]) if 0 <= cycle < len(self.cycle_op) else -1
        if not 0 <= cycle < self.light_cycles or self.pause_at(cycle) is not None:
            return -1
        op = cycle - self.pause_cycles * sum(1 for p in self.pauses if p.stop <= cycle)
        return op if op < self.operations else -1

    def cycle_at(self, cycle: int) -> Cycle:
        """What every port does in cycle ``cycle`` (built on demand in a light program)."""
        if not self.light:
            return self.cycles[cycle]
        quiet = list(self.quiet)
        op = self.op_at(cycle)
        if op >= 0:
            s = self.step(op)
            quiet[self.writer if s.op.kind == OpKind.WRITE else self.reader] = s.op
        return tuple(quiet)

    def step(self, index: int) -> MarchStep:
        """Stream operation ``index`` as a MarchStep (for reports)."""
        if not 0 <= index < self.stream.total_ops:
            raise IndexError(index)
        st = self.stream
        b = index // st.ops_per_background
        els = st.test.elements
        e = max(i for i, el in enumerate(els) if isinstance(el, MarchElement) and st.element_start(b, i) <= index)
        el = els[e]
        assert isinstance(el, MarchElement)
        for ch in st._element_chunks(b, e, el):
            if ch.start <= index < ch.start + len(ch):
                i = index - ch.start
                addr = int(ch.address[i])
                if ch.op[i] == OP_WRITE:
                    return MarchStep(
                        index,
                        ch.element,
                        int(ch.step[i]),
                        ch.background,
                        PortOp(OpKind.WRITE, addr, limbs_to_int(ch.data[i])),
                        None,
                    )
                return MarchStep(
                    index,
                    ch.element,
                    int(ch.step[i]),
                    ch.background,
                    PortOp(OpKind.READ, addr),
                    limbs_to_int(ch.expected[i]),
                )
        raise IndexError(index)

    def pause_at(self, cycle: int) -> PauseSpan | None:
        for p in self.pauses:
            if p.start <= cycle < p.stop:
                return p
        return None

    def last_op_before(self, cycle: int) -> int | None:
        """The last operation issued at or before ``cycle`` (None before the first)."""
        if self.light:
            quiet = sum(min(max(0, cycle + 1 - p.start), p.stop - p.start) for p in self.pauses)
            k = min(cycle + 1 - quiet, self.operations) - 1
            return k if k >= 0 else None
        k = int(np.searchsorted(self.op_cycle, cycle, side="right")) - 1
        return k if k >= 0 else None


def plan_cycles(
    contract: Contract, stream: MarchStream, writer: int, reader: int, pause_cycles: int = DEFAULT_PAUSE_CYCLES
) -> MarchProgram:
    """Lay ``stream`` out as cycles: one operation per cycle, back to back (see module doc)."""
    m = contract.memory
    if stream.words != m.words or stream.width != m.width:
        raise NotationError(
            f"the stream is for {stream.words} x {stream.width} but the contract's memory is {m.words} x {m.width}"
        )
    quiet = drain_cycle(contract)
    cycles: list[Cycle] = []
    n = stream.total_ops
    op_cycle = np.empty(n, dtype=np.int64)
    read_ops: list[int] = []
    read_expected: list[int] = []
    read_checked: list[bool] = []
    pauses: list[PauseSpan] = []
    written = np.zeros(m.words, dtype=bool)
    for item in stream:
        if isinstance(item, Pause):
            start = len(cycles)
            cycles.extend(quiet for _ in range(pause_cycles))
            pauses.append(PauseSpan(start, len(cycles), item))
            continue
        base = len(cycles)
        k = len(item)
        op_cycle[item.start : item.start + k] = np.arange(base, base + k)
        for i in range(k):
            cyc = list(quiet)
            addr = int(item.address[i])
            if item.op[i] == OP_WRITE:
                cyc[writer] = PortOp(OpKind.WRITE, addr, limbs_to_int(item.data[i]))
                written[addr] = True
            else:
                cyc[reader] = PortOp(OpKind.READ, addr)
                read_ops.append(item.start + i)
                read_expected.append(limbs_to_int(item.expected[i]))
                read_checked.append(bool(written[addr]))
            cycles.append(tuple(cyc))
    cycles.extend(quiet for _ in range(m.read_latency))
    cycle_op = np.full(len(cycles), -1, dtype=np.int64)
    cycle_op[op_cycle] = np.arange(n, dtype=np.int64)
    return MarchProgram(
        stream,
        tuple(cycles),
        writer,
        reader,
        pause_cycles,
        op_cycle,
        cycle_op,
        np.array(read_ops, dtype=np.int64),
        tuple(read_expected),
        np.array(read_checked, dtype=bool),
        tuple(pauses),
    )


def plan_light(
    contract: Contract, stream: MarchStream, writer: int, reader: int, pause_cycles: int = DEFAULT_PAUSE_CYCLES
) -> MarchProgram:
    """The layout of :func:`plan_cycles` without building it: pauses and sizes only (what a run and
    its report need), in memory that grows with the number of delay elements, not operations."""
    m = contract.memory
    if stream.words != m.words or stream.width != m.width:
        raise NotationError(
            f"the stream is for {stream.words} x {stream.width} but the contract's memory is {m.words} x {m.width}"
        )
    pauses = []
    quiet = 0
    for b in range(len(stream.backgrounds)):
        for e, el in enumerate(stream.test.elements):
            if not isinstance(el, MarchElement):
                at = stream.element_start(b, e) + quiet
                pauses.append(PauseSpan(at, at + pause_cycles, Pause(e, b, el, stream.element_start(b, e))))
                quiet += pause_cycles
    none = np.zeros(0, dtype=np.int64)
    return MarchProgram(
        stream,
        (),
        writer,
        reader,
        pause_cycles,
        none,
        none,
        none,
        (),
        np.zeros(0, dtype=bool),
        tuple(pauses),
        light=True,
        light_cycles=stream.total_ops + quiet + m.read_latency,
        quiet=drain_cycle(contract),
    )


# -- the first failure -------------------------------------------------------------------------


@dataclass(frozen=True)
class MarchFailure:
    """The first cycle whose read data failed, and the March operation it belongs to.

    ``cycle`` is the cycle whose sampled read data failed on ``port``; ``issued_cycle`` = cycle -
    read_latency is when the port issued what that data answers. ``activity`` says what the port
    did then: a March ``read`` (``step`` is it), a March ``write`` (read data during a write,
    ``read_during_write``) or ``quiet``: nothing of the test's (idle, or a read of address 0 by a
    port without an enable); ``step`` is then the operation another port did in that cycle, else the
    last one before (None before the first).
    ``model_diff`` and ``march_diff`` are the bits that differ from the contract model and from the
    March expectation (``march_expected`` is None where the March expectation does not apply).
    """

    cycle: int
    port: str
    issued_cycle: int
    activity: Activity
    step: MarchStep | None
    description: str
    march_expected: int | None
    model_expected: Expected
    got: Observed
    march_diff: int
    model_diff: int
    window: CheckedTrace

    @property
    def failed_checks(self) -> tuple[str, ...]:
        """Which comparisons failed: "contract model", "March expectation", or both."""
        out = []
        if self.model_diff:
            out.append("contract model")
        if self.march_diff:
            out.append("March expectation")
        return tuple(out)

    @property
    def diff(self) -> int:
        return self.model_diff | self.march_diff

    def to_json(self, width: int) -> dict[str, Any]:
        s = self.step
        return {
            "cycle": self.cycle,
            "issued_cycle": self.issued_cycle,
            "port": self.port,
            "activity": self.activity,
            "description": self.description,
            "element": None if s is None else s.element,
            "operation": None if s is None else s.step + 1,
            "operation_index": None if s is None else s.index,
            "address": None if s is None else s.op.address,
            "background": None if s is None else s.background,
            "failed": list(self.failed_checks),
            "march_expected": None if self.march_expected is None else _hex(self.march_expected, width),
            "model_expected": _hex_known(self.model_expected.value, self.model_expected.known, width),
            "got": _hex_known(self.got.value, self.got.defined, width),
            "differing_bits": [b for b in range(width) if self.diff >> b & 1],
            "march_diff": hex(self.march_diff),
            "model_diff": hex(self.model_diff),
        }


def _hex(value: int, width: int) -> str:
    return f"{value:0{(width + 3) // 4}x}"


def _hex_known(value: int, known: int, width: int) -> str:
    from memcheck.report.text import hex_known

    return hex_known(value, known, width)


def _activity(program: MarchProgram, port: int, issued: int) -> tuple[Activity, int | None]:
    """What port ``port`` did at cycle ``issued``: the March read or write it carried, or nothing of
    the test's (``quiet``); with the March operation of that cycle, else the last one before."""
    if 0 <= issued < program.total_cycles:
        op = program.op_at(issued)
        if op >= 0:
            cyc = program.cycle_at(issued)
            kind = cyc[port].kind
            is_write = any(o.kind == OpKind.WRITE for o in cyc)
            carrier = program.writer if is_write else program.reader
            if port == carrier and kind != OpKind.IDLE:
                return ("write" if kind == OpKind.WRITE else "read"), op
            return "quiet", op
    return "quiet", program.last_op_before(issued)


def _describe(
    program: MarchProgram, contract: Contract, port: int, cycle: int, issued: int, activity: Activity, op: int | None
) -> tuple[MarchStep | None, str]:
    stream = program.stream
    lat = contract.memory.read_latency
    pname = contract.ports[port].name
    step = program.step(op) if op is not None else None
    where = "" if step is None else stream.describe_step(dataclasses.replace(step, expected=None))
    due = "" if lat == 0 else f", data due at cycle {cycle} (read_latency = {lat})"
    if activity == "read":
        return step, f"{where}; the read was issued at cycle {issued} on port {pname}{due}"
    if activity == "write":
        return step, (
            f"{where}; port {pname} wrote at cycle {issued}: its read data in a cycle that writes "
            f"(read_during_write){due}"
        )
    quiet_op = program.cycle_at(issued)[port] if 0 <= issued < program.total_cycles else None
    doing = (
        "read address 0 (a port without an enable reads when the test does not use it)"
        if quiet_op is not None and quiet_op.kind == OpKind.READ
        else "issued no read (idle_read_data)"
    )
    span = program.pause_at(issued)
    if span is not None:
        el = span.pause.element
        text = (
            f"port {pname} {doing} at cycle {issued}, during the pause of element {el} "
            f"{stream.test.elements[el].to_unicode()} ({program.pause_cycles} quiet cycles, "
            f"background {stream.backgrounds[span.pause.background].name}){due}"
        )
    elif issued < 0:
        text = f"port {pname} read data at cycle {cycle}, before the first operation"
    else:
        text = f"port {pname} {doing} at cycle {issued}{due}"
    if step is not None:
        during = program.op_at(issued) == step.index
        text += f"; {'meanwhile' if during else 'the last operation before'}: {where}"
    return step, text


def first_failure(contract: Contract, program: MarchProgram, checked: CheckedTrace) -> MarchFailure | None:
    """The first cycle where read data differs from the contract model or the March expectation.

    ``checked`` holds the model comparison of every cycle of ``program`` (from the simulator, or from
    a Python stand-in in tests)."""
    rows = checked.rows
    if len(rows) != len(program.cycles):
        raise ValueError(f"{len(rows)} compared cycles for a program of {len(program.cycles)}")
    m = contract.memory
    mask = m.word_mask
    lat = m.read_latency
    r = program.reader
    model_first = checked.first_mismatch
    march_first: tuple[int, int, int] | None = None  # (due cycle, diff, read number)
    read_cycles = program.op_cycle[program.read_ops] + lat if len(program.read_ops) else np.zeros(0, np.int64)
    for j in np.flatnonzero(program.read_checked):
        due = int(read_cycles[j])
        if model_first is not None and due > model_first:
            break
        obs = rows[due].observed[r]
        assert obs is not None
        d = mask & ((obs.value ^ program.read_expected[j]) | ~obs.defined)
        if d:
            march_first = (due, d, int(j))
            break
    if model_first is None and march_first is None:
        return None
    cycle = min(x for x in (model_first, None if march_first is None else march_first[0]) if x is not None)
    march_diff = 0
    march_expected = None
    if march_first is not None and march_first[0] == cycle:
        march_diff = march_first[1]
        march_expected = program.read_expected[march_first[2]]
    else:
        issued = cycle - lat
        op = program.op_at(issued)
        if op >= 0 and program.cycle_at(issued)[r].kind == OpKind.READ:
            jr = int(np.searchsorted(program.read_ops, op))
            if jr < len(program.read_ops) and program.read_ops[jr] == op and program.read_checked[jr]:
                march_expected = program.read_expected[jr]
    window = CheckedTrace(checked.start, rows[max(0, cycle - WINDOW + 1) : cycle + 1])
    return _make_failure(contract, program, window, march_expected, march_diff)


def _make_failure(
    contract: Contract, program: MarchProgram, window: CheckedTrace, march_expected: int | None, march_diff: int
) -> MarchFailure:
    """Name the failure at the last row of ``window`` (the first failing cycle). ``march_expected`` is
    the March expectation of the read the reader's data answers there (None: none applies)."""
    row = window.rows[-1]
    cycle = row.cycle
    r = program.reader
    port = r if march_diff or row.diff[r] else next(i for i, d in enumerate(row.diff) if d)
    issued = cycle - contract.memory.read_latency
    activity, op = _activity(program, port, issued)
    if port != r or activity != "read":
        march_expected = None
    step, text = _describe(program, contract, port, cycle, issued, activity, op)
    obs = row.observed[port]
    assert obs is not None
    shown = CheckedTrace(window.start if cycle < WINDOW else "unknown", window.rows[-WINDOW:])
    return MarchFailure(
        cycle,
        contract.ports[port].name,
        issued,
        activity,
        step,
        text,
        march_expected,
        row.expected[port],
        obs,
        march_diff,
        row.diff[port],
        shown,
    )


def failure_from_job(contract: Contract, program: MarchProgram, info: dict[str, Any]) -> MarchFailure | None:
    """The first failure as the simulation's March job reported it (see
    :func:`memcheck.sim.march_job.run_march_job`), named against ``program`` (light or full)."""
    f = info.get("failure")
    if f is None:
        return None
    window = CheckedTrace.from_json(f["window"])
    march = f.get("march")
    return _make_failure(
        contract,
        program,
        window,
        None if march is None else int(march["expected"], 16),
        0 if march is None else int(march["diff"], 16),
    )


# -- the run -------------------------------------------------------------------------------------


@dataclass(frozen=True)
class MarchRunResult:
    """The outcome of one March test on a contract's RTL."""

    verdict: Literal["pass", "fail"]
    contract: Contract
    contract_path: Path | None
    test: MarchTest
    test_name: str
    order: str
    any_order: str
    seed: int | None
    layout: tuple[int, int] | None
    backgrounds: tuple[str, ...]
    writer: str
    reader: str
    pause_cycles: int
    operations: int
    cycles: int
    failure: MarchFailure | None = None
    seconds: float = 0.0
    build_seconds: float = 0.0
    out_dir: Path | None = None
    replay_file: Path | None = None
    waveform_file: Path | None = None
    reproduced: bool | None = None
    notes: tuple[str, ...] = ()
    unconnected_inputs: tuple[str, ...] = ()
    extra: dict[str, object] = field(default_factory=dict)

    @property
    def passed(self) -> bool:
        return self.verdict == "pass"

    @property
    def unchecked(self) -> list[str]:
        return self.contract.unchecked_behaviours()

    @property
    def ports_text(self) -> str:
        return (
            f"port {self.writer}"
            if self.writer == self.reader
            else f"write port {self.writer}, read port {self.reader}"
        )

    def headline(self) -> str:
        m = self.contract.memory
        name = str(self.contract_path) if self.contract_path else "contract"
        order = self.order + (f" (seed {self.seed})" if self.seed is not None else "")
        lay = f", layout {self.layout[0]}x{self.layout[1]}" if self.layout else ""
        return (
            f"{name}: {self.test_name} {self.test.to_unicode()}\n"
            f"{m.words} words x {m.width} bits{lay}, order {order}, backgrounds {', '.join(self.backgrounds)}, "
            f"{self.ports_text}; {self.operations} operations in {self.cycles} cycles"
        )

    def summary(self) -> str:
        """A few lines: what ran, the verdict and the first failing operation."""
        lines = [self.headline()]
        if self.failure is None:
            lines.append("PASS: every read matched the contract model and the March expectation")
        else:
            f = self.failure
            lines.append(f"FAIL at cycle {f.cycle}: {f.description}")
            lines.append(f"failed: {' and '.join(f.failed_checks)}")
        lines.append(f"{self.seconds:.1f} s (build {self.build_seconds:.1f} s)")
        return "\n".join(lines)

    def render(self) -> str:
        """The whole text report."""
        from memcheck.report.text import DISCLAIMER, render_failure

        parts = [self.summary()]
        f = self.failure
        if f is not None:
            parts.append(_value_lines(f, self.contract.memory.width))
            parts.append(render_failure(self.contract, f.window))
            files = []
            if self.replay_file is not None:
                files.append(
                    f"replay file (the run up to cycle {f.cycle}): {self.replay_file}; "
                    f"re-run with: memcheck replay {self.replay_file}"
                )
            if self.waveform_file is not None:
                files.append(f"waveform: {self.waveform_file}")
            if files:
                parts.append("\n".join(files))
        if self.notes:
            parts.append("\n".join(f"note: {n}" for n in self.notes))
        if self.unchecked:
            parts.append(
                "Not checked, because the contract leaves them unknown:\n"
                + "\n".join(f"  - {u}" for u in self.unchecked)
            )
        if self.unconnected_inputs:
            parts.append(
                "Inputs of the top module that the contract does not name were left unconnected: "
                + ", ".join(self.unconnected_inputs)
            )
        parts.append(DISCLAIMER)
        return "\n\n".join(parts)

    def to_json(self) -> dict[str, Any]:
        from memcheck import __version__
        from memcheck.report.text import DISCLAIMER

        m = self.contract.memory
        return {
            "verdict": self.verdict,
            "tool": "memcheck",
            "version": __version__,
            "contract": None if self.contract_path is None else str(self.contract_path),
            "test": {
                "name": self.test_name,
                "notation": self.test.to_unicode(),
                "ascii": self.test.to_ascii(),
                "length": self.test.length,
            },
            "words": m.words,
            "width": m.width,
            "layout": None if self.layout is None else list(self.layout),
            "order": self.order,
            "any_order": self.any_order,
            "seed": self.seed,
            "backgrounds": list(self.backgrounds),
            "write_port": self.writer,
            "read_port": self.reader,
            "pause_cycles": self.pause_cycles,
            "operations": self.operations,
            "cycles": self.cycles,
            "seconds": round(self.seconds, 3),
            "build_seconds": round(self.build_seconds, 3),
            "first_failure": None if self.failure is None else self.failure.to_json(m.width),
            "replay_file": None if self.replay_file is None else str(self.replay_file),
            "waveform": None if self.waveform_file is None else str(self.waveform_file),
            "reproduced_by_replay": self.reproduced,
            "unchecked": self.unchecked,
            "notes": list(self.notes),
            "error": None,
            "note": DISCLAIMER,
        }


def _marks(diff: int, width: int) -> str:
    from memcheck.report.text import binary_known

    # binary_known groups by 8 with spaces; a 'known' pattern of the diff renders 1s where bits differ.
    return binary_known(diff, (1 << width) - 1, width).replace("0", " ").replace("1", "^").rstrip()


def _value_lines(f: MarchFailure, width: int) -> str:
    """Expected and got, in hex and (up to 64 bits) in binary with the differing bits marked."""
    from memcheck.report.text import binary_known, hex_known

    full = (1 << width) - 1
    rows: list[tuple[str, int, int]] = []
    if f.march_expected is not None:
        rows.append(("March expects", f.march_expected, full))
    rows.append(("model expects", f.model_expected.value, f.model_expected.known))
    rows.append(("got", f.got.value, f.got.defined))
    pad = max(len(label) for label, _, _ in rows)
    out = [f"  {label:<{pad}}  {hex_known(v, k, width)}" for label, v, k in rows]
    if width <= 64:
        out.append("")
        out += [f"  {label:<{pad}}  {binary_known(v, k, width)}" for label, v, k in rows]
        out.append(f"  {'differs':<{pad}}  {_marks(f.diff, width)}")
    else:
        bits = [b for b in range(width - 1, -1, -1) if f.diff >> b & 1]
        out.append(f"  differing bits: {', '.join(map(str, bits[:32]))}" + (" ..." if len(bits) > 32 else ""))
    note = None
    if f.failed_checks == ("contract model",):
        note = (
            "The March expectation holds here; the contract model does not."
            if f.march_expected is not None
            else "Only the contract model judges this read data (it does not answer a March read of an "
            "address the test had already written)."
        )
    elif f.failed_checks == ("March expectation",):
        note = "The contract model accepts these bits (it does not promise them); the March expectation does not."
    return "\n".join(out + ([note] if note else []))


def _resolve_contract(contract: Contract | str | Path) -> tuple[Contract, Path | None]:
    if isinstance(contract, Contract):
        return contract, contract.path
    return load_contract(contract), Path(contract)


def prepare(
    contract: Contract, test: MarchTest | str, opts: MarchRunOptions, *, light: bool = False
) -> tuple[MarchProgram, str, int | None]:
    """Check the request and lay the test out as cycles: (program, test name, seed used); ``light``:
    a :func:`plan_light` program (what a run in the simulator's March job needs).

    Everything a user can get wrong (notation, order, backgrounds, layout, ports, budget) is caught
    here, before anything is compiled."""
    t = resolve_test(test) if isinstance(test, str) else test
    m = contract.memory
    writer, reader = choose_ports(contract, opts.port)
    if isinstance(opts.pause_cycles, bool) or not isinstance(opts.pause_cycles, int) or opts.pause_cycles < 0:
        raise MemcheckError(f"pause_cycles = {opts.pause_cycles!r}; allowed: 0 or more quiet cycles per delay.")
    if isinstance(opts.max_ops, bool) or not isinstance(opts.max_ops, int) or opts.max_ops < 1:
        raise MemcheckError(f"max_ops = {opts.max_ops!r}; allowed: 1 or more.")
    seed = opts.seed
    if opts.order == "lfsr" and seed is None:
        seed = random.SystemRandom().randrange(1 << 32)
    stream = expand(
        t,
        m.words,
        m.width,
        layout=opts.layout,
        order=opts.order,
        backgrounds=opts.backgrounds,
        any_order=opts.any_order,
        seed=seed if opts.order == "lfsr" else None,
    )
    try:
        from memcheck.faults.geometry import check_consistent

        check_consistent(t, len(stream.backgrounds))
    except FaultModelError as exc:
        raise NotationError(f"a correct memory fails this test, so it cannot judge RTL: {exc}.") from None
    if stream.total_ops > opts.max_ops:
        raise MemcheckError(
            f"{t.name or 'the test'} is {stream.total_ops} operations here ({t.length} x {m.words} words x "
            f"{len(stream.backgrounds)} backgrounds), more than the limit of {opts.max_ops}; raise it with "
            "--max-ops (a safety limit on run time: RTL simulation runs some 10 to 100 thousand operations a "
            "second) or use fewer backgrounds."
        )
    plan = plan_light if light else plan_cycles
    program = plan(contract, stream, writer, reader, opts.pause_cycles)
    return program, t.name or "custom test", seed if opts.order == "lfsr" else None


def run_march(
    contract: Contract | str | Path,
    test: MarchTest | str,
    options: MarchRunOptions | None = None,
    *,
    on_progress: ProgressCallback | None = None,
    **overrides: Any,
) -> MarchRunResult:
    """Run ``test`` (library name, notation or MarchTest) alone on the contract's RTL under Icarus.

    Returns a :class:`MarchRunResult`: verdict "pass", or "fail" with ``failure`` naming the first
    failing operation. Bad input (notation, algorithm, order, backgrounds, layout, ports, contract,
    RTL that does not compile, a stalled simulation) raises a MemcheckError subclass. Keyword
    ``overrides`` set :class:`MarchRunOptions` fields (``backgrounds="solid", port="a"``).
    """
    from memcheck.sim.api import default_out_dir
    from memcheck.sim.build import build

    try:
        opts = dataclasses.replace(options or MarchRunOptions(), **overrides)
    except TypeError as exc:
        allowed = ", ".join(f.name for f in dataclasses.fields(MarchRunOptions))
        raise MemcheckError(f"unknown option for run_march ({exc}); allowed: {allowed}.") from None
    if opts.sim_job not in SIM_JOBS:
        raise MemcheckError(f"sim_job = {opts.sim_job!r}; allowed: {', '.join(SIM_JOBS)}.")
    t0 = time.perf_counter()
    c, path = _resolve_contract(contract)
    program, name, seed = prepare(c, test, opts, light=opts.sim_job == "march")
    base = default_out_dir(c, path)
    out = Path(opts.out_dir) if opts.out_dir is not None else base / "march"
    cache = (
        Path(opts.build_dir)
        if opts.build_dir is not None
        else (out / "build" if opts.out_dir is not None else base / "build")
    )

    b = build(c, cache)
    build_seconds = time.perf_counter() - t0
    start: ModelStart = "reset" if c.reset is not None else "power-up"
    preamble = ("reset",) if c.reset is not None else ()
    if opts.sim_job == "march":
        failure, extra = _run_march_job(b, c, program, start, seed, out / "run", opts, on_progress)
    else:
        failure, extra = _run_replay_job(b, c, program, start, preamble, seed, out / "run", opts, on_progress)

    replay_path = wave = None
    reproduced = None
    notes: list[str] = []
    if program.pauses:
        notes.append(
            f"each delay element ran as {program.pause_cycles} quiet cycles; RTL simulation has no "
            "charge leakage, so this checks that the contents survive idle cycles, not retention"
        )
    if failure is not None:
        from memcheck.sim.engine import RunOptions
        from memcheck.sim.launch import run_job

        k = failure.cycle
        run_opts = RunOptions(seed=seed or 0)
        if k + 1 <= REPLAY_MAX_CYCLES:
            from memcheck.sim.harness import WAVE_FILE

            # Run the stream up to the failing cycle again (with the waveform when asked): its compared
            # rows are the replay file, and it shows whether the failure reproduces.
            prefix = Trace(tuple(prefix_cycles(c, program, k + 1)))
            desc = f"{name} on RTL up to its first failing cycle ({k})"
            whole = Failure(_PHASE, preamble, CheckedTrace(start, ()), desc, prefix)
            work = out / "replay"
            again = run_job(
                b,
                {"mode": "replay", "options": run_opts.to_json(), "failure": whole.to_json(), "dump": opts.waveform},
                work,
                stall_seconds=opts.stall_seconds + _STALL_PER_CYCLE * (k + 1),
                on_progress=on_progress,
                vcd=opts.waveform,
            )
            assert again.replayed is not None
            if failure.model_diff:
                reproduced = again.replayed.signature() == failure.window.signature()
            recorded = Failure(_PHASE, preamble, again.replayed, desc)
            if path is not None:
                from memcheck.sim.replayfile import ReplayFile, file_digest

                replay_path = ReplayFile(path, recorded, seed or 0, file_digest(path)).write(out / "replay.json")
            if not failure.model_diff:
                notes.append(
                    "the contract model accepts the failing read, so the replay file (which checks the "
                    "contract model) shows no difference there"
                )
            if opts.waveform and (work / WAVE_FILE).is_file():
                wave = out / WAVE_FILE
                with (work / WAVE_FILE).open("rb") as src, open_atomic(wave) as dst:
                    shutil.copyfileobj(src, dst)
        else:
            notes.append(
                f"no replay file{' or waveform' if opts.waveform else ''}: the run up to the failure is "
                f"{k + 1} cycles (more than {REPLAY_MAX_CYCLES}); the report names the failing operation"
            )
    return MarchRunResult(
        verdict="fail" if failure is not None else "pass",
        contract=c,
        contract_path=path,
        test=program.stream.test,
        test_name=name,
        order=opts.order,
        any_order=opts.any_order,
        seed=seed,
        layout=program.stream.layout,
        backgrounds=tuple(bg.name for bg in program.stream.backgrounds),
        writer=c.ports[program.writer].name,
        reader=c.ports[program.reader].name,
        pause_cycles=program.pause_cycles,
        operations=program.operations,
        cycles=program.total_cycles,
        failure=failure,
        seconds=time.perf_counter() - t0,
        build_seconds=build_seconds,
        out_dir=out,
        replay_file=replay_path,
        waveform_file=wave,
        reproduced=reproduced,
        notes=tuple(notes),
        unconnected_inputs=b.pins.unconnected_inputs,
        extra=extra,
    )


def _run_march_job(
    b: Build,
    c: Contract,
    program: MarchProgram,
    start: ModelStart,
    seed: int | None,
    work: Path,
    opts: MarchRunOptions,
    on_progress: ProgressCallback | None,
) -> tuple[MarchFailure | None, dict[str, object]]:
    """The stream runs and is checked inside the simulator, batch by batch; only counts and the first
    failure come back."""
    import pickle

    from memcheck.sim.engine import RunOptions
    from memcheck.sim.launch import run_job

    work.mkdir(parents=True, exist_ok=True)
    stream_file = work / "stream.pickle"
    with open_atomic(stream_file) as fh:
        pickle.dump(program.stream, fh)
    spec = {
        "stream_pickle": str(stream_file.resolve()),
        "writer": program.writer,
        "reader": program.reader,
        "pause_cycles": program.pause_cycles,
        "start": start,
        "window": WINDOW,
    }
    stall = opts.stall_seconds + _STALL_PER_BATCH
    res = run_job(
        b,
        {"mode": "march", "options": RunOptions(seed=seed or 0).to_json(), "march": spec},
        work,
        stall_seconds=stall,
        on_progress=on_progress,
    )
    info = dict(res.extra.get("march", {}))
    extra = {k: v for k, v in res.extra.items() if k != "march"}
    extra.update({k: v for k, v in info.items() if k != "failure"})
    return failure_from_job(c, program, info), extra


def _run_replay_job(
    b: Build,
    c: Contract,
    program: MarchProgram,
    start: ModelStart,
    preamble: tuple[str, ...],
    seed: int | None,
    work: Path,
    opts: MarchRunOptions,
    on_progress: ProgressCallback | None,
) -> tuple[MarchFailure | None, dict[str, object]]:
    """The earlier way (``sim_job="replay"``): the replay job runs the whole program and sends every
    cycle's comparison back (about 3 KB per operation in each process); kept for comparison."""
    from memcheck.sim.engine import RunOptions
    from memcheck.sim.launch import run_job

    stall = opts.stall_seconds + _STALL_PER_CYCLE * len(program.cycles)
    whole = Failure(_PHASE, preamble, CheckedTrace(start, ()), "March run", Trace(program.cycles))
    res = run_job(
        b,
        {"mode": "replay", "options": RunOptions(seed=seed or 0).to_json(), "failure": whole.to_json(), "dump": False},
        work,
        stall_seconds=stall,
        on_progress=on_progress,
    )
    assert res.replayed is not None
    return first_failure(c, program, res.replayed), dict(res.extra)


def prefix_cycles(contract: Contract, program: MarchProgram, count: int) -> list[Cycle]:
    """The first ``count`` cycles of ``program``'s run (built chunk by chunk, for a light program too)."""
    if not program.light:
        return list(program.cycles[:count])
    from memcheck.sim.march_job import MarchJob, march_pieces

    job = MarchJob(program.writer, program.reader, program.pause_cycles, "power-up")
    parts: list[Cycle] = []
    written = np.zeros(contract.memory.words, dtype=bool)
    for cols, _, _, _ in march_pieces(contract, program.stream, job, written):
        parts.extend(cols[: count - len(parts)].to_cycles())
        if len(parts) >= count:
            break
    return parts


def check_program(
    contract: Contract,
    program: MarchProgram,
    observed: Sequence[tuple[Observed | None, ...]],
) -> MarchFailure | None:
    """:func:`first_failure` for observations from anywhere (a Python stand-in of the RTL, a log):
    runs the model over the program from power-up, or right after reset, and compares."""
    start: ModelStart = "reset" if contract.reset is not None else "power-up"
    expected = start_model(contract, start).run(program.cycles)
    return first_failure(contract, program, compare(expected, observed, program.cycles, start))
