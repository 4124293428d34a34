"""pytest plugin: every memory contract of a repository as one pytest test (docs/ci.md).

Registered in the ``pytest11`` entry-point group, so installing memcheck makes it available; it
does nothing until contracts are named, by the ini option ``memcheck_contracts = rtl/**/contract.toml``
(globs relative to the ini file's folder) or by ``--memcheck-contracts GLOB`` (relative to the
folder pytest was started in; given, it replaces the ini option). Each contract file becomes one
item, ``PATH::check``, which runs :func:`memcheck.sim.check_contract`; a difference fails the item
with the minimal trace table and the replay command, an invalid contract errors it in set-up with
the contract's message. Each item writes to its own folder, ``memcheck-out/<the contract's path>``,
so items run side by side under pytest-xdist without sharing a build. One seed (``--memcheck-seed``,
else drawn once and shown in the header) drives every item, xdist workers included.

The fixture ``memcheck_check(path, **options)`` runs a check from a user's own test function and
returns the :class:`~memcheck.records.CheckResult`. The simulator side (cocotb) is imported only
when an item or the fixture runs, never at pytest start-up.
"""

from __future__ import annotations

import argparse
import glob
import random
import re
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

import pytest

from memcheck._outdirs import contract_name, path_folder
from memcheck.errors import MemcheckError
from memcheck.sim.options import SimOptions

if TYPE_CHECKING:
    from memcheck.records import CheckResult

INI_NAME = "memcheck_contracts"
SEED_KEY = "memcheck_seed"
_DEFAULTS = SimOptions()


@dataclass(frozen=True)
class PluginSettings:
    """What the plugin was told: contract files found, seed, budgets and output folder."""

    globs: tuple[tuple[str, Path], ...]
    contracts: tuple[Path, ...]
    seed: int
    examples: int
    bulk_examples: int
    out_base: Path
    explicit: bool

    def options(self, out_dir: Path) -> SimOptions:
        return _DEFAULTS.replace(
            seed=self.seed, examples=self.examples, bulk_examples=self.bulk_examples, out_dir=out_dir
        )


_SEED = pytest.StashKey[int]()
_SETTINGS = pytest.StashKey[PluginSettings]()
_COLLECTED = pytest.StashKey[set[Path]]()


def _count(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        value = -1
    if value < 0:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number of 0 or more")
    return value


def _seed(text: str) -> int:
    value = _count(text)
    if value >= 1 << 64:
        raise argparse.ArgumentTypeError(f"{text!r} is over the largest seed, 2**64 - 1")
    return value


def pytest_addoption(parser: pytest.Parser) -> None:
    group = parser.getgroup("memcheck", "memcheck: memory contracts as tests")
    group.addoption(
        "--memcheck-contracts",
        action="append",
        metavar="GLOB",
        default=None,
        help=f"Contract files to check, one item each (repeatable; ** allowed; replaces the ini option {INI_NAME}).",
    )
    group.addoption("--memcheck-seed", type=_seed, default=None, metavar="N", help="Seed of every check.")
    group.addoption(
        "--memcheck-examples",
        type=_count,
        default=_DEFAULTS.examples,
        metavar="N",
        help=f"Short property examples per contract (default {_DEFAULTS.examples}).",
    )
    group.addoption(
        "--memcheck-bulk-examples",
        type=_count,
        default=_DEFAULTS.bulk_examples,
        metavar="N",
        help=f"Bulk property examples per contract (default {_DEFAULTS.bulk_examples}).",
    )
    group.addoption(
        "--memcheck-out",
        default=None,
        metavar="DIR",
        help="Folder of the checks' outputs (default: memcheck-out beside the ini file).",
    )
    parser.addini(INI_NAME, type="args", default=[], help="Globs of contract files to check, one item each.")


def pytest_configure(config: pytest.Config) -> None:
    workerinput = getattr(config, "workerinput", None)
    if workerinput is not None and SEED_KEY in workerinput:
        seed = int(workerinput[SEED_KEY])
    else:
        given = config.getoption("memcheck_seed")
        seed = random.SystemRandom().randrange(1 << 32) if given is None else int(given)
    config.stash[_SEED] = seed
    config.stash[_COLLECTED] = set()


@pytest.hookimpl(optionalhook=True)
def pytest_configure_node(node: Any) -> None:
    """pytest-xdist: every worker checks with the controller's seed."""
    node.workerinput[SEED_KEY] = node.config.stash[_SEED]


def _globs(config: pytest.Config) -> tuple[tuple[str, Path], ...]:
    given = config.getoption("memcheck_contracts")
    if given:
        return tuple((g, config.invocation_params.dir) for g in given)
    base = config.inipath.parent if config.inipath is not None else config.rootpath
    return tuple((str(g), base) for g in config.getini(INI_NAME))


def find_contracts(globs: Iterable[tuple[str, Path]]) -> tuple[Path, ...]:
    """The files the globs match (each relative to its folder), sorted, each once.

    Raises
    ------
    pytest.UsageError
        A glob that matches no file (a silent pass would hide a typo).
    """
    found: dict[Path, None] = {}
    for pattern, base in globs:
        hits = sorted(Path(h) for h in glob.glob(str(base / pattern), recursive=True) if Path(h).is_file())
        if not hits:
            raise pytest.UsageError(
                f"memcheck: the contract glob {pattern!r} matches no file (looked in {base}); fix the glob in "
                f"--memcheck-contracts or in the ini option {INI_NAME}."
            )
        found.update((h.resolve(), None) for h in hits)
    return tuple(found)


@pytest.hookimpl(tryfirst=True)
def pytest_sessionstart(session: pytest.Session) -> None:
    config = session.config
    globs = _globs(config)
    if not globs:
        return
    out = config.getoption("memcheck_out")
    config.stash[_SETTINGS] = PluginSettings(
        globs=globs,
        contracts=find_contracts(globs),
        seed=config.stash[_SEED],
        examples=config.getoption("memcheck_examples"),
        bulk_examples=config.getoption("memcheck_bulk_examples"),
        out_base=Path(out).resolve() if out else config.rootpath / "memcheck-out",
        explicit=bool(config.getoption("memcheck_contracts")),
    )


def pytest_report_header(config: pytest.Config) -> list[str]:
    s = config.stash.get(_SETTINGS, None)
    if s is None:
        return []
    return [
        f"memcheck: seed {s.seed}; {len(s.contracts)} contract(s) from {', '.join(g for g, _ in s.globs)}; "
        f"{s.examples} examples, {s.bulk_examples} bulk examples; outputs in {s.out_base}"
    ]


def pytest_collect_file(file_path: Path, parent: pytest.Collector) -> ContractFile | None:
    s = parent.config.stash.get(_SETTINGS, None)
    if s is None or file_path.resolve() not in s.contracts:
        return None
    parent.config.stash[_COLLECTED].add(file_path.resolve())
    node: ContractFile = ContractFile.from_parent(parent, path=file_path)
    return node


@pytest.hookimpl(tryfirst=True)
def pytest_collection_modifyitems(session: pytest.Session, config: pytest.Config, items: list[pytest.Item]) -> None:
    """Contracts that pytest's own walk did not reach (outside ``testpaths``) join a plain ``pytest`` run;
    with explicit paths on the command line only ``--memcheck-contracts`` adds them."""
    s = config.stash.get(_SETTINGS, None)
    if s is None or (config.args_source == pytest.Config.ArgsSource.ARGS and not s.explicit):
        return
    seen = config.stash[_COLLECTED]
    for path in s.contracts:
        if path not in seen:
            seen.add(path)
            inside = path.is_relative_to(config.rootpath.resolve())
            node = ContractFile.from_parent(session, path=path, nodeid=None if inside else str(path))
            items.extend(session.genitems(node))


class ContractFile(pytest.File):
    """A contract file: one item, ``check``."""

    def collect(self) -> Iterator[ContractItem]:
        yield ContractItem.from_parent(self, name="check")


class ContractDiffers(Exception):
    """The RTL does not conform to its contract (carries the result for the failure text)."""

    def __init__(self, result: CheckResult) -> None:
        super().__init__(result.summary())
        self.result = result


class ContractItem(pytest.Item):
    """One contract checked under Icarus: pass, fail (minimal trace + replay command) or error."""

    result: CheckResult | None = None

    def _settings(self) -> PluginSettings:
        return self.config.stash[_SETTINGS]

    def setup(self) -> None:
        """Load the contract first: an invalid one errors this item with its message, others still run."""
        from memcheck.contract import load_contract
        from memcheck.sim.checking.support import require_simulator_support

        try:
            require_simulator_support(load_contract(self.path))
            return
        except MemcheckError as exc:
            message = f"memcheck: invalid contract: {exc}"
        pytest.fail(message, pytrace=False)  # outside the except block: no chained traceback

    def runtest(self) -> None:
        from memcheck.report import write_reports
        from memcheck.sim import check_contract

        s = self._settings()
        out = path_folder(self.path, self.config.rootpath, s.out_base)
        result = check_contract(_as_given(self.path), s.options(out))
        self.result = result
        if result.out_dir is not None:
            write_reports(result, json_file=result.out_dir / "report.json", text_file=result.out_dir / "report.txt")
        self.user_properties.extend(
            [("memcheck_seed", result.seed), ("memcheck_verdict", str(result.verdict)), ("memcheck_out", str(out))]
        )
        if not result.passed:
            if result.replay_command:
                self.user_properties.append(("memcheck_replay", result.replay_command))
            raise ContractDiffers(result)

    def repr_failure(
        self, excinfo: pytest.ExceptionInfo[BaseException], style: Any = None
    ) -> str | Any:  # pytest's TerminalRepr when not ours
        if isinstance(excinfo.value, ContractDiffers):
            from memcheck.report import render_report

            return render_report(excinfo.value.result)
        if isinstance(excinfo.value, MemcheckError):
            return f"memcheck: error: {excinfo.value}"
        return super().repr_failure(excinfo, style=style)

    def reportinfo(self) -> tuple[Path, int | None, str]:
        return self.path, None, f"memcheck contract {self.nodeid}"


def _as_given(path: Path) -> Path:
    """``path`` relative to the working folder when it lies below it (reports and headlines read better)."""
    try:
        return path.resolve().relative_to(Path.cwd().resolve())
    except ValueError:
        return path


def _folder_name(nodeid: str) -> str:
    return re.sub(r"[^A-Za-z0-9_.-]+", "_", nodeid).strip("_") or "test"


@pytest.fixture
def memcheck_check(request: pytest.FixtureRequest) -> Callable[..., CheckResult]:
    """``memcheck_check(path, **options)``: check a contract from your own test; returns the result.

    ``options`` are :class:`~memcheck.sim.options.SimOptions` fields (``examples=50``,
    ``phases=("smoke",)``...); the seed and budgets default to the plugin's options, the output
    folder to ``memcheck-out/fixture/<test id>/<contract name>``. Bad input raises
    :class:`~memcheck.errors.MemcheckError`; a difference does not raise: assert on
    ``result.passed`` (``assert result.passed, result.summary()``)."""
    config = request.config
    out = config.getoption("memcheck_out")
    base = (
        (Path(out).resolve() if out else config.rootpath / "memcheck-out")
        / "fixture"
        / _folder_name(request.node.nodeid)
    )
    defaults = PluginSettings(
        globs=(),
        contracts=(),
        seed=config.stash[_SEED],
        examples=config.getoption("memcheck_examples"),
        bulk_examples=config.getoption("memcheck_bulk_examples"),
        out_base=base,
        explicit=False,
    )

    def check(path: str | Path, **options: Any) -> CheckResult:
        from memcheck.sim import check_contract

        opts = defaults.options(base / contract_name(Path(path).resolve())).replace(**options)
        return check_contract(path, opts)

    return check
