"""Mutation operators on small Verilog snippets (pure: no simulator).

Each expected mutant below was worked out by hand from the snippet; Verilog's own rules (IEEE Std
1364-2005: 3.5.1 sized literals, 5.2.1 part-selects, 9.4 if-else, 9.5 case) decide what a mutant
means, and a few compile checks under Icarus confirm that every mutant of the example wrappers is
still valid Verilog where the operator promises it (tests/test_mutation_sim.py).
"""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from memcheck.errors import UsageError
from memcheck.examples import examples_dir
from memcheck.mutation import Mutant, Operator, find_mutants, sample_mutants
from memcheck.mutation.operators import flipped_literals
from memcheck.mutation.tokens import Kind, statement_end, tokenize


def _mutated(text: str, op: Operator | None = None) -> list[str]:
    return [m.apply(text) for m in find_mutants(text) if op is None or m.operator == op]


def test_tokenizer_skips_comments_strings_attributes_and_directives() -> None:
    text = '`define W 8\n// a == b\n/* c & d */ (* keep *) x = "e + f"; `timescale 1ns/1ps\ny = 4\'b10_10;'
    toks = tokenize(text)
    assert [t.text for t in toks] == ["x", "=", ";", "y", "=", "4'b10_10", ";"]
    assert toks[5].kind == Kind.SIZED and toks[5].line == 4


def test_comments_and_strings_are_never_mutated() -> None:
    text = 'always @(posedge clk) begin // a == b\n  $display("a & b");\nend\n'
    assert find_mutants(text) == []


@pytest.mark.parametrize(
    ("before", "after"),
    [
        ("assign y = a == b;", "assign y = a != b;"),
        ("assign y = a != b;", "assign y = a == b;"),
        ("assign y = a & b;", "assign y = a | b;"),
        ("assign y = a | b;", "assign y = a & b;"),
        ("assign y = a && b;", "assign y = a || b;"),
        ("assign y = a || b;", "assign y = a && b;"),
        ("assign y = a + b;", "assign y = a - b;"),
        ("assign y = a - b;", "assign y = a + b;"),
        ("assign y = a < b;", "assign y = a >= b;"),
        ("assign y = a >= b;", "assign y = a < b;"),
        ("assign y = a > b;", "assign y = a <= b;"),
    ],
)
def test_operator_swaps(before: str, after: str) -> None:
    assert _mutated(before, Operator.SWAP) == [after]


def test_nonblocking_assignment_is_not_a_comparison() -> None:
    assert _mutated("always @(posedge clk) q <= d;", Operator.SWAP) == []


def test_condition_inverted_enable_and_reset_dropped() -> None:
    text = "always @(posedge clk) if (!rst_n) q <= 1'b0; else if (en) q <= d;"
    inv = _mutated(text, Operator.INVERT)
    assert inv == [
        text.replace("if (!rst_n)", "if (rst_n)"),  # the '!' removed
        text.replace("if (!rst_n)", "if (!(!rst_n))"),
        text.replace("if (en)", "if (!(en))"),
    ]
    assert _mutated(text, Operator.RESET) == [text.replace("if (!rst_n)", "if (1'b0)")]
    assert _mutated(text, Operator.ENABLE) == [text.replace("if (en)", "if (1'b1)")]


def test_ternary_condition_inverted_when_it_is_a_name_or_a_group() -> None:
    assert _mutated("assign y = s ? a : b;", Operator.INVERT) == ["assign y = !(s) ? a : b;"]
    assert _mutated("assign y = (s & t) ? a : b;", Operator.INVERT) == ["assign y = !((s & t)) ? a : b;"]
    assert _mutated("assign y = x[1] ? a : b;", Operator.INVERT) == []  # the condition's start is unclear


@pytest.mark.parametrize(
    ("literal", "flips"),
    [
        ("4'b1010", [(0, "4'b1011"), (2, "4'b1110"), (3, "4'b0010")]),
        ("8'hff", [(0, "8'hfe"), (4, "8'hef"), (7, "8'h7f")]),
        ("6'd5", [(0, "6'd4"), (3, "6'd13"), (5, "6'd37")]),
        ("1'b1", [(0, "1'b0")]),
        ("3'o7", [(0, "3'o6"), (1, "3'o5"), (2, "3'o3")]),
        ("4'bx01z", []),
    ],
)
def test_constant_bits_flipped(literal: str, flips: list[tuple[int, str]]) -> None:
    assert flipped_literals(literal) == flips


def test_index_and_part_select_off_by_one() -> None:
    assert _mutated("assign y = a[i];", Operator.INDEX) == ["assign y = a[i+1];"]
    assert _mutated("assign y = a[3];", Operator.INDEX) == ["assign y = a[4];"]
    assert _mutated("assign y = a[7:0];", Operator.INDEX) == ["assign y = a[6:0];", "assign y = a[7:1];"]
    assert _mutated("assign y = a[k*8 +: 8];", Operator.INDEX) == ["assign y = a[k*8 +: 7];"]
    assert _mutated("assign y = {a, b};", Operator.INDEX) == []


def test_declarations_headers_and_loop_headers_are_left_alone() -> None:
    text = (
        "module m #(parameter W = 8) (input wire [W-1:0] a, output reg [7:0] q);\n"
        "  localparam N = 4'b0011;\n  wire [7:0] w;\n  reg [7:0] mem [0:N-1];\n  integer k;\n"
        "  genvar g;\n  for (g = 0; g < 4; g = g + 1) begin : l end\n"
        "  sub #(.X(W-1)) u (.a(a));\nendmodule\n"
    )
    assert find_mutants(text) == []


def test_declaration_initialiser_is_mutable_but_its_range_is_not() -> None:
    assert _mutated("wire [7:0] w = a & b;") == ["wire [7:0] w = a | b;"]


def test_case_items_removed() -> None:
    text = "always @* case (s) 2'd0: y = a; 2'd1: begin y = b; end default: y = c; endcase"
    arms = _mutated(text, Operator.ARM)
    assert arms == [
        "always @* case (s)  2'd1: begin y = b; end default: y = c; endcase",
        "always @* case (s) 2'd0: y = a;  default: y = c; endcase",
        "always @* case (s) 2'd0: y = a; 2'd1: begin y = b; end  endcase",
    ]


def test_if_and_else_arms_removed() -> None:
    text = "always @(posedge clk) if (en) begin q <= d; end else q <= 0;"
    assert _mutated(text, Operator.ARM) == [
        "always @(posedge clk) if (en) ; else q <= 0;",
        "always @(posedge clk) if (en) begin q <= d; end ",
    ]


def test_statement_end_delimits_nested_statements() -> None:
    toks = tokenize("if (a) if (b) x = 1; else begin y = 2; end z = 3;")
    end = statement_end(toks, 0)
    assert end is not None and toks[end].text == "z"


def test_same_text_from_two_edits_is_kept_once() -> None:
    # '!' removed and '!(...)' inverted give different texts; two flips of a 1-bit literal would not.
    texts = _mutated("assign y = c ? 1'b1 : 1'b0;")
    assert len(texts) == len(set(texts))


def test_from_edit_builds_a_hand_made_mutant() -> None:
    text = "assign y = a & b;\n"
    m = Mutant.from_edit("w.v", text, "a & b", "a | b", Operator.SWAP, "and became or")
    assert m.apply(text) == "assign y = a | b;\n" and m.line == 1
    with pytest.raises(ValueError, match="occurs 0 times"):
        Mutant.from_edit("w.v", text, "c", "d", Operator.SWAP, "")
    with pytest.raises(ValueError, match="is not"):
        m.apply("assign y = c & d;\n")


def test_sampling_is_seeded_sorted_and_takes_all_when_few() -> None:
    ms = find_mutants((examples_dir() / "regfile" / "regfile_wrap.v").read_text())
    a = sample_mutants(ms, 5, seed=7)
    assert a == sample_mutants(ms, 5, seed=7)
    assert [k for k, _ in a] == sorted(k for k, _ in a) and len(a) == 5
    assert [k for k, _ in sample_mutants(ms, 1000, seed=1)] == list(range(len(ms)))
    with pytest.raises(UsageError, match="1 or more"):
        sample_mutants(ms, 0, seed=1)


_WRAPPERS = sorted(p for p in examples_dir().glob("*/*_wrap.v"))


@given(st.sampled_from(_WRAPPERS), st.data())
def test_every_mutant_changes_only_its_own_span(path: object, data: st.DataObject) -> None:
    from pathlib import Path

    assert isinstance(path, Path)
    text = path.read_text()
    ms = find_mutants(text, path)
    if not ms:
        return
    m = data.draw(st.sampled_from(ms))
    new = m.apply(text)
    assert new != text
    assert new[: m.start] == text[: m.start]
    assert new[m.start + len(m.replacement) :] == text[m.end :]
    assert text.count("\n", 0, m.start) + 1 == m.line
