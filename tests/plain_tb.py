"""A plain Verilog testbench for one trace: an independent way to run RTL, without memcheck's harness.

Used by the example tests (``tests/test_examples_plain.py``) to check the new example wrappers
against :class:`memcheck.model.Model` before (and independently of) the simulator harness, and by
``bench/bench_realmem.py`` as the plain-testbench baseline. It writes one ``initial`` block of
timed pin assignments and ``$fdisplay`` samples, compiled and run with Icarus (``iverilog``,
``vvp``) as subprocesses:

* each ``[[clock]]`` toggles with its period and phase (rising edges at ``OFFSET + phase + k *
  period``, so nothing happens at time 0);
* a port's pins for its cycle ending at an edge are applied ``DRIVE`` after its previous edge (at
  time 0 for its first edge); the power pins of tick k are applied ``DRIVE`` after tick k-1;
* read data is sampled ``[timing] sample`` after the port's previous edge, or ``JUST_BEFORE``
  its closing edge;
* ``[rtl] tie`` pins are held from time 0. Contracts with a ``[reset]`` table are not handled.
"""

from __future__ import annotations

import subprocess
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from pathlib import Path

from memcheck.contract import Contract, PortSpec, timeline
from memcheck.model import Model
from memcheck.ops import Expected, OpKind, PortOp, Power, Trace

OFFSET = Fraction(100)  # ns before the first rising edge of any clock
DRIVE = Fraction(1, 10)  # ns after an edge at which the next cycle's pins change
JUST_BEFORE = Fraction(1, 100)  # ns before a closing edge at which the default sample is taken
_PS = 1000


@dataclass(frozen=True)
class Sample:
    """One port's read data as the testbench saw it: value bits and the bits that were 0 or 1."""

    tick: int
    port: int
    value: int
    defined: int


@dataclass(frozen=True)
class Mismatch:
    tick: int
    port: str
    expected: Expected
    value: int
    defined: int


def _ps(t: Fraction) -> int:
    ps = t * _PS
    if ps.denominator != 1:
        raise ValueError(f"time {t} ns is not a whole number of ps")
    return int(ps)


def _widths(c: Contract, override: Mapping[str, int]) -> dict[str, int]:
    m = c.memory
    out: dict[str, int] = {}
    for p in c.ports:
        out.update({p.clock: 1, p.address: m.address_bits})
        for pin in (p.enable, p.write_enable):
            if pin is not None:
                out[pin] = 1
        for pin in (p.write_data, p.read_data):
            if pin is not None:
                out[pin] = m.width
        if p.lane_enable is not None:
            out[p.lane_enable] = m.width if m.bit_mask else m.lanes
    if c.power is not None:
        out.update({pin: 1 for pin in c.power.pins().values()})
    out.update(override)
    return out


def _assert(p: PortSpec, pin: str | None, on: bool) -> str | None:
    if pin is None:
        return None
    return f"{pin} = 1'b{int(on != (pin in p.active_low))};"


def port_pins(c: Contract, p: PortSpec, op: PortOp) -> list[str]:
    """The assignments that put ``op`` on port ``p``'s pins (memcheck's pin convention, written anew)."""
    m = c.memory
    out = [_assert(p, p.enable, op.kind != OpKind.IDLE), _assert(p, p.write_enable, op.kind == OpKind.WRITE)]
    out.append(f"{p.address} = {op.address};")
    if p.write_data is not None:
        out.append(f"{p.write_data} = {m.width}'h{op.data:x};")
    if p.lane_enable is not None:
        n = m.width if m.bit_mask else m.lanes
        value = ((1 << n) - 1 if op.lanes is None else op.lanes) if op.kind == OpKind.WRITE else 0
        if p.lane_enable in p.active_low:
            value ^= (1 << n) - 1
        out.append(f"{p.lane_enable} = {n}'h{value:x};")
    return [s for s in out if s is not None]


def _power_pins(c: Contract, state: Power) -> list[str]:
    pw = c.power
    if pw is None:
        return []
    asserted = {"sleep": state == Power.SLEEP, "shutdown": state == Power.SHUTDOWN}
    return [f"{pin} = 1'b{int(asserted[role] != (pin in pw.active_low))};" for role, pin in pw.pins().items()]


def testbench(c: Contract, trace: Trace, widths: Mapping[str, int] = {}) -> str:
    """The Verilog text of a testbench that runs ``trace`` on the contract's top and logs samples."""
    if c.rtl is None or c.reset is not None:
        raise ValueError("the plain testbench needs [rtl] and no [reset]")
    w = _widths(c, widths)
    ticks = timeline(c.port_clocks, count=len(trace))
    events: list[tuple[int, int, str]] = []  # (time ps, order, statement)
    last: dict[str, Fraction] = {}
    for k, tick in enumerate(ticks):
        now = OFFSET + tick.time
        prev_tick = OFFSET + ticks[k - 1].time + DRIVE if k else Fraction(0)
        events += [(_ps(prev_tick), 0, s) for s in _power_pins(c, trace.power_at(k))]
        for i, p in enumerate(c.ports):
            if p.clock not in tick.clocks:
                continue
            began = last.get(p.clock)
            drive = began + DRIVE if began is not None else Fraction(0)
            events += [(_ps(drive), 0, s) for s in port_pins(c, p, trace.cycles[k][i])]
            if p.read_data is not None:
                sample = c.timing.sample
                at = now - JUST_BEFORE if sample is None or began is None else began + Fraction(repr(sample))
                events.append((_ps(at), 1, f'$fdisplay(f, "S {k} {i} %b", {p.read_data});'))
        for name in tick.clocks:
            last[name] = now
    events.sort(key=lambda e: (e[0], e[1]))
    body: list[str] = []
    t = 0
    for when, _, stmt in events:
        if when > t:
            body.append(f"#{when - t};")
            t = when
        body.append(stmt)
    ties = [f"{pin} = {value};" for pin, value in (c.rtl.tie or {}).items()]
    decl = [f"reg [{w.get(pin, 1) - 1}:0] {pin};" for pin in _inputs(c)]
    decl += [f"wire [{w[p.read_data]} - 1:0] {p.read_data};" for p in c.ports if p.read_data is not None]
    clocks = [_clock_block(c, name) for name in c.clock_names]
    conns = ", ".join(f".{pin}({pin})" for pin in [*_inputs(c), *(p.read_data for p in c.ports if p.read_data)])
    end = _ps(OFFSET + ticks[-1].time) + _PS
    return "\n".join(
        [
            "`timescale 1ps/1ps",
            "module plain_tb;",
            *decl,
            "integer f;",
            f"{c.rtl.top} dut ({conns});",
            *clocks,
            "initial begin",
            'f = $fopen("samples.txt", "w");',
            *ties,
            *body,
            f"#{end - t};",
            "$fclose(f);",
            "$finish;",
            "end",
            "endmodule",
            "",
        ]
    )


def _inputs(c: Contract) -> list[str]:
    pins: list[str] = []
    for p in c.ports:
        pins += [v for k, v in p.pins().items() if k != "read_data"]
    if c.power is not None:
        pins += list(c.power.pins().values())
    if c.rtl is not None and c.rtl.tie:
        pins += list(c.rtl.tie)
    return list(dict.fromkeys(pins))


def _clock_block(c: Contract, name: str) -> str:
    spec = c.clock_spec(name)
    period = _ps(spec.period_ns)
    high = period // 2
    first = _ps(OFFSET + spec.phase_ns)
    toggle = f"{name} = 1'b1; #{high}; {name} = 1'b0; #{period - high};"
    return f"initial begin {name} = 1'b0; #{first}; forever begin {toggle} end end"


def run(c: Contract, trace: Trace, work: Path, widths: Mapping[str, int] = {}) -> list[Sample]:
    """Compile and run the testbench of ``trace`` in ``work``; return every sample, in tick order."""
    if c.rtl is None or c.path is None:
        raise ValueError("the plain testbench needs a contract loaded from a file")
    work.mkdir(parents=True, exist_ok=True)
    (work / "plain_tb.v").write_text(testbench(c, trace, widths))
    scale = c.timing.timescale.replace(" ", "")
    folder = c.path.parent
    cmd = [f"+timescale+{scale}", *(str(folder / s) for s in c.rtl.sources)]
    (work / "files.f").write_text("\n".join(cmd) + "\n")
    subprocess.run(
        ["iverilog", "-g2012", "-o", "plain.vvp", "-s", "plain_tb", "-c", "files.f", "plain_tb.v"],
        cwd=work,
        check=True,
        capture_output=True,
    )
    subprocess.run(["vvp", "-n", "plain.vvp"], cwd=work, check=True, capture_output=True)
    return [_parse(line) for line in (work / "samples.txt").read_text().splitlines() if line.startswith("S ")]


def _parse(line: str) -> Sample:
    _, k, i, bits = line.split()
    value = int("".join("1" if b == "1" else "0" for b in bits), 2)
    defined = int("".join("1" if b in "01" else "0" for b in bits), 2)
    return Sample(int(k), int(i), value, defined)


def compare(c: Contract, trace: Trace, samples: Sequence[Sample]) -> list[Mismatch]:
    """Every sample whose promised bits differ from :class:`memcheck.model.Model`'s expectation."""
    model = Model(c)
    expected = model.run(trace.cycles, trace.power)
    out: list[Mismatch] = []
    for s in samples:
        e = expected[s.tick][s.port]
        if e.mismatch(s.value, s.defined):
            out.append(Mismatch(s.tick, c.ports[s.port].name, e, s.value, s.defined))
    return out


def check(c: Contract, trace: Trace, work: Path, widths: Mapping[str, int] = {}) -> list[Mismatch]:
    """Run ``trace`` in the plain testbench and compare it with the model."""
    return compare(c, trace, run(c, trace, work, widths))
