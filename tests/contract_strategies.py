"""Hypothesis strategies for random valid contracts (test helpers, not public API)."""

from __future__ import annotations

from typing import Any

from hypothesis import strategies as st

from memcheck.contract import Contract, contract_from_dict


@st.composite
def contract_dicts(draw: st.DrawFn, *, max_words: int = 40, max_width: int = 70, max_ports: int = 3) -> dict[str, Any]:
    width = draw(st.integers(1, max_width))
    words = draw(st.integers(1, max_words))
    memory: dict[str, Any] = {"words": words, "width": width}
    mask = draw(st.sampled_from(["none", "lanes", "bits"]))
    if mask == "lanes":
        memory["lane_width"] = draw(st.sampled_from([d for d in range(1, width + 1) if width % d == 0]))
    elif mask == "bits":
        memory["bit_mask"] = True
    memory["read_latency"] = draw(st.integers(0, 4))
    for key, choices in (
        ("read_during_write", ["old", "new", "keep", "unknown"]),
        ("collision", ["old", "new", "unknown"]),
        ("write_collision", ["unknown", "first"]),
        ("initial", ["unknown", "zero"]),
        ("idle_read_data", ["keep", "unknown"]),
    ):
        memory[key] = draw(st.sampled_from(choices))
    ports = []
    for i in range(draw(st.integers(1, max_ports))):
        role = draw(st.sampled_from(["readwrite", "read", "write"]))
        p: dict[str, Any] = {"name": f"p{i}", "role": role, "clock": "clk", "address": f"addr{i}"}
        if role == "write" or draw(st.booleans()):
            p["enable"] = f"en{i}"
        if role == "readwrite":
            p["write_enable"] = f"we{i}"
        if role != "read":
            p["write_data"] = f"wd{i}"
            if mask != "none":
                p["lane_enable"] = f"be{i}"
        if role != "write":
            p["read_data"] = f"rd{i}"
        ports.append(p)
    doc: dict[str, Any] = {"memory": memory, "rtl": {"sources": ["x.v"], "top": "t"}, "port": ports}
    if draw(st.booleans()):
        doc["reset"] = {"signal": "rst_n"}
    return doc


def contracts(**kw: Any) -> st.SearchStrategy[Contract]:
    return contract_dicts(**kw).map(lambda d: contract_from_dict(d))
