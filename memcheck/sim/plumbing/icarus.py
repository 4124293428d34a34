"""cocotb's Icarus runner, with our process control: logs to files, a stall watchdog, quiet logging.

The stock runner runs the simulator with ``subprocess.run`` and no time limit. A check runs for as
long as its budget asks, so instead of a wall-clock limit we watch a progress file the simulation
side appends to after every batch: when it stops growing for ``stall_seconds`` the simulator is
killed and :class:`Stalled` names the last thing it was doing.
"""

from __future__ import annotations

import contextlib
import json
import logging
import os
import signal
import subprocess
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import IO, Any

from cocotb_tools.runner import Icarus

ProgressCallback = Callable[[dict[str, Any]], None]


class CommandFailed(Exception):
    """A build or simulator command exited with a non-zero status."""

    def __init__(self, returncode: int) -> None:
        super().__init__(f"command failed with return code {returncode}")
        self.returncode = returncode


class Stalled(Exception):
    """The simulation made no progress for too long; ``last`` is its last progress record."""

    def __init__(self, seconds: float, last: dict[str, Any] | None) -> None:
        super().__init__(f"no progress for {seconds:g} s")
        self.seconds = seconds
        self.last = last


@dataclass
class Watch:
    """Stall watchdog and progress relay for one simulator run."""

    progress_file: Path
    stall_seconds: float
    on_progress: ProgressCallback | None = None
    #: Allowance before the first progress record: starting Python inside the simulator can take
    #: seconds on a loaded machine, which is not a stall.
    startup_seconds: float = 60.0
    last: dict[str, Any] | None = None
    _offset: int = 0
    _partial: bytes = b""

    def poll(self) -> bool:
        """Read new progress records; True if there were any."""
        try:
            with self.progress_file.open("rb") as fh:
                fh.seek(self._offset)
                chunk = fh.read()
        except FileNotFoundError:
            return False
        if not chunk:
            return False
        self._offset += len(chunk)
        *complete, self._partial = (self._partial + chunk).split(b"\n")
        for line in reversed(complete):  # only the newest record matters
            try:
                rec = json.loads(line)
            except ValueError:
                continue
            if isinstance(rec, dict):
                self.last = rec
                if self.on_progress is not None:
                    self.on_progress(rec)
                break
        return True

    def run(self, cmd: Sequence[str], cwd: Path, env: dict[str, str], stdout: IO[str] | None) -> None:
        proc = subprocess.Popen(
            list(cmd),
            cwd=cwd,
            env=env,
            stdout=stdout if stdout is not None else subprocess.DEVNULL,
            stderr=subprocess.STDOUT,
            start_new_session=True,
        )
        last_change = time.monotonic()
        try:
            while True:
                try:
                    rc = proc.wait(timeout=0.1)
                except subprocess.TimeoutExpired:
                    rc = None
                if self.poll():
                    last_change = time.monotonic()
                if rc is not None:
                    self.poll()
                    if rc != 0:
                        raise CommandFailed(rc)
                    return
                limit = self.stall_seconds if self.last is not None else max(self.stall_seconds, self.startup_seconds)
                if time.monotonic() - last_change > limit:
                    _kill(proc)
                    raise Stalled(limit, self.last)
        except BaseException:
            _kill(proc)
            raise


def _kill(proc: subprocess.Popen[bytes]) -> None:
    """End the simulator we started (its own process group), by id."""
    if proc.poll() is not None:
        return
    with contextlib.suppress(ProcessLookupError, PermissionError):
        os.killpg(proc.pid, signal.SIGKILL)
    with contextlib.suppress(Exception):
        proc.wait(timeout=5)


class QuietIcarus(Icarus):
    """Icarus runner that writes command output to the log file only and can be watched."""

    def __init__(self, watch: Watch | None = None, vcd: bool = False) -> None:
        super().__init__()
        log = logging.getLogger("memcheck.sim.runner")
        log.propagate = False
        if not log.handlers:
            log.addHandler(logging.NullHandler())
        self.log = log
        self.watch = watch
        self.vcd = vcd
        self.forced_env: dict[str, str] = {}

    def _set_env_test(self) -> None:
        super()._set_env_test()
        # The stock runner lets the caller's environment override extra_env; ours must win.
        self.env.update(self.forced_env)

    def _execute_cmds(self, cmds: Sequence[Sequence[str]], cwd: Any, stdout: IO[str] | None = None) -> None:
        for cmd in cmds:
            if self.watch is not None:
                self.watch.run(cmd, Path(cwd), self.env, stdout)
                continue
            result = subprocess.run(
                list(cmd),
                cwd=cwd,
                env=self.env,
                check=False,
                stdout=stdout if stdout is not None else subprocess.DEVNULL,
                stderr=subprocess.STDOUT,
            )
            if result.returncode != 0:
                raise CommandFailed(result.returncode)

    def _test_command(self) -> list[list[str]]:
        cmds: list[list[str]] = super()._test_command()
        if self.vcd:
            # The stock runner passes -none (no dump files) unless it dumps the whole design itself;
            # our harness dumps only the replayed trace, as VCD.
            cmds = [["-vcd" if a == "-none" else a for a in c] for c in cmds]
        return cmds
