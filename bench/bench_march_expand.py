"""Benchmark: expand March SS over 1,048,576 words x 32 bits and the standard backgrounds.

Prints the vectorised expansion time and peak traced memory, the time of a plain Python loop that
builds the same stream (run on a fraction of the addresses and extrapolated linearly when the full
run would take more than about a minute), and their ratio. Target: at least 50x faster, and peak
memory bounded by one chunk rather than by the stream length.

    .venv/bin/python bench/bench_march_expand.py [--words N] [--width W] [--fraction F]
"""

from __future__ import annotations

import argparse
import time
import tracemalloc

from memcheck.march import MarchElement, MarchStream, expand


def vectorised(stream: MarchStream) -> int:
    """Consume every chunk (touching its arrays) and return the operation count."""
    n = 0
    checksum = 0
    for c in stream.chunks():
        n += len(c)
        checksum ^= int(c.address[-1]) ^ int(c.op[-1]) ^ int(c.data[-1, 0]) ^ int(c.expected[-1, 0])
    return n


def plain_loop(stream: MarchStream, fraction: float) -> tuple[int, float]:
    """The same stream, one Python tuple per operation, over the first ``fraction`` of each walk.

    Returns (operations built, seconds). Tuples are kept per element (like a chunk) then dropped.
    """
    test, words, width = stream.test, stream.words, stream.width
    mask = (1 << width) - 1
    span = max(1, int(words * fraction))
    t0 = time.perf_counter()
    built = 0
    for b, bg in enumerate(stream.backgrounds):
        base = bg.base  # standard backgrounds do not depend on the address
        for e, el in enumerate(test.elements):
            if not isinstance(el, MarchElement):
                continue
            up = (el.order if el.order != "any" else stream.any_order) == "up"
            walk = range(span) if up else range(words - 1, words - 1 - span, -1)  # the linear order
            ops = [(o.kind == "w", base ^ (mask if o.value else 0)) for o in el.ops]
            out = []
            for a in walk:
                for k, (is_write, value) in enumerate(ops):
                    if is_write:
                        out.append((1, a, value, 0, e, k, b))
                    else:
                        out.append((0, a, 0, value, e, k, b))
            built += len(out)
            del out
    return built, time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--words", type=int, default=1 << 20)
    ap.add_argument("--width", type=int, default=32)
    ap.add_argument(
        "--fraction",
        type=float,
        default=None,
        help="share of addresses the plain loop runs (default: chosen to take about 10 s)",
    )
    args = ap.parse_args()

    stream = expand("March SS", args.words, args.width, backgrounds="standard")
    total = stream.total_ops
    print(
        f"March SS, {args.words} words x {args.width} bits, {len(stream.backgrounds)} standard backgrounds "
        f"({', '.join(hex(b.base) for b in stream.backgrounds)})"
    )
    print(
        f"stream length: {total:,} operations (22 x {args.words} x {len(stream.backgrounds)}), "
        f"chunks of up to {stream.chunk_ops:,} operations"
    )

    t0 = time.perf_counter()
    n = vectorised(stream)
    t_vec = time.perf_counter() - t0
    assert n == total, (n, total)
    print(f"vectorised expansion: {t_vec:.2f} s ({total / t_vec / 1e6:.1f} M operations/s)")

    tracemalloc.start()
    vectorised(stream)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    stream_bytes = total * (1 + 8 + 2 * 8 + 2)  # op + address + data + expected + step, one limb
    print(
        f"peak traced memory while streaming: {peak / 2**20:.1f} MiB "
        f"(the whole stream as arrays would be {stream_bytes / 2**30:.1f} GiB)"
    )

    # Address-dependent background: no chunk can be reused, every data word is computed.
    checker = expand("March SS", args.words, args.width, backgrounds="checkerboard")
    t0 = time.perf_counter()
    n_checker = vectorised(checker)
    t_checker = time.perf_counter() - t0
    print(
        f"vectorised, checkerboard background (address-dependent data): {n_checker:,} operations in "
        f"{t_checker:.2f} s ({n_checker / t_checker / 1e6:.1f} M operations/s)"
    )

    # Plain loop: probe its speed on a small share; run it whole if that takes under a minute,
    # otherwise on a share sized to about 10 s, extrapolated linearly (the loop is linear in length).
    probe_n, probe_t = plain_loop(stream, 1 / 256)
    full_estimate = probe_t / max(probe_n, 1) * total
    if args.fraction is not None:
        fraction = args.fraction
    elif full_estimate <= 60:
        fraction = 1.0
    else:
        fraction = min(1.0, 10.0 / full_estimate)
    built, t_loop = plain_loop(stream, fraction)
    t_loop_full = t_loop * total / built
    if built < total:
        print(
            f"plain Python loop: {built:,} operations ({built / total:.2%} of the stream) in {t_loop:.2f} s; "
            f"the full stream would take about {t_loop_full:.0f} s, so it was extrapolated linearly"
        )
    else:
        print(f"plain Python loop: {t_loop:.2f} s for the full stream")
    ratio = t_loop_full / t_vec
    print(f"speed-up: {ratio:.0f}x (target >= 50x) -> {'met' if ratio >= 50 else 'NOT met'}")


if __name__ == "__main__":
    main()
