"""Which files of a contract are mutated and which mutants are run (pure: reads files, no simulator)."""

from __future__ import annotations

import dataclasses
import difflib
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from memcheck.contract import Contract
from memcheck.errors import ContractError, UsageError
from memcheck.mutation.operators import Mutant, find_mutants
from memcheck.mutation.results import sample_mutants
from memcheck.mutation.tokens import Kind, tokenize


@dataclass(frozen=True)
class MutationPlan:
    """The files to mutate, every candidate mutant, and the sampled ones with their ids (``M007``:
    the index among the candidates, so an id names the same change for any ``--mutants``)."""

    files: tuple[Path, ...]
    texts: dict[Path, str]
    candidates: tuple[Mutant, ...]
    chosen: tuple[tuple[str, Mutant], ...]


def _read(path: Path) -> str:
    try:
        return path.read_text(encoding="utf-8", errors="replace")
    except OSError as exc:
        raise ContractError(f"cannot read RTL source {path} ({exc.strerror or exc}).") from None


def defines_module(text: str, name: str) -> bool:
    """True when the Verilog ``text`` declares ``module name``."""
    toks = tokenize(text)
    return any(
        t.text in ("module", "macromodule") and k + 1 < len(toks) and toks[k + 1].text == name and t.kind == Kind.NAME
        for k, t in enumerate(toks)
    )


def mutation_files(contract: Contract) -> tuple[Path, ...]:
    """``[rtl] mutate``, or else the source that defines ``top``.

    Raises
    ------
    ContractError
        No ``[rtl]`` table, or no source defines ``top`` (and ``[rtl] mutate`` is not given).
    """
    rtl = contract.rtl
    if rtl is None:
        raise ContractError("the contract has no [rtl] table, so there is no RTL to mutate.")
    if rtl.mutate:
        return rtl.mutate
    for src in rtl.sources:
        if defines_module(_read(src), rtl.top):
            return (src,)
    raise ContractError(
        f"no file of [rtl] sources defines module {rtl.top!r}; name the files to mutate with [rtl] mutate = [...]."
    )


def plan_mutants(
    contract: Contract,
    mutants: int,
    seed: int,
    given: Sequence[Mutant] | None = None,
    only: Sequence[str] = (),
) -> MutationPlan:
    """Every candidate mutant of the contract's mutation files and ``mutants`` of them drawn with ``seed``;
    with ``only`` (ids such as ``M007``), exactly those candidates; with ``given`` (hand-made mutants of
    those files), exactly those, named ``H000``, ``H001``...

    Raises
    ------
    UsageError
        ``mutants`` below 1, an unknown id in ``only``, or no operator applies anywhere in the files.
    """
    if mutants < 1:
        raise UsageError(f"--mutants {mutants}: allowed: 1 or more mutants.")
    files = mutation_files(contract)
    texts = {f: _read(f) for f in files}
    if given is not None:
        return _given_plan(files, texts, given)
    candidates = tuple(m for f in files for m in find_mutants(texts[f], f))
    if not candidates:
        names = ", ".join(f.name for f in files)
        raise UsageError(
            f"no mutation operator applies to {names} (no operators, conditions, sized constants, selects or "
            "arms to change); name other wrapper files with [rtl] mutate = [...]."
        )
    if only:
        return MutationPlan(files, texts, candidates, _only(candidates, only))
    chosen = tuple((f"M{k:03d}", m) for k, m in sample_mutants(candidates, mutants, seed))
    return MutationPlan(files, texts, candidates, chosen)


def _only(candidates: tuple[Mutant, ...], ids: Sequence[str]) -> tuple[tuple[str, Mutant], ...]:
    ids_ok = {f"M{k:03d}": k for k in range(len(candidates))}
    bad = [i for i in ids if i.upper() not in ids_ok]
    if bad:
        raise UsageError(
            f"--only {', '.join(bad)}: no such mutant; allowed: M000 to M{len(candidates) - 1:03d} "
            f"(the ids of the {len(candidates)} candidates)."
        )
    picked = sorted({ids_ok[i.upper()] for i in ids})
    return tuple((f"M{k:03d}", candidates[k]) for k in picked)


def _given_plan(files: tuple[Path, ...], texts: dict[Path, str], given: Sequence[Mutant]) -> MutationPlan:
    if not given:
        raise UsageError("no mutants given; allowed: at least one hand-made mutant.")
    by_path = {f.resolve(): f for f in files}
    fitted = []
    for m in given:
        f = by_path.get(m.file.resolve())
        if f is None:
            allowed = ", ".join(str(x) for x in files)
            raise UsageError(f"mutant of {m.file}: allowed: mutants of the mutation files ({allowed}).")
        m = dataclasses.replace(m, file=f)
        m.apply(texts[f])  # raises when the mutant does not fit the file
        fitted.append(m)
    return MutationPlan(files, texts, tuple(fitted), tuple((f"H{k:03d}", m) for k, m in enumerate(fitted)))


def source_diff(mutant: Mutant, text: str, ident: str) -> str:
    """The unified diff (one line of context) between ``text`` and the mutant."""
    new = mutant.apply(text)
    name = str(mutant.file)
    lines = difflib.unified_diff(
        text.splitlines(keepends=True), new.splitlines(keepends=True), name, f"{name} ({ident})", n=1
    )
    return "".join(ln if ln.endswith("\n") else ln + "\n" for ln in lines)


__all__ = ["MutationPlan", "defines_module", "mutation_files", "plan_mutants", "source_diff"]
