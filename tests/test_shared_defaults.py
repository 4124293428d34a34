"""One set of defaults across commands (docs/march.md, "Defaults shared by every command"): the data
backgrounds every command takes when --backgrounds is omitted, and --library accepted by every command
that takes a test. The rule is our own: solid for 1-bit words, else the standard set."""

from __future__ import annotations

import dataclasses
import json
from pathlib import Path

import click
import pytest

from memcheck.bist.campaign import CampaignSpec, prepare
from memcheck.bist.microcode import plan_engine
from memcheck.cli import cli, main
from memcheck.contract import load_contract
from memcheck.examples import examples_dir
from memcheck.faults.geometry import Arrangement
from memcheck.march.backgrounds import default_background_spec
from memcheck.sim.jobs.march import prepare as prepare_march_run
from memcheck.sim.options import SimOptions

REGFILE = examples_dir() / "regfile" / "contract.toml"


def _names(bgs: object) -> list[str]:
    return [b.name for b in bgs]  # type: ignore[attr-defined]


@pytest.mark.parametrize("width", [1, 2, 8, 32])
def test_every_command_takes_the_same_default_backgrounds(
    width: int, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    words = 8
    coverage_names = _names(Arrangement(words, width).resolve().backgrounds)  # coverage, show, diagnose
    assert coverage_names == (["solid"] if width == 1 else [f"std{k}" for k in range(width.bit_length())])
    # patterns (CLI, JSON export)
    out = tmp_path / "p.json"
    argv = ["march", "patterns", "March C-", "--words", str(words), "--width", str(width), "--seed", "1"]
    assert main([*argv, "--format", "json", "-o", str(out)]) == 0
    assert [b["name"] for b in json.loads(out.read_text())["backgrounds"]] == coverage_names
    # coverage (CLI, JSON report)
    cov = tmp_path / "c.json"
    argv = ["march", "coverage", "March C-", "--words", str(words), "--width", str(width), "--faults", "SAF"]
    assert main([*argv, "--seed", "1", "--json", str(cov)]) == 0
    assert json.loads(cov.read_text())["backgrounds"] == coverage_names
    # bist generate / verify (the engine plan) and bist campaign
    assert _names(plan_engine("March C-", words, width).backgrounds) == coverage_names
    assert list(prepare(CampaignSpec("March C-", words, width, classes="SAF")).backgrounds) == coverage_names
    # march run and the sweep of check (the contract's width decides)
    contract = load_contract(REGFILE)
    c = dataclasses.replace(contract, memory=dataclasses.replace(contract.memory, words=words, width=width))
    schedule, _ = prepare_march_run(c, "March C-", SimOptions())
    assert _names(schedule.stream.backgrounds) == coverage_names
    assert SimOptions().backgrounds_for(width) == default_background_spec(width)
    capsys.readouterr()


COMMANDS_WITH_A_TEST = [
    ("march", "show"),
    ("march", "patterns"),
    ("march", "coverage"),
    ("march", "run"),
    ("bist", "generate"),
    ("bist", "verify"),
    ("bist", "campaign"),
    ("diagnose",),
]


@pytest.mark.parametrize("path", COMMANDS_WITH_A_TEST, ids=" ".join)
def test_every_command_that_takes_a_test_takes_library_and_default_backgrounds(path: tuple[str, ...]) -> None:
    cmd: click.Command = cli
    for name in path:
        assert isinstance(cmd, click.Group)
        cmd = cmd.commands[name]
    opts = {o.name: o for o in cmd.params if isinstance(o, click.Option)}
    assert "library" in opts
    if "backgrounds" in opts:
        assert opts["backgrounds"].default is None  # resolved by word width: the one rule


def test_bist_generate_takes_a_user_library_test(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    lib = tmp_path / "lib.toml"
    lib.write_text('[[test]]\nname = "Team 6n"\nnotation = "{any(w0); up(r0,w1); down(r1,w0); any(r0)}"\n')
    out = tmp_path / "e.v"
    assert (
        main(["bist", "generate", "Team 6n", "--library", str(lib), "--words", "8", "--width", "4", "-o", str(out)])
        == 0
    )
    text = capsys.readouterr().out
    assert "Team 6n on 8 x 4" in text and "backgrounds std0, std1, std2" in text
    assert out.is_file()


def test_patterns_headers_carry_the_test_time_march_show_and_coverage_print(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # March G: 23n with two delay elements (A.J. van de Goor, "Testing Semiconductor Memories", 1991;
    # the library's notation). 1,024 words, one background, 50 MHz, 100 ms pauses: 23,552 operations
    # + 2 pauses of ceil(0.1 s x 50 MHz) = 5,000,000 quiet cycles each (our own arithmetic).
    timing = ["--clock-mhz", "50", "--pause-ms", "100"]
    mem = ["--words", "1K", "--width", "1"]
    assert main(["march", "show", "March G", *mem, *timing]) == 0
    show = next(line for line in capsys.readouterr().out.splitlines() if line.startswith("time"))
    figure = show.removeprefix("time").strip()
    assert figure == "23,552 operations + 2 pause(s) of 100 ms = 10,023,552 cycles: test time 200 ms at 50 MHz"
    assert main(["march", "coverage", "March G", *mem, *timing, "--faults", "SAF", "--seed", "1"]) == 0
    assert figure in capsys.readouterr().out
    hexfile, js = tmp_path / "g.hex", tmp_path / "g.json"
    assert main(["march", "patterns", "March G", *mem, *timing, "--seed", "1", "-o", str(hexfile)]) == 0
    assert f"// {figure}" in hexfile.read_text().splitlines()[:8]
    assert main(["march", "patterns", "March G", *mem, *timing, "--seed", "1", "--format", "json", "-o", str(js)]) == 0
    tt = json.loads(js.read_text())["test_time"]
    assert (tt["operations"], tt["pauses"], tt["cycles"], tt["clock_mhz"]) == (23552, 2, 10_023_552, 50.0)
    assert abs(tt["seconds"] - (23552 / 50e6 + 0.2)) < 1e-12
    capsys.readouterr()
