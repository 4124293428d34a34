"""Exports: hex (loaded by Icarus Verilog's $readmemh and read back), CSV and JSON."""

from __future__ import annotations

import csv
import io
import json
import shutil
import subprocess
from pathlib import Path
from typing import Any

import pytest

from memcheck.errors import UsageError
from memcheck.march import OP_WRITE, MarchStream, Pause, expand, hex_layout, limbs_to_int, render, write_export


def _expected_records(s: MarchStream) -> list[tuple[int, int, int, int]]:
    """(op, address, data, expected) per line, pauses as op 2, built from the stream arrays."""
    out: list[tuple[int, int, int, int]] = []
    for item in s:
        if isinstance(item, Pause):
            out.append((2, 0, 0, 0))
            continue
        for i in range(len(item)):
            out.append(
                (
                    int(item.op[i] == OP_WRITE),
                    int(item.address[i]),
                    limbs_to_int(item.data[i]),
                    limbs_to_int(item.expected[i]),
                )
            )
    return out


def _decode_hex(text: str, s: MarchStream) -> list[tuple[int, int, int, int]]:
    lay = hex_layout(s)
    d, a = 4 * lay.data_digits, 4 * lay.address_digits
    out = []
    for line in text.splitlines():
        if line.startswith("//"):
            continue
        assert len(line) == lay.digits
        v = int(line, 16)
        out.append((v >> (2 * d + a), (v >> (2 * d)) & ((1 << a) - 1), (v >> d) & ((1 << d) - 1), v & ((1 << d) - 1)))
    return out


@pytest.mark.parametrize(
    ("name", "words", "width", "kw"),
    [
        ("MATS+", 4, 1, {}),
        ("March G", 12, 70, {"backgrounds": "standard", "layout": (3, 4), "order": "row-fast"}),
        ("March SS", 300, 1024, {"backgrounds": "checkerboard", "order": "lfsr", "seed": 9}),
    ],
)
def test_hex_packing_round_trips(name: str, words: int, width: int, kw: dict[str, Any]) -> None:
    s = expand(name, words, width, chunk_ops=333, **kw)
    text = render(s, "hex")
    assert _decode_hex(text, s) == _expected_records(s)
    lay = hex_layout(s)
    assert lay.line_bits == 4 * (1 + lay.address_digits + 2 * lay.data_digits)
    assert f"line = {lay.line_bits} bits" in text


def test_csv_and_json_carry_the_same_stream() -> None:
    s = expand("March G", 6, 12, backgrounds="solid,std2")
    recs = [r for r in _expected_records(s) if r[0] != 2]
    rows = list(csv.DictReader(io.StringIO(render(s, "csv"))))
    op_rows = [r for r in rows if r["op"] != "pause"]
    assert [
        (1 if r["op"] == "w" else 0, int(r["address"], 16), int(r["data"], 16), int(r["expected"], 16)) for r in op_rows
    ] == recs
    assert [int(r["index"]) for r in op_rows] == list(range(s.total_ops))
    assert sum(r["op"] == "pause" for r in rows) == 2 * 2
    doc = json.loads(render(s, "json"))
    assert doc["operations"] == s.total_ops == len(doc["ops"])
    assert [(1 if o[0] == "w" else 0, o[1], int(o[2], 16), int(o[3], 16)) for o in doc["ops"]] == recs
    assert [p["at"] for p in doc["pauses"]] == [p.at for p in s if isinstance(p, Pause)]
    assert doc["notation"] == s.test.to_unicode()


def test_write_export_is_atomic_and_complete(tmp_path: Path) -> None:
    s = expand("March C-", 64, 16, backgrounds="standard")
    out = write_export(s, tmp_path / "sub" / "c.hex", "hex")
    assert out.read_text() == render(s, "hex")
    assert [p.name for p in out.parent.iterdir()] == ["c.hex"]  # no temporary file left behind
    with pytest.raises(UsageError, match="format"):
        write_export(s, tmp_path / "x.bin", "bin")
    assert not (tmp_path / "x.bin").exists()


TB = """
module tb;
  localparam W = {W}, N = {N}, A = {A}, D = {D};
  reg [W-1:0] mem [0:N-1];
  integer i;
  initial begin
    $readmemh("{path}", mem);
    for (i = 0; i < N; i = i + 1)
      $display("%0d %h %h %h %h", i, mem[i][W-1 -: 4], mem[i][8*D +: 4*A], mem[i][4*D +: 4*D], mem[i][0 +: 4*D]);
    $finish;
  end
endmodule
"""


@pytest.mark.icarus
@pytest.mark.parametrize(
    ("name", "words", "width", "kw"),
    [
        ("March C-", 16, 8, {"backgrounds": "standard"}),
        ("March G", 8, 70, {"backgrounds": "checkerboard", "order": "lfsr", "seed": 4, "layout": (4, 2)}),
    ],
)
def test_readmemh_in_icarus_reads_back_the_stream(
    tmp_path: Path, name: str, words: int, width: int, kw: dict[str, Any]
) -> None:
    """IEEE Std 1364-2005 section 17.2.9: $readmemh loads one hex word per line and skips // comments."""
    iverilog, vvp = shutil.which("iverilog"), shutil.which("vvp")
    if not iverilog or not vvp:
        pytest.skip("Icarus Verilog not installed")
    s = expand(name, words, width, **kw)
    hex_path = write_export(s, tmp_path / "stream.hex", "hex")
    want = _expected_records(s)
    lay = hex_layout(s)
    (tmp_path / "tb.v").write_text(
        TB.format(W=lay.line_bits, N=len(want), A=lay.address_digits, D=lay.data_digits, path=hex_path.as_posix())
    )
    subprocess.run(
        [iverilog, "-o", str(tmp_path / "tb.vvp"), str(tmp_path / "tb.v")],
        check=True,
        capture_output=True,
        text=True,
        timeout=60,
    )
    run = subprocess.run(
        [vvp, "-n", str(tmp_path / "tb.vvp")], check=True, capture_output=True, text=True, timeout=60, cwd=tmp_path
    )
    got = []
    for line in run.stdout.splitlines():
        parts = line.split()
        if len(parts) != 5 or not parts[0].isdigit():
            continue
        assert "x" not in line.lower()[len(parts[0]) :], line  # every line loaded, no unknowns
        got.append(tuple(int(p, 16) for p in parts[1:]))
    assert got == want
    assert sum(1 for r in got if r[0] == 1) > 0  # the file codes a write as 1
