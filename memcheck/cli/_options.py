"""Click options shared by several commands, so each means the same everywhere.

* ``--seed``: one convention for every command. Omitted, a fresh seed is drawn, printed in the
  command's first output line and recorded in its reports; given, the run repeats exactly.
* ``--order`` with ``--any-order``: how a March test walks the addresses.
"""

from __future__ import annotations

import copy
import random
from collections.abc import Callable
from typing import Any, TypeVar

import click

from memcheck.march.orders import ORDER_KINDS

_F = TypeVar("_F", bound=Callable[..., Any])

#: Largest seed a command accepts.
MAX_SEED = (1 << 64) - 1


def fresh_seed() -> int:
    """A seed for a run whose user gave none (printed and recorded by the caller)."""
    return random.SystemRandom().randrange(1 << 32)


def resolve_seed(seed: int | None) -> int:
    """``seed`` itself, or a fresh one when it is None."""
    return fresh_seed() if seed is None else seed


def seed_option(f: _F) -> _F:
    """``--seed N``: every random choice of the command; omitted, a fresh seed (printed)."""
    return click.option(
        "--seed",
        type=click.IntRange(min=0, max=MAX_SEED),
        default=None,
        help="Seed of every random choice (stimulus, sampling, the LFSR order's start state). "
        "Omitted: a fresh seed, printed and recorded so the run can be repeated.",
    )(f)


def add_hidden_alias(group: click.Group, command: click.Command) -> None:
    """Register ``command`` on ``group`` too, under its own name but hidden from help (old scripts)."""
    alias = copy.copy(command)
    alias.hidden = True
    group.add_command(alias, command.name)


def address_order_options(f: _F) -> _F:
    """``--order`` and ``--any-order``, shared by every command that walks a March test's addresses."""
    f = click.option(
        "--any-order",
        default="up",
        show_default=True,
        type=click.Choice(("up", "down")),
        help="Walk used by elements whose order is 'any' (⇕).",
    )(f)
    return click.option(
        "--order",
        default="linear",
        show_default=True,
        type=click.Choice(ORDER_KINDS),
        help="Address order of up elements (down is its exact reverse).",
    )(f)
