"""Replay files: a failing trace and everything needed to run it again, as JSON.

A replay file names its contract (relative to the replay file, so a project folder can move) and
holds the failure: the preamble steps, the model start, the trace, and the mismatch it showed.
"""

from __future__ import annotations

import hashlib
import json
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from memcheck._atomic import write_text_atomic
from memcheck.errors import ReplayError
from memcheck.records import Failure

FORMAT = "memcheck-replay"
VERSION = 1


def file_digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@dataclass(frozen=True)
class ReplayFile:
    contract_path: Path
    failure: Failure
    seed: int
    contract_digest: str = ""

    def to_json(self, where: Path) -> dict[str, Any]:
        rel = os.path.relpath(self.contract_path.resolve(), where.resolve().parent)
        return {
            "format": FORMAT,
            "version": VERSION,
            "contract": rel,
            "contract_sha256": self.contract_digest,
            "seed": self.seed,
            "failure": self.failure.to_json(),
        }

    def write(self, path: Path) -> Path:
        return write_text_atomic(path, json.dumps(self.to_json(path), indent=1) + "\n")


def read_replay(path: str | Path) -> ReplayFile:
    """Load a replay file; :class:`ReplayError` says what is wrong with it."""
    p = Path(path)
    try:
        obj = json.loads(p.read_text(encoding="utf-8"))
    except OSError as exc:
        raise ReplayError(f"{p}: cannot read the replay file ({exc.strerror or exc}).") from None
    except (UnicodeDecodeError, ValueError) as exc:
        raise ReplayError(f"{p}: not a memcheck replay file (not JSON: {exc}).") from None
    if not isinstance(obj, dict) or obj.get("format") != FORMAT:
        raise ReplayError(f'{p}: not a memcheck replay file (no "format": "{FORMAT}").')
    if obj.get("version") != VERSION:
        raise ReplayError(f"{p}: replay file version {obj.get('version')!r}; this memcheck reads version {VERSION}.")
    try:
        contract = (p.resolve().parent / str(obj["contract"])).resolve()
        failure = Failure.from_json(obj["failure"])
        seed = int(obj.get("seed", 0))
    except (KeyError, TypeError, ValueError) as exc:
        raise ReplayError(f"{p}: the replay file is damaged ({type(exc).__name__}: {exc}).") from None
    return ReplayFile(contract, failure, seed, str(obj.get("contract_sha256", "")))
