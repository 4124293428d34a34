"""Attach a BIST engine to a user's wrapper: an adapter module from a contract port, and the Verilog
that puts engine, adapter and wrapper together in a testbench.

The adapter ``<engine>_adapter`` has the engine's memory side (``mem_en mem_we mem_addr mem_wdata``
in, ``mem_rdata`` out) and the contract port's own pins, under their own names and polarities
(``active_low`` pins inverted), with every lane enabled on writes. The engine's ``READ_LATENCY``
comes from the contract's ``read_latency``. Only a port that both reads and writes can carry a
March test alone.
"""

from __future__ import annotations

from memcheck.bist.microcode import EnginePlan
from memcheck.contract import Contract, PortSpec
from memcheck.errors import BistError

ENGINE_SIDE = ("mem_en", "mem_we", "mem_addr", "mem_wdata", "mem_rdata")


def choose_port(contract: Contract, name: str | None) -> PortSpec:
    """The named port, or the first readwrite port; BistError unless it reads and writes."""
    if name is None:
        for p in contract.ports:
            if p.role == "readwrite":
                return p
        raise BistError(
            f"{contract.path or 'the contract'} has no readwrite port; a BIST engine drives one port that both "
            f"writes and reads (ports: {', '.join(f'{p.name} ({p.role})' for p in contract.ports)})"
        )
    try:
        port = contract.port(name)
    except KeyError:
        raise BistError(
            f"{contract.path or 'the contract'} has no port {name!r}; its ports are "
            f"{', '.join(p.name for p in contract.ports)}"
        ) from None
    if port.role != "readwrite" or (port.write_enable is None and port.lane_enable is None) or port.read_data is None:
        raise BistError(
            f"port {name!r} is a {port.role} port; the BIST engine needs a port that both reads and writes "
            "(role = readwrite, with write_enable and read_data pins)"
        )
    return port


def _pin_widths(contract: Contract, port: PortSpec) -> dict[str, tuple[str, int]]:
    """Pin role -> (pin name, width) of the port's pins the adapter drives or reads."""
    m = contract.memory
    out: dict[str, tuple[str, int]] = {}
    widths = {
        "enable": 1,
        "write_enable": 1,
        "address": m.address_bits,
        "write_data": m.width,
        "lane_enable": m.lanes,
        "read_data": m.width,
    }
    for role, pin in port.pins().items():
        if role != "clock":
            out[role] = (pin, widths[role])
    clash = sorted({pin for pin, _ in out.values()} & set(ENGINE_SIDE))
    if clash:
        raise BistError(f"port {port.name!r} uses pin names {', '.join(clash)}, which the engine side needs")
    return out


def check_plan_fits(plan: EnginePlan, contract: Contract) -> None:
    m = contract.memory
    if (plan.words, plan.width) != (m.words, m.width):
        raise BistError(
            f"the engine is for {plan.words} x {plan.width} but the contract's memory is {m.words} x {m.width}"
        )
    if plan.read_latency != m.read_latency:
        raise BistError(
            f"the engine's READ_LATENCY is {plan.read_latency} but the contract says read_latency = {m.read_latency}"
        )


def _decl(width: int) -> str:
    return f"[{width - 1}:0] " if width > 1 else ""


def adapter_verilog(plan: EnginePlan, contract: Contract, port: PortSpec) -> str:
    """The adapter module ``<plan.module>_adapter`` for ``port`` (see module docstring)."""
    check_plan_fits(plan, contract)
    pins = _pin_widths(contract, port)
    aw, w = plan.addrgen.addr_bits, plan.width
    low = port.active_low
    ports = [
        "    input  wire mem_en,",
        "    input  wire mem_we,",
        f"    input  wire {_decl(aw)}mem_addr,",
        f"    input  wire {_decl(w)}mem_wdata,",
        f"    output wire {_decl(w)}mem_rdata,",
    ]
    body: list[str] = []
    drive = {"enable": "mem_en", "write_enable": "mem_we", "address": "mem_addr", "write_data": "mem_wdata"}
    for role, (pin, width) in pins.items():
        if role == "read_data":
            ports.append(f"    input  wire {_decl(width)}{pin},")
            body.append(f"    assign mem_rdata = {pin};")
            continue
        ports.append(f"    output wire {_decl(width)}{pin},")
        if role == "lane_enable" and port.write_enable is None:
            # any-lane writes: a write enables every lane, a read none (docs/contract.md)
            value = f"{{{width}{{{'~' if pin in low else ''}mem_we}}}}"
        elif role == "lane_enable":
            value = f"{{{width}{{1'b{0 if pin in low else 1}}}}}"
        else:
            value = ("~" if pin in low else "") + drive[role]
        body.append(f"    assign {pin} = {value};  // {role}{' (active low)' if pin in low else ''}")
    ports[-1] = ports[-1].rstrip(",")
    unused = []
    if "enable" not in pins:
        unused = [
            "    // this port has no enable pin: an idle cycle reads address 0 (write enable stays inactive)",
            "    /* verilator lint_off UNUSEDSIGNAL */",
            "    wire unused_mem_en = mem_en;",
            "    /* verilator lint_on UNUSEDSIGNAL */",
        ]
    m = contract.memory
    return "\n".join(
        [
            f"// {plan.module}_adapter: connects {plan.module} to port {port.name!r} of {contract.path or 'a contract'}"
            f" ({m.words} x {m.width}, read_latency {m.read_latency}); generated by memcheck.",
            f"// Instantiate {plan.module} with READ_LATENCY = {m.read_latency}; connect the pins below to the"
            " wrapper.",
            # the contract's timescale: RTL files compiled after this one without their own directive keep it
            f"`timescale {contract.timing.timescale}",
            f"module {plan.module}_adapter (",
            *ports,
            ");",
            *body,
            *unused,
            "endmodule",
            "",
        ]
    )


def _value(v: int | str) -> str:
    return f'"{v}"' if isinstance(v, str) else str(v)


def _held_pins(contract: Contract) -> dict[str, str]:
    """Pins held for the whole run: ``[rtl] tie`` values, and power pins deasserted (memory awake)."""
    held = {pin: str(value) for pin, value in (contract.rtl.tie.items() if contract.rtl is not None else ())}
    if contract.power is not None:
        for pin in contract.power.pins().values():
            held[pin] = f"1'b{1 if pin in contract.power.active_low else 0}"
    return held


def half_period_ns(contract: Contract, port: PortSpec) -> str:
    """Half the period of ``port``'s clock in ns, as a Verilog delay (the testbench clock)."""
    return f"{contract.clock_spec(port.clock).period / 2:g}"


def wrapper_unit(plan: EnginePlan, contract: Contract, port: PortSpec, unit: str) -> str:
    """Testbench text for the memory side of ``unit``: the adapter and the wrapper (other ports idle)."""
    if contract.rtl is None:
        raise BistError(f"{contract.path or 'the contract'} names no RTL ([rtl] sources and top)")
    pins = _pin_widths(contract, port)
    lines = []
    conns = [f".mem_{s}({unit}_{s})" for s in ("en", "we", "addr", "wdata", "rdata")]
    dut: dict[str, str] = {}
    for _role, (pin, width) in pins.items():
        lines.append(f"    wire {_decl(width)}{unit}_p_{pin};")
        conns.append(f".{pin}({unit}_p_{pin})")
        dut[pin] = f"{unit}_p_{pin}"
    lines.append(f"    {plan.module}_adapter {unit}_adapter ({', '.join(conns)});")
    for other in contract.ports:
        dut[other.clock] = "clk"
        if other is port:
            continue
        for role, (pin, width) in _pin_widths(contract, other).items():
            if role == "read_data":
                dut[pin] = ""
            else:
                inactive = role in ("enable", "write_enable", "lane_enable") and pin in other.active_low
                dut[pin] = f"{{{width}{{1'b{1 if inactive else 0}}}}}"
    dut.update(_held_pins(contract))
    if contract.reset is not None:
        r = contract.reset
        lines.append(f"    reg {unit}_reset;")
        lines.append(
            f"    initial begin {unit}_reset = 1'b{0 if r.active_low else 1}; repeat ({r.cycles}) @(negedge clk); "
            f"{unit}_reset = 1'b{1 if r.active_low else 0}; end"
        )
        dut[r.signal] = f"{unit}_reset"
    params = ", ".join(f".{k}({_value(v)})" for k, v in contract.rtl.parameters.items())
    conn = ", ".join(f".{pin}({sig})" for pin, sig in dut.items())
    lines.append(f"    {contract.rtl.top} {'#(' + params + ') ' if params else ''}{unit}_dut ({conn});")
    return "\n".join(lines)
