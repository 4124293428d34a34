"""Write an operation stream as hex (for Verilog ``$readmemh``), CSV or JSON, chunk by chunk.

Hex packing (one line per operation, MSB first, fixed width; ``//`` comment lines first)::

    | op : 4 bits | address : 4*A bits | data : 4*D bits | expected : 4*D bits |

* ``op``: 0 = read, 1 = write, 2 = pause (a delay element; every other field 0),
* ``A = ceil(address_bits / 4)`` hex digits, ``address_bits = max(1, ceil(log2 words))``,
* ``D = ceil(width / 4)`` hex digits,
* ``data`` is the word written (0 on reads), ``expected`` the word a read must return (0 on writes).

So a line is ``W = 4 * (1 + A + 2 * D)`` bits: declare ``reg [W-1:0] mem [0:LINES-1]`` and slice
``mem[i][W-1 -: 4]`` for op, ``mem[i][8*D +: 4*A]`` for address, ``mem[i][4*D +: 4*D]`` for data and
``mem[i][0 +: 4*D]`` for expected. Hex text is produced vectorised (numpy), not line by line.

CSV columns: ``index,background,element,step,op,address,data,expected`` (op is ``r``, ``w`` or
``pause``; address, data and expected in fixed-width hex). JSON: one object with the stream's
parameters and ``ops``, a list of ``[op, address, data, expected, element, step, background]`` rows
(hex strings for words), plus ``pauses``. Every format is written atomically (temporary file in the
same folder, then ``os.replace``).
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

import numpy as np
import numpy.typing as npt

from memcheck._atomic import open_atomic
from memcheck.errors import UsageError
from memcheck.march.backgrounds import WordArray
from memcheck.march.expand import OP_WRITE, MarchStream, OpsChunk, Pause
from memcheck.march.orders import address_bits
from memcheck.march.timing import MarchTime

ExportFormat = Literal["hex", "csv", "json"]
FORMATS: tuple[str, ...] = ("hex", "csv", "json")
OP_PAUSE = 2
_HEX = np.frombuffer(b"0123456789abcdef", dtype=np.uint8)


@dataclass(frozen=True)
class HexLayout:
    """Field widths of one hex line (see module docstring)."""

    address_digits: int
    data_digits: int

    @property
    def digits(self) -> int:
        return 1 + self.address_digits + 2 * self.data_digits

    @property
    def line_bits(self) -> int:
        return 4 * self.digits

    def fields(self) -> dict[str, tuple[int, int]]:
        """Bit ranges ``name -> (msb, lsb)`` inside a line."""
        d, a = 4 * self.data_digits, 4 * self.address_digits
        return {
            "op": (self.line_bits - 1, self.line_bits - 4),
            "address": (2 * d + a - 1, 2 * d),
            "data": (2 * d - 1, d),
            "expected": (d - 1, 0),
        }


def hex_layout(stream: MarchStream) -> HexLayout:
    return HexLayout((address_bits(stream.words) + 3) // 4, (stream.width + 3) // 4)


def _nibbles(words: WordArray, digits: int) -> npt.NDArray[np.uint8]:
    """``uint64[n, L]`` little-endian limbs -> ``uint8[n, digits]`` hex digit indices, MSB first."""
    b = np.ascontiguousarray(words, dtype="<u8").view(np.uint8).reshape(words.shape[0], -1)
    nib = np.empty((b.shape[0], b.shape[1] * 2), dtype=np.uint8)
    nib[:, 0::2] = b & 0xF
    nib[:, 1::2] = b >> 4
    return nib[:, :digits][:, ::-1]


def _hex_chunk(chunk: OpsChunk, lay: HexLayout) -> bytes:
    n = len(chunk)
    out = np.empty((n, lay.digits + 1), dtype=np.uint8)
    out[:, 0] = _HEX[(chunk.op == OP_WRITE).astype(np.uint8)]  # the file format: 0 read, 1 write
    a0 = 1 + lay.address_digits
    out[:, 1:a0] = _HEX[_nibbles(chunk.address.astype(np.uint64)[:, None], lay.address_digits)]
    d0 = a0 + lay.data_digits
    out[:, a0:d0] = _HEX[_nibbles(chunk.data, lay.data_digits)]
    out[:, d0:-1] = _HEX[_nibbles(chunk.expected, lay.data_digits)]
    out[:, -1] = ord("\n")
    return out.tobytes()


def _header_lines(stream: MarchStream, timing: MarchTime | None = None) -> list[str]:
    t = stream.test
    lines = [
        f"memcheck March stream: {t.name or 'custom test'} {t.to_ascii()}",
        f"memory {stream.words} words x {stream.width} bits"
        + (f", layout {stream.layout[0]}x{stream.layout[1]}" if stream.layout else "")
        + f", order {stream.order.kind}"
        + ("" if stream.seed is None else f", seed {stream.seed}"),
        "backgrounds "
        + ", ".join(
            f"{b.name}={b.base:#x}" + ("" if b.flip == "none" else f" flip-{b.flip}") for b in stream.backgrounds
        ),
        f"{stream.total_ops} operations (length {t.length} x {stream.words} words x "
        f"{len(stream.backgrounds)} backgrounds) + {t.delays * len(stream.backgrounds)} pause lines",
    ]
    if timing is not None:
        lines.append(timing.text())
    return lines


def iter_hex(stream: MarchStream, header: bool = True, timing: MarchTime | None = None) -> Iterator[bytes]:
    """The hex file in pieces (see module docstring for the packing); ``timing`` adds the test time."""
    lay = hex_layout(stream)
    if header:
        fields = ", ".join(f"{k} [{m}:{lsb}]" for k, (m, lsb) in lay.fields().items())
        text = [*_header_lines(stream, timing), f"line = {lay.line_bits} bits: {fields}; op 0=read 1=write 2=pause"]
        yield "".join(f"// {line}\n" for line in text).encode()
    pause_line = b"2" + b"0" * (lay.digits - 1) + b"\n"
    for item in stream:
        yield pause_line if isinstance(item, Pause) else _hex_chunk(item, lay)


def _hexwords(words: WordArray, digits: int) -> list[str]:
    chars = _HEX[_nibbles(words, digits)]
    return [bytes(row).decode() for row in chars]


def _text_rows(item: OpsChunk, lay: HexLayout) -> Iterator[tuple[str, str, str, str, int]]:
    """(op letter, address hex, data hex, expected hex, step) per operation of a chunk."""
    addr = _hexwords(item.address.astype(np.uint64)[:, None], lay.address_digits)
    data = _hexwords(item.data, lay.data_digits)
    exp = _hexwords(item.expected, lay.data_digits)
    ops = np.where(item.op == OP_WRITE, "w", "r").tolist()
    return zip(ops, addr, data, exp, item.step.tolist(), strict=True)


def iter_csv(stream: MarchStream) -> Iterator[bytes]:
    """CSV rows in pieces (header row first; CSV has no comment lines, so no test time)."""
    lay = hex_layout(stream)
    yield b"index,background,element,step,op,address,data,expected\n"
    for item in stream:
        if isinstance(item, Pause):
            yield f"{item.at},{item.background},{item.element},,pause,,,\n".encode()
            continue
        yield "".join(
            f"{item.start + i},{item.background},{item.element},{step},{op},0x{addr},0x{data},0x{exp}\n"
            for i, (op, addr, data, exp, step) in enumerate(_text_rows(item, lay))
        ).encode()


def iter_json(stream: MarchStream, timing: MarchTime | None = None) -> Iterator[bytes]:
    """One JSON document in pieces (``timing``: a ``test_time`` object)."""
    lay = hex_layout(stream)
    t = stream.test
    head = {
        "format": "memcheck-march-stream",
        "version": 1,
        "name": t.name,
        "notation": t.to_unicode(),
        "words": stream.words,
        "width": stream.width,
        "layout": list(stream.layout) if stream.layout else None,
        "order": stream.order.kind,
        "seed": stream.seed,
        "any_order": stream.any_order,
        "backgrounds": [{"name": b.name, "base": hex(b.base), "flip": b.flip} for b in stream.backgrounds],
        "operations": stream.total_ops,
        "columns": ["op", "address", "data", "expected", "element", "step", "background"],
    }
    if timing is not None:
        head["test_time"] = timing.to_json()
    yield (json.dumps(head, ensure_ascii=False)[:-1] + ', "ops": [').encode()
    pauses: list[dict[str, object]] = []
    first = True
    for item in stream:
        if isinstance(item, Pause):
            pauses.append(
                {"at": item.at, "element": item.element, "background": item.background, "label": item.delay.label}
            )
            continue
        piece = ",\n".join(
            f'["{op}",{int(addr, 16)},"0x{data}","0x{exp}",{item.element},{step},{item.background}]'
            for op, addr, data, exp, step in _text_rows(item, lay)
        )
        yield (("\n" if first else ",\n") + piece).encode()
        first = False
    yield ("\n], " + json.dumps({"pauses": pauses})[1:] + "\n").encode()


def iter_export(stream: MarchStream, fmt: str, timing: MarchTime | None = None) -> Iterator[bytes]:
    """Pieces of the file in format ``fmt`` (hex, csv or json); ``timing`` puts the test time in the
    header (a hex comment line, a JSON ``test_time`` object; CSV has no comments)."""
    if fmt == "hex":
        return iter_hex(stream, timing=timing)
    if fmt == "csv":
        return iter_csv(stream)
    if fmt == "json":
        return iter_json(stream, timing)
    raise UsageError(f"unknown export format {fmt!r}; choose one of {', '.join(FORMATS)}")


def render(stream: MarchStream, fmt: str, timing: MarchTime | None = None) -> str:
    """The whole export as text (small streams; use :func:`write_export` for big ones)."""
    return b"".join(iter_export(stream, fmt, timing)).decode()


def write_export(stream: MarchStream, path: str | Path, fmt: str, timing: MarchTime | None = None) -> Path:
    """Write the stream to ``path`` in ``fmt``, atomically and chunk by chunk; returns the path."""
    pieces = iter_export(stream, fmt, timing)
    target = Path(path)
    with open_atomic(target) as fh:
        for piece in pieces:
            fh.write(piece)
    return target


def estimate_bytes(stream: MarchStream, fmt: str) -> int:
    """The size of the export in ``fmt`` without writing it (exact for hex, close for csv and json)."""
    lay = hex_layout(stream)
    pauses = stream.test.delays * len(stream.backgrounds)
    ops = stream.total_ops
    if fmt == "hex":
        return 4096 + (lay.digits + 1) * (ops + pauses)
    index_digits = len(str(max(ops, 1)))
    words = lay.address_digits + 2 * lay.data_digits + 6  # three 0x-prefixed hex fields
    per_line = index_digits + words + 16 if fmt == "csv" else index_digits + words + 24
    return 4096 + per_line * ops + 64 * pauses
