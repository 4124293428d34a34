"""Hypothesis strategies for random valid contracts (test helpers, not public API)."""

from __future__ import annotations

from typing import Any

from hypothesis import strategies as st

from memcheck.contract import Contract, contract_from_dict


@st.composite
def lane_split(draw: st.DrawFn, width: int) -> list[int]:
    """Uneven lane widths (LSB first) that add up to ``width``."""
    lanes: list[int] = []
    left = width
    while left:
        size = draw(st.integers(1, min(left, 9)))
        lanes.append(size)
        left -= size
    return lanes


@st.composite
def _memory(draw: st.DrawFn, max_words: int, max_width: int, new_keys: bool) -> dict[str, Any]:
    width = draw(st.integers(1, max_width))
    words = draw(st.integers(1, max_words))
    memory: dict[str, Any] = {"words": words, "width": width}
    mask = draw(st.sampled_from(["none", "lanes", "bits", "map"] if new_keys else ["none", "lanes", "bits"]))
    if mask == "lanes":
        memory["lane_width"] = draw(st.sampled_from([d for d in range(1, width + 1) if width % d == 0]))
    elif mask == "bits":
        memory["bit_mask"] = True
    elif mask == "map":
        memory["lanes"] = draw(lane_split(width))
    memory["read_latency"] = draw(st.integers(0, 4))
    for key, choices in (
        ("read_during_write", ["old", "new", "keep", "unknown"]),
        ("collision", ["old", "new", "unknown"]),
        ("write_collision", ["unknown", "first"]),
        ("initial", ["unknown", "zero"]),
        ("idle_read_data", ["keep", "unknown"]),
    ):
        memory[key] = draw(st.sampled_from(choices))
    if new_keys:
        power_of_two = words & (words - 1) == 0
        memory["out_of_range"] = draw(
            st.sampled_from(["unchecked", "ignore", "wrap"] if power_of_two else ["unchecked", "ignore"])
        )
    return memory


@st.composite
def contract_dicts(
    draw: st.DrawFn,
    *,
    max_words: int = 40,
    max_width: int = 70,
    max_ports: int = 3,
    clocks: bool = False,
    power: bool = False,
    new_keys: bool = False,
) -> dict[str, Any]:
    """A contract document. ``new_keys`` adds lane maps, any-lane writes and out_of_range; ``clocks``
    lets ports use two clocks with their own periods and phases (and a collision window);
    ``power`` adds sleep and shutdown pins."""
    memory = draw(_memory(max_words, max_width, new_keys))
    has_mask = any(k in memory for k in ("lane_width", "bit_mask", "lanes"))
    ports = []
    for i in range(draw(st.integers(1, max_ports))):
        role = draw(st.sampled_from(["readwrite", "read", "write"]))
        clock = draw(st.sampled_from(["clk", "clk2"])) if clocks else "clk"
        p: dict[str, Any] = {"name": f"p{i}", "role": role, "clock": clock, "address": f"addr{i}"}
        if role == "write" or draw(st.booleans()):
            p["enable"] = f"en{i}"
        if role == "readwrite" and not (new_keys and has_mask and draw(st.booleans())):
            p["write_enable"] = f"we{i}"
        if role != "read":
            p["write_data"] = f"wd{i}"
            if has_mask:
                p["lane_enable"] = f"be{i}"
        if role != "write":
            p["read_data"] = f"rd{i}"
        ports.append(p)
    doc: dict[str, Any] = {"memory": memory, "rtl": {"sources": ["x.v"], "top": "t"}, "port": ports}
    if draw(st.booleans()):
        doc["reset"] = {"signal": "rst_n"}
    if clocks:
        doc["clock"] = draw(_clock_tables(sorted({p["clock"] for p in ports})))
        shortest = min([c["period"] for c in doc["clock"]] + [10.0])
        memory["collision_window"] = draw(st.sampled_from([w for w in (0.0, 1.0, 1.5, 2.0) if w <= shortest]))
    if power:
        doc["power"] = draw(_power_table())
    return doc


@st.composite
def _clock_tables(draw: st.DrawFn, names: list[str]) -> list[dict[str, Any]]:
    out = []
    for name in names:
        if draw(st.integers(0, 4)):  # mostly a table; sometimes the default 10 ns clock
            period = draw(st.sampled_from([2.0, 2.5, 3.0, 4.0, 5.0]))
            phase = draw(st.sampled_from([x for x in (0.0, 0.5, 1.0, 1.5) if x < period]))
            out.append({"name": name, "period": period, "phase": phase})
    return out


@st.composite
def _power_table(draw: st.DrawFn) -> dict[str, Any]:
    pins = draw(st.sampled_from([("slp",), ("sd",), ("slp", "sd")]))
    tbl: dict[str, Any] = {}
    if "slp" in pins:
        tbl["sleep"] = "slp"
    if "sd" in pins:
        tbl["shutdown"] = "sd"
    tbl["active_low"] = draw(st.lists(st.sampled_from(pins), unique=True))
    tbl["wake_cycles"] = draw(st.integers(0, 3))
    tbl["sleep_read_data"] = draw(st.sampled_from(["unknown", "zero", "keep"]))
    tbl["effect"] = draw(st.sampled_from(["edge", "immediate"]))
    return tbl


def contracts(**kw: Any) -> st.SearchStrategy[Contract]:
    return contract_dicts(**kw).map(lambda d: contract_from_dict(d))
