"""Named custom tests: ``NAME=NOTATION`` on the command line and a user test library file (TOML).

A user library lists tests a team keeps beside the published ones::

    [[test]]
    name = "Team 14n"                                  # required, unique, not a library name
    notation = "{⇕(w0); ⇑(r0,w1,r1); ⇓(r1,w0,r0); ⇕(r0)}"  # required, March notation
    claims = ["SAF", "TF"]                              # optional: classes the team expects it to detect
    source = "test plan rev B"                          # optional: where the test comes from

Commands that take a test (``march list/show/patterns/coverage``, ``diagnose``) accept
``--library FILE``; a test is then looked up as ``NAME=NOTATION`` (the name given inline), a
user-library name, a published library name, or plain notation, in that order.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from pathlib import Path

from memcheck.errors import NotationError, UnknownAlgorithm, UsageError
from memcheck.march.library import FAULT_CLASSES, _key, get_algorithm, resolve_test, suggest_names
from memcheck.march.notation import MarchTest, parse_march

_KEYS = frozenset({"name", "notation", "claims", "source"})


@dataclass(frozen=True)
class UserTest:
    """One entry of a user library."""

    name: str
    notation: str
    claims: tuple[str, ...] = ()
    source: str = ""

    @property
    def test(self) -> MarchTest:
        return MarchTest(parse_march(self.notation).elements, name=self.name)


def _entry(i: int, raw: object, where: str) -> UserTest:
    if not isinstance(raw, dict):
        raise UsageError(f"{where}: test {i + 1} is not a table ([[test]] with name and notation)")
    unknown = sorted(set(raw) - _KEYS)
    if unknown:
        raise UsageError(
            f"{where}: test {i + 1} has unknown key(s) {', '.join(unknown)}; allowed: {', '.join(sorted(_KEYS))}"
        )
    name, notation = raw.get("name"), raw.get("notation")
    if not isinstance(name, str) or not name.strip() or not isinstance(notation, str):
        raise UsageError(f"{where}: test {i + 1} needs a non-empty string name and a string notation")
    claims = raw.get("claims", [])
    if not isinstance(claims, list) or any(c not in FAULT_CLASSES for c in claims):
        raise UsageError(f"{where}: test {name!r}: claims are fault classes among {', '.join(FAULT_CLASSES)}")
    try:
        parse_march(notation)
    except NotationError as exc:
        raise UsageError(f"{where}: test {name!r}: {exc}") from exc
    return UserTest(name.strip(), notation, tuple(claims), str(raw.get("source", "")))


def load_user_library(path: str | Path) -> tuple[UserTest, ...]:
    """Read and check a user library file; raises UsageError naming the file and the entry."""
    p = Path(path)
    try:
        doc = tomllib.loads(p.read_text(encoding="utf-8"))
    except OSError as exc:
        raise UsageError(f"cannot read test library {p}: {exc.strerror or exc}") from exc
    except tomllib.TOMLDecodeError as exc:
        raise UsageError(f"test library {p} is not valid TOML: {exc}") from exc
    raw = doc.get("test", [])
    if not isinstance(raw, list) or set(doc) - {"test"}:
        raise UsageError(f"test library {p}: the file holds [[test]] tables only")
    out = tuple(_entry(i, r, str(p)) for i, r in enumerate(raw))
    seen: set[str] = set()
    for t in out:
        if _key(t.name) in seen:
            raise UsageError(f"test library {p}: the name {t.name!r} is used twice")
        seen.add(_key(t.name))
        try:
            get_algorithm(t.name)
        except UnknownAlgorithm:
            continue
        raise UsageError(f"test library {p}: {t.name!r} is already a published library test; choose another name")
    return out


def find_user_test(name: str, library: tuple[UserTest, ...]) -> UserTest | None:
    for t in library:
        if _key(t.name) == _key(name):
            return t
    return None


def resolve_named(text: str, library: tuple[UserTest, ...] = ()) -> MarchTest:
    """``NAME=NOTATION``, a user-library name, a published name or notation, as a (named) test."""
    name, sep, rest = text.partition("=")
    if sep and "(" not in name and "{" not in name and name.strip():
        return MarchTest(parse_march(rest).elements, name=name.strip())
    user = find_user_test(text, library)
    if user is not None:
        return user.test
    try:
        return resolve_test(text)
    except UnknownAlgorithm as exc:
        close = [t.name for t in library if _key(text) and _key(text) in _key(t.name)] + suggest_names(text)
        if library and close:
            raise UnknownAlgorithm(
                f"{text!r} is not a test of the library or of the user library, and not March notation. "
                f"Did you mean {' or '.join(close[:3])}?"
            ) from exc
        raise
