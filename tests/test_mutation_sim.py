"""``memcheck mutate`` on an example wrapper with a hand-made mutant set of known outcomes (Icarus).

The tag store (tag_store/tag_wrap.v) keeps 22-bit tags in a 24-bit macro: bits 23:22 of every word
are written from a constant and never read (``rdata = q[21:0]``), so flipping a bit of that constant
is an equivalent mutant and must survive; swapping the two 11-bit halves of the write data is a lane
swap every partial or full write shows, and must be killed; a lost brace must not compile;
a zero-delay loop on the first write hangs the simulator, which the stall watchdog stops (killed).
"""

from __future__ import annotations

import hashlib
import json
import shutil
from pathlib import Path

import pytest

from memcheck.cli import main
from memcheck.examples import examples_dir
from memcheck.mutation import MutantStatus, Operator, mutate_contract
from memcheck.mutation.operators import Mutant
from memcheck.sim import SimOptions

pytestmark = pytest.mark.icarus

SMALL = SimOptions(examples=20, bulk_examples=2, stall_timeout=10.0)
#: A zero-delay loop that never yields once a write starts: the simulator hangs.
_HANG = "reg osc;\n    always @(negedge wen) while (1) osc = ~osc;\n    "


def _tag_store(tmp_path: Path) -> Path:
    dst = tmp_path / "tag_store"
    shutil.copytree(examples_dir() / "tag_store", dst)
    return dst / "contract.toml"


def _digest(folder: Path) -> str:
    return hashlib.sha256(b"".join(p.read_bytes() for p in sorted(folder.glob("*.v")))).hexdigest()


def test_hand_made_mutants_have_their_known_outcomes(tmp_path: Path) -> None:
    contract = _tag_store(tmp_path)
    wrap = contract.parent / "tag_wrap.v"
    text = wrap.read_text()
    before = _digest(contract.parent)
    given = [
        Mutant.from_edit(wrap, text, "{2'b00, wdata}", "{2'b01, wdata}", Operator.CONSTANT, "unread bit 22 set"),
        Mutant.from_edit(
            wrap, text, "{2'b00, wdata}", "{2'b00, wdata[10:0], wdata[21:11]}", Operator.INDEX, "data halves swapped"
        ),
        Mutant.from_edit(wrap, text, "{2'b11, bwen}", "{2'b11, bwen", Operator.SWAP, "a brace lost"),
        Mutant.from_edit(wrap, text, "assign rdata", _HANG + "assign rdata", Operator.ARM, "a loop on the first write"),
    ]
    rep = mutate_contract(contract, seed=3, workers=2, options=SMALL, out_dir=tmp_path / "scratch", given=given)
    status = {o.ident: o.status for o in rep.outcomes}
    assert status == {
        "H000": MutantStatus.SURVIVED,
        "H001": MutantStatus.KILLED,
        "H002": MutantStatus.NOT_COMPILED,
        "H003": MutantStatus.KILLED,
    }
    assert rep.outcomes[3].how == "hang"
    assert (rep.killed, rep.survived, rep.not_compiled, rep.kill_rate) == (2, 1, 1, 2 / 3)
    killed = rep.outcomes[1]
    assert killed.cycles is not None and killed.how in ("smoke", "sweep", "property")
    survivor = rep.outcomes[0]
    assert survivor.reason is not None and "+        .D   ({2'b01, wdata})," in survivor.diff
    # The user's sources are untouched; the mutants live in the scratch folder.
    assert _digest(contract.parent) == before
    assert "2'b01" in (tmp_path / "scratch" / "mutants" / "H000" / "tag_wrap.v").read_text()


def test_cli_samples_mutants_and_writes_json(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    contract = _tag_store(tmp_path)
    report = tmp_path / "mutate.json"
    argv = ["mutate", str(contract), "--mutants", "1", "--seed", "11", "--examples", "20", "--bulk-examples", "2"]
    argv += ["--workers", "1"]  # in this process
    argv += ["--fail-under", "50"]
    rc = main([*argv, "--json", str(report), "--out", str(tmp_path / "scratch")])
    out = capsys.readouterr().out
    assert out.splitlines()[0].endswith("seed 11, 1 mutants, 1 worker(s)")
    doc = json.loads(report.read_text())
    assert doc["seed"] == 11 and doc["mutants"] == 1 and doc["candidates"] == 6
    # Seed 11 draws candidate 3 of 6: bit 0 of the constant mask of the two spare bits, never read.
    assert [o["id"] for o in doc["outcomes"]] == ["M003"] and doc["survived"] == 1
    assert doc["outcomes"][0]["reason"]["label"] == "possible hole"
    assert rc == 1 and "below --fail-under 50%" in out
    assert "M003 survived (possible hole):" in out and "+        .BWEB({2'b10, bwen})," in out
    assert "--seed 11 --examples 20 --bulk-examples 2 --only M003" in out
