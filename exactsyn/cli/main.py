"""The ``exactsyn`` command group: every command is defined in its own module and attached here.

Exit status of every command: 0 success, 1 no circuit within the limits (or a check
failed), 2 bad input (one line on stderr, no traceback).

:class:`OneLineGroup` runs the commands with click's ``standalone_mode`` off and turns
whatever escapes into one line on stderr: click's own usage errors (an unknown option,
a value that is not a number, a directory where a file is expected) in the same
``exactsyn: error: ...`` form as every other bad input, an :class:`ExactsynError` or an
``OSError`` (exit 2), an interrupt — Ctrl-C (exit 130) or SIGTERM (exit 143,
:mod:`exactsyn.cli.stopping`), with what the command kept — and a bug (exit 1, marked
"internal error"; ``EXACTSYN_DEBUG=1`` shows its traceback instead).
"""

from __future__ import annotations

import os
import sys
from collections.abc import Sequence
from typing import Any, NoReturn

import click

from exactsyn.cli.apply import apply
from exactsyn.cli.batch import batch, table
from exactsyn.cli.check import check
from exactsyn.cli.optimise import optimise
from exactsyn.cli.options import REMOVED_SPELLINGS
from exactsyn.cli.pictures import draw, report
from exactsyn.cli.stopping import exit_after_interrupt, interrupts
from exactsyn.cli.synth import synth
from exactsyn.cli.tables import tables
from exactsyn.errors import ExactsynError, Interrupted, did_you_mean
from exactsyn.version import __version__

DEBUG_VARIABLE = "EXACTSYN_DEBUG"


def _say(message: str, code: int) -> NoReturn:
    click.echo(f"exactsyn: error: {' '.join(message.split())}", err=True)
    sys.exit(code)


def click_message(e: click.ClickException) -> str:
    """A click exception as one line: the command, what is wrong, where to read more.

    A spelling of the previous release (:data:`~exactsyn.cli.options.REMOVED_SPELLINGS`)
    is named with what replaced it.
    """
    text = e.format_message().strip().rstrip(".")
    ctx = getattr(e, "ctx", None)
    removed = REMOVED_SPELLINGS.get(ctx.command.name or "", {}) if ctx is not None else {}
    if isinstance(e, click.NoSuchOption) and ctx is not None:
        if e.option_name in removed:
            text = f"No such option '{e.option_name}': it is now {removed[e.option_name]}"
        else:  # click would also suggest hidden options: suggest among the visible ones only
            shown = [o for p in ctx.command.params if not getattr(p, "hidden", False) for o in p.opts]
            text = f"No such option '{e.option_name}'{did_you_mean(e.option_name, shown)}"
    elif "ARGUMENT" in removed and text.startswith("Got unexpected extra argument"):  # click's words for it
        text += f": it is now {removed['ARGUMENT']}"
    where = ctx.command_path if ctx is not None else "exactsyn"
    if isinstance(e, click.UsageError):
        text = text[0].lower() + text[1:] if text else text
        hint = f" (see '{where} --help')" if "--help" not in text else ""
        return f"{where.removeprefix('exactsyn ').removeprefix('exactsyn')}: {text}{hint}".lstrip(": ")
    return text


#: What an out-of-memory failure advises, by command (nothing where no option would help).
OUT_OF_MEMORY_ADVICE = {
    "synth": "try fewer lines, a smaller --library or --bounds cheap",
    "batch": "try fewer --jobs, a smaller --library or --bounds cheap",
    "apply": "give --inputs for fewer rows",
    "optimise": "try a smaller --window",
    "tables": "'exactsyn tables build --help' says how much memory a build needs",
}


class _Stopped(Exception):
    """A :class:`KeyboardInterrupt` carried past click, which would print a blank line for it."""

    def __init__(self, interrupt: BaseException) -> None:
        super().__init__(str(interrupt))
        self.kept = interrupt.kept if isinstance(interrupt, Interrupted) else ""


class OneLineGroup(click.Group):
    """A click group whose every error is one line on stderr (module docstring)."""

    running = ""  # the command being run, for advice that depends on it

    def resolve_command(
        self, ctx: click.Context, args: list[str]
    ) -> tuple[str | None, click.Command | None, list[str]]:
        name, command, rest = super().resolve_command(ctx, args)
        OneLineGroup.running = name or ""
        return name, command, rest

    def invoke(self, ctx: click.Context) -> Any:
        try:
            return super().invoke(ctx)
        except KeyboardInterrupt as e:
            raise _Stopped(e) from None

    def main(  # type: ignore[override]
        self,
        args: Sequence[str] | None = None,
        prog_name: str | None = None,
        complete_var: str | None = None,
        standalone_mode: bool = True,
        **extra: Any,
    ) -> Any:
        if not standalone_mode:
            return super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        with interrupts() as signals:
            try:
                code = self._main_one_line(args, prog_name, complete_var, extra)
            except (KeyboardInterrupt, click.Abort, _Stopped) as e:
                kept = e.kept if isinstance(e, _Stopped | Interrupted) else ""
                click.echo(f"exactsyn: {signals.what()}: {kept or 'nothing was written'}", err=True)
                exit_after_interrupt(signals.exit_status())
        sys.exit(code if isinstance(code, int) else 0)

    def _main_one_line(self, args: Sequence[str] | None, prog_name: str | None, complete_var: str | None,
                       extra: dict[str, Any]) -> Any:
        """Run the command; every error but an interrupt becomes one line and an exit status."""
        try:
            return super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        except click.exceptions.Exit as e:
            sys.exit(e.exit_code)
        except click.ClickException as e:
            _say(click_message(e), e.exit_code)
        except ExactsynError as e:
            _say(e.message, 2)
        except BrokenPipeError:
            # the reader of stdout went away (e.g. '| head'): nothing more to say
            sys.stderr.close()
            sys.exit(1)
        except OSError as e:
            if os.environ.get(DEBUG_VARIABLE):
                raise
            where = f" {e.filename}" if e.filename else ""
            _say(f"cannot use{where}: {e.strerror or e}", 2)
        except MemoryError:
            advice = OUT_OF_MEMORY_ADVICE.get(OneLineGroup.running, "")
            _say("out of memory" + (f"; {advice}" if advice else ""), 1)
        except Exception as e:  # a bug: one line, not a traceback, unless asked
            if isinstance(e, _Stopped):
                raise
            if os.environ.get(DEBUG_VARIABLE):
                raise
            _say(
                f"internal error ({type(e).__name__}: {e}); please report it with the command that caused it "
                f"(set {DEBUG_VARIABLE}=1 for the traceback)",
                1,
            )


@click.group(cls=OneLineGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="exactsyn")
def main() -> None:
    """exactsyn — provably minimal reversible circuits by SAT.

    \b
    Quick start:
      exactsyn synth --perm 1,0,3,2,5,7,4,6 --library nct
      exactsyn synth --cycles "(3 7)" --library nct -o toffoli.qasm
      exactsyn apply toffoli.qasm

    Line l carries bit l of the state (line 0 = least significant bit); a permutation
    p lists p[i], the output for input i.

    \b
    Options mean one thing in every command:
      -o/--output FILE   where the result goes; its suffix picks the format
      --format NAME      the format, winning over the suffix
      -j/--jobs N        how many processes the command may use
      --store FILE       the results store of batch, table and report
      --time-limit S     seconds for the whole command's search (batch: per item)
      -q/--quiet         nothing on stderr but errors
    """


for command in (synth, optimise, check, apply, batch, table, tables, draw, report):
    main.add_command(command)
