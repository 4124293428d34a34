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


def render_error(exc: BaseException) -> str:
    """One paragraph for a user, whatever the error."""
    text = str(exc).strip() or exc.__class__.__name__
    return f"memcheck: error: {text}"


def _register_commands() -> None:
    # Imported for their side effect of adding commands to ``cli``; each module owns one area.
    from memcheck.cli import contract_cmds  # noqa: F401

    for optional in ("march_cmds", "fault_cmds", "check_cmds", "march_run_cmds", "synth_cmds", "bist_cmds"):
        try:
            __import__(f"memcheck.cli.{optional}")
        except ModuleNotFoundError as exc:
            if exc.name != f"memcheck.cli.{optional}":
                raise


def main(argv: list[str] | None = None) -> int:
    """Entry point of the console script; returns the process exit code."""
    _register_commands()
    args = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in args
    try:
        rv = cli.main(args=args, prog_name="memcheck", standalone_mode=False)
    except click.exceptions.Abort:
        click.echo("memcheck: aborted", err=True)
        return EXIT_ERROR
    except click.exceptions.ClickException as exc:
        exc.show()
        return EXIT_ERROR
    except click.exceptions.Exit as exc:
        return int(exc.exit_code)
    except MemcheckError as exc:
        if debug:
            traceback.print_exc()
        click.echo(render_error(exc), err=True)
        return EXIT_ERROR
    except KeyboardInterrupt:
        click.echo("memcheck: interrupted", err=True)
        return EXIT_ERROR
    except Exception as exc:  # a bug of ours: still one paragraph unless --debug
        if debug:
            traceback.print_exc()
        click.echo(
            render_error(
                RuntimeError(f"internal error ({exc.__class__.__name__}: {exc}); rerun with --debug and report it")
            ),
            err=True,
        )
        return EXIT_ERROR
    return int(rv) if isinstance(rv, int) else EXIT_OK


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
