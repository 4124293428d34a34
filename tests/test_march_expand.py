"""Expansion of March tests into operation streams: exact counts, orders, hand-checked streams and a
fault-free memory replay."""

from __future__ import annotations

from typing import Any

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.errors import BudgetError, NotationError, UnknownAlgorithm, UsageError
from memcheck.march import (
    ALGORITHMS,
    OP_READ,
    OP_WRITE,
    ORDER_KINDS,
    AddressOrder,
    MarchAlgorithm,
    MarchElement,
    MarchOp,
    MarchStep,
    MarchTest,
    Pause,
    expand,
    limbs_to_int,
    parse_march,
)
from memcheck.ops import OpKind, PortOp

from .test_march_notation import march_tests


def _ops(stream_steps: list[MarchStep | Pause]) -> list[str]:
    out = []
    for s in stream_steps:
        if isinstance(s, Pause):
            out.append("pause")
        elif s.op.kind == OpKind.WRITE:
            out.append(f"w{s.op.data:x}@{s.op.address}")
        else:
            out.append(f"r{s.expected:x}@{s.op.address}")
    return out


def test_mats_plus_on_four_words_hand_checked() -> None:
    # MATS+ {⇕(w0); ⇑(r0,w1); ⇓(r1,w0)} (Abadir and Reghbati 1983; value written from memory,
    # table/page not checked), 1-bit words, worked out by hand: 5n = 20 operations.
    got = _ops(list(expand("MATS+", 4, 1).steps()))
    assert got == [
        "w0@0",
        "w0@1",
        "w0@2",
        "w0@3",
        "r0@0",
        "w1@0",
        "r0@1",
        "w1@1",
        "r0@2",
        "w1@2",
        "r0@3",
        "w1@3",
        "r1@3",
        "w0@3",
        "r1@2",
        "w0@2",
        "r1@1",
        "w0@1",
        "r1@0",
        "w0@0",
    ]


def test_march_c_minus_on_four_words_hand_checked() -> None:
    # March C- (van de Goor 1993; value written from memory, table/page not checked) on a 4-word x
    # 8-bit memory with the solid background: 10n = 40 operations, worked out by hand.
    got = _ops(list(expand("March C-", 4, 8).steps()))
    assert got == [
        "w0@0",
        "w0@1",
        "w0@2",
        "w0@3",
        "r0@0",
        "wff@0",
        "r0@1",
        "wff@1",
        "r0@2",
        "wff@2",
        "r0@3",
        "wff@3",
        "rff@0",
        "w0@0",
        "rff@1",
        "w0@1",
        "rff@2",
        "w0@2",
        "rff@3",
        "w0@3",
        "r0@3",
        "wff@3",
        "r0@2",
        "wff@2",
        "r0@1",
        "wff@1",
        "r0@0",
        "wff@0",
        "rff@3",
        "w0@3",
        "rff@2",
        "w0@2",
        "rff@1",
        "w0@1",
        "rff@0",
        "w0@0",
        "r0@0",
        "r0@1",
        "r0@2",
        "r0@3",
    ]


def test_march_c_minus_with_a_background_uses_it_and_its_complement() -> None:
    s = expand("March C-", 4, 8, backgrounds="0x5a")
    steps = [x for x in s.steps() if isinstance(x, MarchStep)]
    assert steps[4].expected == 0x5A and steps[5].op == PortOp(OpKind.WRITE, 0, 0xA5)


def _reference(
    test: MarchTest, words: int, width: int, order: AddressOrder, bg_words: list[list[int]], any_order: str
) -> list[tuple[int, int, int, int, int, int, int]]:
    """Plain nested loops: (op, address, data, expected, element, step, background) per operation."""
    mask = (1 << width) - 1
    out: list[tuple[int, int, int, int, int, int, int]] = []
    up = order.up().tolist()
    for b, values in enumerate(bg_words):
        for e, el in enumerate(test.elements):
            if not isinstance(el, MarchElement):
                continue
            walk = el.order if el.order != "any" else any_order
            for a in up if walk == "up" else up[::-1]:
                for k, op in enumerate(el.ops):
                    v = values[a] ^ (mask if op.value else 0)
                    if op.kind == "w":
                        out.append((OP_WRITE, a, v, 0, e, k, b))
                    else:
                        out.append((OP_READ, a, 0, v, e, k, b))
    return out


@settings(max_examples=40, deadline=None)
@given(
    march_tests,
    st.integers(1, 40),
    st.sampled_from([1, 7, 64, 65, 130]),
    st.sampled_from(ORDER_KINDS),
    st.sampled_from(["solid", "checkerboard", "row-stripe,col-stripe", "standard", "0x1"]),
    st.sampled_from(["up", "down"]),
    st.integers(1, 50),
    st.integers(0, 99),
)
def test_stream_equals_plain_loop_reference(
    test: MarchTest, words: int, width: int, order: str, bgs: str, any_order: str, chunk_ops: int, seed: int
) -> None:
    cols = next(c for c in (4, 2, 1) if words % c == 0)
    layout = (words // cols, cols)
    s = expand(
        test,
        words,
        width,
        layout=layout,
        order=order,
        backgrounds=bgs,
        any_order=any_order,
        seed=seed,
        chunk_ops=chunk_ops,
    )
    assert s.total_ops == test.length * words * len(s.backgrounds)
    arr = s.collect()
    assert len(arr) == s.total_ops
    bg_words = [[bg.value_at(a, width, layout) for a in range(words)] for bg in s.backgrounds]
    ref = _reference(test, words, width, s.order, bg_words, any_order)
    got = list(
        zip(
            arr.op.tolist(),
            arr.address.tolist(),
            [limbs_to_int(r) for r in arr.data],
            [limbs_to_int(r) for r in arr.expected],
            arr.element.tolist(),
            arr.step.tolist(),
            arr.background.tolist(),
            strict=True,
        )
    )
    assert got == ref
    # chunks are contiguous and never cross elements or backgrounds
    pos = 0
    for item in s:
        if isinstance(item, Pause):
            assert item.at == pos
            continue
        assert item.start == pos and len(item) >= 1
        pos += len(item)
    assert pos == s.total_ops


@pytest.mark.parametrize("alg", ALGORITHMS, ids=lambda a: a.name)
@pytest.mark.parametrize("order", ["linear", "lfsr", "row-fast"])
def test_fault_free_memory_replay(alg: MarchAlgorithm, order: str) -> None:
    """Replaying every library stream on a fault-free memory: each read returns exactly the expected
    word, each element touches each address exactly once, and the count is length x words x backgrounds."""
    words, width = 24, 70
    s = expand(alg.test, words, width, layout=(6, 4), order=order, backgrounds="standard,checkerboard", seed=3)
    assert s.total_ops == alg.length * words * len(s.backgrounds)
    memory: dict[int, int] = {}
    touched: dict[tuple[int, int], list[int]] = {}
    n = 0
    for step in s.steps():
        if isinstance(step, Pause):
            continue
        n += 1
        if step.step == 0:
            touched.setdefault((step.background, step.element), []).append(step.op.address)
        if step.op.kind == OpKind.WRITE:
            memory[step.op.address] = step.op.data
        else:
            assert memory[step.op.address] == step.expected, s.describe_step(step, memory[step.op.address])
    assert n == s.total_ops
    for addrs in touched.values():
        assert sorted(addrs) == list(range(words))


def test_chunks_stay_small_and_counts_exact_for_a_large_memory() -> None:
    s = expand("March SS", 1 << 16, 32, backgrounds="standard", chunk_ops=4096)
    total = 0
    for c in s.chunks():
        assert len(c) <= 4096
        assert c.data.shape == (len(c), 1) and c.data.dtype == np.uint64
        total += len(c)
    assert total == s.total_ops == 22 * (1 << 16) * 6


def test_chunk_arrays_are_read_only() -> None:
    c = next(expand("MATS", 16, 8).chunks())
    with pytest.raises(ValueError):
        c.address[0] = 5


def test_steps_are_port_ops_and_describe_failures() -> None:
    s = expand("March C-", 4, 8, backgrounds="std1")
    steps = [x for x in s.steps() if isinstance(x, MarchStep)]
    read = steps[4]
    assert read.op == PortOp(OpKind.READ, 0) and read.expected == 0x55
    text = s.describe_step(read, got=0x54)
    assert "element 1" in text and "⇑(r0,w1)" in text and "address 0x0" in text
    assert "expected 0x55" in text and "got 0x54" in text and "std1" in text


def test_pauses_appear_between_elements_of_retention_tests() -> None:
    s = expand("March G", 4, 8)
    pauses = [x for x in s if isinstance(x, Pause)]
    assert [p.element for p in pauses] == [5, 7]
    assert pauses[0].at == 4 * (1 + 6 + 3 + 4 + 3)


def test_any_order_down() -> None:
    t = MarchTest((MarchElement("any", (MarchOp("w", 0),)),))
    assert expand(t, 4, 1, any_order="down").collect().address.tolist() == [3, 2, 1, 0]


@pytest.mark.parametrize(
    ("kwargs", "error"),
    [
        ({"test": "March Q"}, UnknownAlgorithm),
        ({"test": "{up(w0"}, NotationError),
        ({"width": 0}, UsageError),
        ({"width": 2000}, UsageError),
        ({"words": 0}, UsageError),
        ({"layout": (3, 3)}, UsageError),
        ({"order": "row-fast"}, UsageError),
        ({"backgrounds": "tartan"}, UsageError),
        ({"any_order": "sideways"}, UsageError),
        ({"chunk_ops": 0}, UsageError),
    ],
)
def test_impossible_requests(kwargs: dict[str, object], error: type[Exception]) -> None:
    args: dict[str, Any] = {"test": "MATS+", "words": 16, "width": 8}
    args.update(kwargs)
    with pytest.raises(error):
        expand(**args)


def test_collect_refuses_huge_streams() -> None:
    with pytest.raises(BudgetError, match="collect"):
        expand("March SS", 1 << 20, 8).collect(limit=1000)


def test_parse_then_expand_counts() -> None:
    t = parse_march("{up(w1); del(5ms); down(r1,w0,r0)}")
    s = expand(t, 10, 3, backgrounds="solid,checkerboard")
    assert s.total_ops == 4 * 10 * 2
