"""One table of invalid command lines: each exits 2 with one paragraph naming the problem, no traceback.

Covers the March, fault-coverage and contract commands, and the arguments of ``check``, ``replay``
and ``march run`` that are refused before any simulation starts. A second test runs the simulator
commands with the ``sim`` extra hidden and expects one sentence naming ``memcheck[sim]``.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from memcheck.cli import main
from memcheck.examples import examples_dir

REGFILE = str(examples_dir() / "regfile" / "contract.toml")
REGFILE_V = str(examples_dir() / "regfile" / "regfile_wrap.v")
W8 = ("--words", "8", "--width", "8")

BAD_ARGS: list[tuple[tuple[str, ...], tuple[str, ...]]] = [
    # march list / show
    (("march", "list", "extra"), ("unexpected extra argument",)),
    (("march", "show", "March Q"), ("not a March algorithm", "Did you mean")),
    (("march", "show", "{up(w2)}"), ("expected 0 or 1",)),
    (("march", "bogus"), ("no such command",)),
    # march patterns (and its hidden alias)
    (("march", "patterns", "March Q", *W8), ("not a March algorithm",)),
    (("patterns", "{up(w0", *W8), ("notation",)),
    (("patterns", "MATS", "--width", "8"), ("--words", "--layout")),
    (("patterns", "MATS", "--words", "10", "--width", "8", "--layout", "3x3"), ("layout 3x3", "10")),
    (("patterns", "MATS", "--words", "10", "--width", "0"), ("--width", "0")),
    (("patterns", "MATS", "--words", "0", "--width", "8"), ("--words", "0")),
    (("patterns", "MATS", "--words", "10", "--width", "8", "--order", "row-fast"), ("needs a layout",)),
    (("patterns", "MATS", "--words", "10", "--width", "8", "--order", "spiral"), ("--order", "spiral")),
    (("patterns", "MATS", "--words", "10", "--width", "8", "--any-order", "sideways"), ("--any-order",)),
    (("patterns", "MATS", "--words", "10", "--width", "8", "--backgrounds", "plaid"), ("background", "plaid")),
    (("patterns", "MATS", "--words", "10", "--width", "8", "--format", "bin"), ("--format", "bin")),
    (("patterns", "MATS", "--words", "10", "--width", "8", "--layout", "axb"), ("ROWSxCOLS",)),
    (("patterns", "MATS", *W8, "--seed", "-1"), ("--seed",)),
    (("patterns", "MATS", *W8, "--seed", "x"), ("--seed", "x")),
    # march coverage (and its hidden alias)
    (("march", "coverage", "MATS+", "--words", "8", "--universe", "neighbours"), ("layout",)),
    (("coverage", "MATS+", "--words", "8", "--faults", "SAF,BOGUS"), ("unknown fault class", "BOGUS")),
    (("coverage", "{⇕(w0); ⇑(r1)}", "--words", "8"), ("fault-free memory fails",)),
    (("coverage", "March Q", "--words", "8"), ("not a March algorithm",)),
    (("coverage", "MATS+", "March C-", "--words", "8"), ("--compare",)),
    (("coverage", "MATS+", "--words", "8", "--layout", "3x3"), ("layout",)),
    (("coverage", "MATS+", "--words", "0"), ("--words",)),
    (("coverage", "MATS+"), ("--words", "--layout")),
    (("coverage", "MATS+", "--words", "8", "--universe", "sample:0"), ("universe",)),
    (("coverage", "MATS+", "--words", "8", "--width", "2000"), ("--width",)),
    (("coverage", "MATS+", "--words", "8", "--order", "row-fast"), ("needs a layout",)),
    (("coverage", "MATS+", "--words", "8", "--backgrounds", "std9", "--width", "4"), ("std9",)),
    (("coverage", "MATS+", "--words", "8", "--escapes", "-1"), ("--escapes",)),
    # contract
    (("contract", "validate", "missing.toml"), ("missing.toml", "cannot read")),
    (("contract", "validate"), ("missing argument",)),
    (("contract", "draft", REGFILE_V), ("--top",)),
    (("contract", "draft", "--top", "regfile_wrap"), ("missing argument",)),
    (("contract", "draft", "missing.v", "--top", "x"), ("missing.v", "does not exist")),
    (("contract", "draft", REGFILE_V, "--top", "regfile_wrap", "-o", REGFILE), ("already exists", "--force")),
    # simulator commands, refused before any simulation
    (("check", "missing.toml"), ("missing.toml", "cannot read")),
    (("check", REGFILE, REGFILE), ("named twice",)),
    (("check", REGFILE, "other.toml", "-j", "0"), ("--jobs", "0")),
    (("check", REGFILE, "--phases", "smoke,bogus"), ("--phases", "bogus")),
    (("check", REGFILE, "--examples", "-3"), ("--examples",)),
    (("check", REGFILE, "--stall-timeout", "0"), ("--stall-timeout",)),
    (("check", REGFILE, "--march", "March Q"), ("not a March algorithm",)),
    (("replay", "missing.json"), ("missing.json", "cannot read")),
    (("march", "run", "missing.toml", "MATS+"), ("missing.toml", "cannot read")),
    (("march", "run", REGFILE, "March Q"), ("not a March algorithm",)),
    (("march", "run", REGFILE, "MATS+", "--port", "zz"), ("no port", "zz")),
    (("march", "run", REGFILE, "MATS+", "--layout", "3x3"), ("layout 3x3",)),
    (("march", "run", REGFILE, "MATS+", "--max-ops", "0"), ("--max-ops",)),
    (("march", "run", REGFILE, "MATS+", "--fail-log", "f.csv", "--fail-log-limit", "0"), ("--fail-log-limit",)),
    (("diagnose", "MATS+", "f.csv", "--words", "8", "--first-reads", "0"), ("--first-reads",)),
    (("demo", "--examples", "-1"), ("--examples",)),
    (("check", REGFILE, "--directed-examples", "-1"), ("--directed-examples",)),
    # bist campaign / faulty-memory (refused before any simulation)
    (("bist", "campaign", "MATS+", "--words", "16", "--faults", "SAF,NPSF"), ("unknown fault class", "NPSF")),
    (("bist", "campaign", "MATS+", "--words", "16", "--layout", "3x4"), ("layout 3x4", "16")),
    (("bist", "campaign", "{up(w0); up(r1)}", "--words", "16"), ("a correct memory fails",)),
    (("bist", "campaign", "MATS+", "--words", "16", "--copies", "5000"), ("--copies 5000", "too large")),
    (("bist", "campaign", "MATS+", "--words", "1048576", "--copies", "1024"), ("--copies 1024", "too large")),
    (("bist", "campaign", "MATS+", "--words", "16", "--workers", "2", "--scheduler", "x:1"), ("do not go together",)),
    (("bist", "faulty-memory", "--words", "16", "--read-latency", "9"), ("READ_LATENCY", "9")),
    (("bist", "campaign", "MATS+", "--words", "16", "--read-latency", "5"), ("read latency", "5")),
    (("bist", "faulty-memory", "--words", "16", "--module", "module"), ("not a plain Verilog identifier",)),
]


@pytest.mark.parametrize(("argv", "words"), BAD_ARGS, ids=[" ".join(a)[:60] for a, _ in BAD_ARGS])
def test_bad_arguments_exit_2_with_one_paragraph(
    argv: tuple[str, ...], words: tuple[str, ...], capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    with pytest.MonkeyPatch.context() as mp:
        mp.chdir(tmp_path)  # relative "missing" files really are missing; nothing is written in the tree
        rc = main(list(argv))
    err = capsys.readouterr().err
    assert rc == 2, err
    assert "Traceback" not in err
    paragraph = err[err.index("memcheck: error: ") :]  # seed lines printed before a late error may precede it
    assert err.count("memcheck: error:") == 1 and "\n\n" not in paragraph.strip()
    for word in words:
        assert word.lower() in paragraph.lower(), (word, paragraph)


_HIDE_SIM_EXTRA = """
import sys
for name in ("cocotb", "cocotb_tools", "find_libpython"):
    sys.modules[name] = None  # what an install without the sim extra looks like to an import
from memcheck.cli import main
sys.exit(main(sys.argv[1:]))
"""


@pytest.mark.parametrize(
    "argv",
    [
        ("check", REGFILE),
        ("check", REGFILE, REGFILE + "x", "-j", "2"),
        ("replay", "missing.json"),
        ("march", "run", REGFILE, "MATS+"),
        ("demo", "--examples", "1", "--bulk-examples", "0"),
        ("contract", "draft", REGFILE_V, "--top", "regfile_wrap"),
    ],
)
def test_simulator_commands_without_the_sim_extra_name_it(argv: tuple[str, ...], tmp_path: Path) -> None:
    proc = subprocess.run(
        [sys.executable, "-c", _HIDE_SIM_EXTRA, *argv], capture_output=True, text=True, timeout=120, cwd=tmp_path
    )
    assert proc.returncode == 2, proc.stderr
    assert "Traceback" not in proc.stderr and "internal error" not in proc.stderr
    (line,) = [ln for ln in proc.stderr.splitlines() if ln.startswith("memcheck: error:")]
    assert "pip install 'memcheck[sim]'" in line


def test_commands_without_a_simulator_work_without_the_sim_extra(tmp_path: Path) -> None:
    proc = subprocess.run(
        [sys.executable, "-c", _HIDE_SIM_EXTRA, "march", "coverage", "MATS+", "--words", "4", "--seed", "3"],
        capture_output=True,
        text=True,
        timeout=120,
        cwd=tmp_path,
    )
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.startswith("memcheck march coverage: seed 3")
