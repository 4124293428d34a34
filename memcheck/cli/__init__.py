"""The ``memcheck`` command line: thin shells over the public API.

Every command module registers itself on :data:`cli`; :func:`main` renders any
:class:`~memcheck.errors.MemcheckError` as one paragraph with exit code 2 (a traceback only
with ``--debug``).
"""

from __future__ import annotations

import sys
import traceback

import click

from memcheck.errors import MemcheckError

EXIT_OK = 0
EXIT_FAIL = 1
EXIT_ERROR = 2


@click.group(context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100})
@click.option("--debug", is_flag=True, help="Show Python tracebacks for errors (for bug reports).")
@click.version_option(package_name="memcheck")
@click.pass_context
def cli(ctx: click.Context, debug: bool) -> None:
    """memcheck: prove SRAM wrapper RTL against a memory contract, generate March tests and
    measure which faults they detect.

    Verdicts cover the modelled behaviour and fault models only; they are a verification aid,
    not sign-off.
    """
    ctx.ensure_object(dict)
    ctx.obj["debug"] = debug


#: Top-level modules of the ``sim`` extra (cocotb and what it brings); a command that needs them
#: and finds them missing gets one sentence naming the extra, not an internal error.
SIM_EXTRA_MODULES = frozenset({"cocotb", "cocotb_tools", "find_libpython"})


def render_error(exc: BaseException) -> str:
    """One paragraph for a user, whatever the error."""
    text = str(exc).strip() or exc.__class__.__name__
    return f"memcheck: error: {text}"


def missing_sim_extra(exc: ModuleNotFoundError) -> str | None:
    """The one-sentence advice when ``exc`` is a module of the ``sim`` extra, else None."""
    root = (exc.name or "").partition(".")[0]
    if root not in SIM_EXTRA_MODULES:
        return None
    return (
        f"this command runs a simulator and needs the sim extra, which is not installed (no module {root!r}): "
        "pip install 'memcheck[sim]'"
    )


def _usage_message(exc: click.exceptions.UsageError) -> str:
    """A click usage error as one paragraph, pointing at the command's --help."""
    where = exc.ctx.command_path if exc.ctx is not None else "memcheck"
    return f"{exc.format_message().rstrip('.')} (see '{where} --help')."


def _register_commands() -> None:
    # Imported for their side effect of adding commands to ``cli``; each module owns one area.
    from memcheck.cli import contract_cmds  # noqa: F401

    for optional in (
        "march_cmds",
        "fault_cmds",
        "check_cmds",
        "march_run_cmds",
        "synth_cmds",
        "bist_cmds",
        "campaign_cmds",
        "diagnose_cmds",
        "draft_cmds",
        "mutate_cmds",
    ):
        try:
            __import__(f"memcheck.cli.{optional}")
        except ModuleNotFoundError as exc:
            if exc.name != f"memcheck.cli.{optional}":
                raise


def _message(exc: BaseException) -> str:
    """The one paragraph shown for an exception that ended a command."""
    if isinstance(exc, click.exceptions.Abort):
        return "memcheck: aborted"
    if isinstance(exc, KeyboardInterrupt):
        return "memcheck: interrupted"
    if isinstance(exc, click.exceptions.UsageError):
        return render_error(RuntimeError(_usage_message(exc)))
    if isinstance(exc, click.exceptions.ClickException):
        return render_error(RuntimeError(exc.format_message()))
    if isinstance(exc, MemcheckError):
        return render_error(exc)
    advice = missing_sim_extra(exc) if isinstance(exc, ModuleNotFoundError) else None
    if advice:
        return render_error(RuntimeError(advice))
    # a bug of ours: still one paragraph unless --debug
    return render_error(
        RuntimeError(f"internal error ({exc.__class__.__name__}: {exc}); rerun with --debug and report it")
    )


def _report(exc: BaseException, debug: bool) -> int:
    """Render an exception that ended a command (a traceback too with ``--debug``); the exit code."""
    if isinstance(exc, click.exceptions.Exit):
        return int(exc.exit_code)
    if debug and not isinstance(exc, click.exceptions.ClickException | click.exceptions.Abort | KeyboardInterrupt):
        traceback.print_exception(exc)
    click.echo(_message(exc), err=True)
    return EXIT_ERROR


def main(argv: list[str] | None = None) -> int:
    """Entry point of the console script; returns the process exit code."""
    _register_commands()
    args = list(sys.argv[1:] if argv is None else argv)
    try:
        rv = cli.main(args=args, prog_name="memcheck", standalone_mode=False)
    except (Exception, KeyboardInterrupt, click.exceptions.Abort) as exc:
        return _report(exc, debug="--debug" in args)
    return int(rv) if isinstance(rv, int) else EXIT_OK


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
