"""The pytest plugin (memcheck/pytest_plugin.py) in a temporary project run by pytest's ``pytester``:
contracts collected as items, a conforming example passes, a buggy one fails with its trace table and
replay command, an invalid contract errors alone, JUnit carries it all, with and without xdist."""

from __future__ import annotations

import json
import re
import shutil
import xml.etree.ElementTree as ET
from importlib.metadata import entry_points
from pathlib import Path

import pytest

from memcheck.examples import examples_dir

pytest_plugins = ["pytester"]

GOOD, BUGGY = "regfile", "packet_buffer_lane_bug"
BUDGET = ("--memcheck-examples", "20", "--memcheck-bulk-examples", "2", "-p", "no:cacheprovider")
INI = "[pytest]\nmemcheck_contracts = rtl/**/contract.toml\ntestpaths = tests\n"


def _project(pytester: pytest.Pytester, *examples: str, broken: bool = False, ini: str = INI) -> Path:
    root = pytester.path
    for name in examples:
        shutil.copytree(examples_dir() / name, root / "rtl" / name)
    if BUGGY in examples:  # its RTL sources include its conforming twin's memory macro, beside it
        (root / "rtl" / "packet_buffer").mkdir(exist_ok=True)
        shutil.copy(examples_dir() / "packet_buffer" / "sram_sp_bw.v", root / "rtl" / "packet_buffer")
    if broken:
        (root / "rtl" / "broken").mkdir(parents=True)
        (root / "rtl" / "broken" / "contract.toml").write_text('[memory]\nwords = "lots"\n')
    (root / "tests").mkdir()
    (root / "tests" / "test_plain.py").write_text("def test_plain():\n    assert True\n")
    pytester.makefile(".ini", pytest=ini)
    return root


def test_the_plugin_is_registered_in_the_pytest11_group() -> None:
    (ep,) = [e for e in entry_points(group="pytest11") if e.name == "memcheck"]
    assert ep.value == "memcheck.pytest_plugin"


def test_without_configuration_no_contract_is_collected(pytester: pytest.Pytester) -> None:
    # memcheck's own suite depends on this: installed, the plugin collects nothing unless told to.
    _project(pytester, ini="[pytest]\n")
    (pytester.path / "rtl").mkdir()
    (pytester.path / "rtl" / "contract.toml").write_text('[memory]\nwords = "lots"\n')
    res = pytester.runpytest("-p", "no:cacheprovider", ".")
    res.assert_outcomes(passed=1)
    assert "memcheck: seed" not in res.stdout.str()


def test_a_glob_matching_nothing_is_a_usage_error(pytester: pytest.Pytester) -> None:
    _project(pytester, ini="[pytest]\nmemcheck_contracts = rtl/**/contrct.toml\n")
    res = pytester.runpytest("-p", "no:cacheprovider")
    assert res.ret == pytest.ExitCode.USAGE_ERROR
    res.stderr.fnmatch_lines(["*the contract glob 'rtl/**/contrct.toml' matches no file*"])
    cli = pytester.runpytest("-p", "no:cacheprovider", "--memcheck-contracts", "nowhere/*.toml")
    assert cli.ret == pytest.ExitCode.USAGE_ERROR


@pytest.mark.parametrize("bad", [("--memcheck-seed", "-1"), ("--memcheck-examples", "many")])
def test_bad_option_values_are_usage_errors(pytester: pytest.Pytester, bad: tuple[str, str]) -> None:
    res = pytester.runpytest(*bad)
    assert res.ret == pytest.ExitCode.USAGE_ERROR
    res.stderr.fnmatch_lines([f"*{bad[0]}*{bad[1]}*"])


def test_an_invalid_contract_errors_its_item_with_the_contract_message(pytester: pytest.Pytester) -> None:
    _project(pytester, broken=True)
    res = pytester.runpytest(*BUDGET, "-rE")
    res.assert_outcomes(passed=1, errors=1)
    res.stdout.fnmatch_lines(["*ERROR at setup of memcheck contract rtl/broken/contract.toml::check*"])
    res.stdout.fnmatch_lines(["*memcheck: invalid contract:*words*"])
    assert "Traceback" not in res.stdout.str() and "During handling" not in res.stdout.str()


def test_pytest_start_up_does_not_import_cocotb(pytester: pytest.Pytester) -> None:
    _project(pytester, broken=True)
    (pytester.path / "tests" / "test_modules.py").write_text(
        "import sys\n\ndef test_no_cocotb():\n    assert not [m for m in sys.modules if m.startswith('cocotb')]\n"
    )
    # a fresh interpreter: this process may have imported cocotb for other tests already
    res = pytester.runpytest_subprocess(*BUDGET, "-k", "no_cocotb")
    res.assert_outcomes(passed=1, deselected=2)


def _seed_of_header(text: str) -> int:
    m = re.search(r"^memcheck: seed (\d+); (\d+) contract", text, re.M)
    assert m is not None, text
    return int(m.group(1))


@pytest.mark.icarus
def test_a_conforming_and_a_buggy_example_with_junit_and_the_fixture(pytester: pytest.Pytester) -> None:
    root = _project(pytester, GOOD, BUGGY, broken=True)
    (root / "tests" / "test_own.py").write_text(
        "def test_own(memcheck_check):\n"
        f"    r = memcheck_check('rtl/{BUGGY}/contract.toml', phases=('smoke',))\n"
        "    assert r.verdict == 'fail' and r.failure is not None and len(r.failure.trace) <= 6\n"
    )
    res = pytester.runpytest(*BUDGET, "--junitxml", "junit.xml")
    res.assert_outcomes(passed=3, failed=1, errors=1)
    seed = _seed_of_header(res.stdout.str())
    res.stdout.fnmatch_lines(
        [
            f"rtl/{GOOD}/contract.toml .*",
            f"*memcheck contract rtl/{BUGGY}/contract.toml::check*",
            f"rtl/{BUGGY}/contract.toml: DIFFERENCE FOUND*",
            f"replay: memcheck replay memcheck-out/rtl/{BUGGY}/replay.json",
            "cycle  port  op *expected*actual*differs",
        ]
    )
    suite = ET.parse(root / "junit.xml").getroot()[0]
    cases = {(c.get("classname"), c.get("name")): c for c in suite.iter("testcase")}
    bug = cases[(f"rtl.{BUGGY}.contract.toml", "check")]
    failure = bug.find("failure")
    assert failure is not None and "memcheck replay" in (failure.text or "") and "expected" in (failure.text or "")
    props = {p.get("name"): p.get("value") for p in bug.iter("property")}
    assert props["memcheck_verdict"] == "fail" and props["memcheck_seed"] == str(seed)
    assert cases[("rtl.broken.contract.toml", "check")].find("error") is not None
    assert cases[(f"rtl.{GOOD}.contract.toml", "check")].find("failure") is None
    report = json.loads((root / "memcheck-out" / "rtl" / GOOD / "report.json").read_text())
    assert report["verdict"] == "pass" and report["seed"] == seed
    assert (root / "memcheck-out" / "fixture" / "tests_test_own.py_test_own" / BUGGY / "replay.json").is_file()


@pytest.mark.icarus
def test_under_xdist_each_item_has_its_own_folder_and_the_controller_seed(pytester: pytest.Pytester) -> None:
    root = _project(pytester, GOOD, BUGGY)
    res = pytester.runpytest(*BUDGET, "-n", "2", "--junitxml", "junit.xml")
    res.assert_outcomes(passed=2, failed=1)
    seed = _seed_of_header(res.stdout.str())
    seeds = {json.loads((root / "memcheck-out" / "rtl" / n / "report.json").read_text())["seed"] for n in (GOOD, BUGGY)}
    assert seeds == {seed}  # workers checked with the seed the controller drew and printed
    assert (root / "memcheck-out" / "rtl" / BUGGY / "replay.json").is_file()
    assert not (root / "memcheck-out" / "rtl" / GOOD / "replay.json").exists()
    suite = ET.parse(root / "junit.xml").getroot()[0]
    assert (suite.get("tests"), suite.get("failures")) == ("3", "1")


def test_which_run_includes_the_contracts(pytester: pytest.Pytester) -> None:
    _project(pytester, broken=True)
    # a plain run adds contracts outside testpaths; explicit paths leave them to pytest's own walk
    plain = pytester.runpytest("-p", "no:cacheprovider", "--collect-only", "-q")
    plain.stdout.fnmatch_lines(["tests/test_plain.py::test_plain", "rtl/broken/contract.toml::check"])
    only_tests = pytester.runpytest("-p", "no:cacheprovider", "--collect-only", "-q", "tests")
    assert "contract.toml" not in only_tests.stdout.str()
    walked = pytester.runpytest("-p", "no:cacheprovider", "--collect-only", "-q", "rtl")
    walked.stdout.fnmatch_lines(["rtl/broken/contract.toml::check", "1 test collected*"])
    # --memcheck-contracts always adds its files; one outside the project is named by its absolute path
    outside = str(examples_dir() / "regfile" / "contract.toml")
    cli = pytester.runpytest("-p", "no:cacheprovider", "--collect-only", "-q", "tests", "--memcheck-contracts", outside)
    cli.stdout.fnmatch_lines(["tests/test_plain.py::test_plain", f"{outside}::check", "2 tests collected*"])


@pytest.mark.icarus
def test_rtl_that_does_not_compile_fails_its_item_with_the_compiler_lines(pytester: pytest.Pytester) -> None:
    root = _project(pytester, "regfile")
    verilog = root / "rtl" / "regfile" / "regfile_wrap.v"
    verilog.write_text(verilog.read_text() + "\nmodule unfinished(input a\n")
    res = pytester.runpytest(*BUDGET)
    res.assert_outcomes(passed=1, failed=1)
    res.stdout.fnmatch_lines(["memcheck: error: the RTL of * does not compile; iverilog says:", "*syntax error"])
    assert "Traceback" not in res.stdout.str()
