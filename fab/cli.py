"""The statorsmith command line: parse, call one library function, print.

Every user error ends as one line on stderr and exit code 2, never a traceback.
"""

from __future__ import annotations

import signal
import sys
from pathlib import Path

import click

from fab import OutputError
from layout.balance import MassListError
from layout.pairs import SORT_KEYS, STATORS
from layout.spec import DesignError, read_text_input

EXIT_USER_ERROR = 2


class Stopped(BaseException):
    """Ctrl-C or SIGTERM, raised wherever the program is, so that `build` removes its
    half-written folder on the way out. Not a KeyboardInterrupt: click would turn that into
    its own Abort and print a line of its own first."""

    WORDS = {signal.SIGINT: "Interrupted", signal.SIGTERM: "Terminated"}

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signum

    @property
    def exit_code(self) -> int:
        return 128 + self.signum  # as shells report a process ended by a signal


_RECEIVED: list[int] = []  # the signal that stopped us, once one has


def _on_signal(signum, _frame):
    _RECEIVED.append(signum)
    raise Stopped(signum)


class CountRange(click.ParamType):
    """`12` or `6-36`: a whole-number range, ends included."""

    name = "range"

    def __init__(self, lo: int, hi: int):
        self.lo, self.hi = lo, hi

    def convert(self, value, param, ctx):
        if isinstance(value, range):
            return value
        text = str(value).strip()
        try:
            if "-" in text:
                a, b = (int(x) for x in text.split("-", 1))
            else:
                a = b = int(text)
        except ValueError:
            self.fail(f"{value!r}: give a number or a range like {self.lo}-{self.hi}", param, ctx)
        if a > b:
            self.fail(f"{value!r}: the range must go from low to high", param, ctx)
        if a < self.lo or b > self.hi:
            self.fail(f"{value!r}: allowed {self.lo} to {self.hi}", param, ctx)
        return range(a, b + 1)


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="statorsmith")
def cli():
    """Design checks and build files for small axial-flux permanent-magnet alternators."""


@cli.command()
@click.option("--phases", type=click.Choice(["1", "3"]), default="3", show_default=True)
@click.option(
    "--coils",
    type=CountRange(2, 96),
    default="6-36",
    show_default=True,
    help="coil positions, a number or a range",
)
@click.option(
    "--magnets",
    type=CountRange(2, 120),
    default="4-48",
    show_default=True,
    help="magnets per disc (even counts only), a number or a range",
)
@click.option(
    "--sort",
    type=click.Choice(list(SORT_KEYS)),
    default="coils",
    show_default=True,
)
@click.option(
    "--stator",
    type=click.Choice(list(STATORS)),
    default="coreless",
    show_default=True,
    help="coreless coils (span free, up to a pole pitch) or tooth coils round iron teeth",
)
@click.option("--balanced-only", is_flag=True, help="leave out combinations that cannot work")
@click.option("--json", "as_json", is_flag=True, help="print a JSON array for scripts")
def pairs(phases, coils, magnets, sort, stator, balanced_only, as_json):
    """Coil/magnet count combinations with winding factors, balance and notes."""
    from fab.report import pairs_rows_json, pairs_text, to_json
    from layout.pairs import combinations

    if not any(m % 2 == 0 for m in magnets):
        shown = f"{magnets.start}" if len(magnets) == 1 else f"{magnets.start}-{magnets.stop - 1}"
        raise click.BadParameter(
            f"{shown} holds no even count: magnets alternate N and S, so a disc takes an even number",
            param_hint="'--magnets'",
        )
    rows = combinations(coils, magnets, int(phases), balanced_only=balanced_only, sort=sort, stator=stator)
    if as_json:
        click.echo(to_json(pairs_rows_json(rows)))
    else:
        click.echo(pairs_text(rows, int(phases), stator))


def _progress():
    """A progress line writer for stderr at a terminal; None when piped (quiet logs)."""
    if not sys.stderr.isatty():
        return None

    def progress(step: str) -> None:
        click.echo(f"  {step}", err=True)

    return progress


@cli.command()
@click.argument("design", metavar="DESIGN.toml")
@click.option("--json", "as_json", is_flag=True, help="print a JSON object for scripts")
@click.option(
    "--suggest",
    is_flag=True,
    help="for each warning, try changes through the model and list those that help (a few seconds)",
)
def plan(design, as_json, suggest):
    """Winding layout, predicted performance and warnings for one design."""
    from fab.fit import checked_design
    from fab.report import plan_json, plan_text, to_json

    d = checked_design(design, suggest=suggest, progress=_progress())
    if as_json:
        click.echo(to_json(plan_json(d)))
    else:
        click.echo(plan_text(d))


@cli.command()
@click.argument("design", metavar="DESIGN.toml")
@click.option(
    "--out",
    "out",
    type=click.Path(file_okay=False),
    default=None,
    help="the package folder [default: out/NAME]",
)
def build(design, out):
    """The whole build package: drawings, solids, assembly, plan, manifest."""
    from fab.package import build_package

    result = build_package(design, out, progress=_progress())
    click.echo(f"written: {result.target} ({len(result.files)} files, {result.seconds:.1f} s)")


@cli.command()
@click.argument("design", metavar="DESIGN.toml")
@click.option(
    "--masses",
    "masses_csv",
    default=None,
    metavar="MAGNETS.csv",
    help="weighed magnets, CSV with header id,mass_g, one row per magnet",
)
@click.option(
    "--grade",
    type=click.Choice(["G0.4", "G1", "G2.5", "G6.3", "G16", "G40"]),
    default="G6.3",
    show_default=True,
    help="ISO 21940-11 balance grade",
)
@click.option("--json", "as_json", is_flag=True, help="print a JSON object for scripts")
def balance(design, masses_csv, grade, as_json):
    """Rotor unbalance against ISO 21940-11; where each weighed magnet goes."""
    from fab.fit import checked_design
    from fab.massprops import disc_bodies
    from fab.report import balance_json, balance_text, to_json
    from layout.balance import balance_rotor, read_masses

    d = checked_design(design)
    masses = None
    if masses_csv is not None:
        src, text = read_text_input(masses_csv, "a CSV list of magnet masses")
        n = d.spec.magnets.count * len({m.disc for m in d.geometry.magnets})
        masses = read_masses(text, src, n, d.forces.magnet_mass_g)
    rb = balance_rotor(d, disc_bodies(d), masses, grade)
    if as_json:
        click.echo(to_json(balance_json(rb)))
    else:
        click.echo(balance_text(rb, d.spec.name))


@cli.command()
@click.argument("design", metavar="DESIGN.toml")
@click.option(
    "--readings",
    "readings_csv",
    required=True,
    metavar="READINGS.csv",
    help="bench readings, CSV with header what,where,value,rpm, one reading a row",
)
@click.option(
    "--waveform",
    "waveform_csv",
    default=None,
    metavar="WAVE.csv",
    help="a recorded voltage, CSV time_s,volts (or time_s,U,V ... a channel a column)",
)
@click.option("--waveform-where", default=None, help="the terminals a time_s,volts waveform was taken across")
@click.option("--waveform-rpm", type=float, default=None, help="the speed the waveform was recorded at")
@click.option("--json", "as_json", is_flag=True, help="print a JSON object for scripts")
def check(design, readings_csv, waveform_csv, waveform_where, waveform_rpm, as_json):
    """Bench readings of the finished machine against the design: what is wrong, if anything."""
    from fab.bench_check import bench_check, check_json, check_text
    from fab.fit import checked_design
    from fab.report import to_json

    if waveform_csv is None and (waveform_where is not None or waveform_rpm is not None):
        raise click.UsageError("--waveform-where and --waveform-rpm go with --waveform WAVE.csv")
    if waveform_csv is not None and waveform_rpm is None:
        raise click.UsageError("--waveform needs --waveform-rpm, the speed it was recorded at")
    d = checked_design(design)
    result = bench_check(d, readings_csv, waveform_csv, waveform_where, waveform_rpm)
    if as_json:
        click.echo(to_json(check_json(result)))
    else:
        click.echo(check_text(result, d.spec.name, Path(readings_csv).name))


@cli.command()
@click.argument("design", metavar="DESIGN.toml")
@click.option(
    "--out",
    "out",
    type=click.Path(dir_okay=False),
    default=None,
    help="the PDF to write [default: out/NAME/NAME-sheet.pdf]",
)
@click.option("--paper", type=click.Choice(["a4", "letter"]), default="a4", show_default=True)
def sheet(design, out, paper):
    """The PDF build sheet alone: summary, magnet maps, winding checklist, wiring, curves."""
    from fab.fit import checked_design
    from fab.massprops import disc_bodies
    from fab.sheet import write_sheet
    from layout.balance import balance_rotor

    d = checked_design(design, suggest=True, progress=_progress())
    target = Path(out) if out else Path("out") / d.spec.name / f"{d.spec.name}-sheet.pdf"
    rb = balance_rotor(d, disc_bodies(d), None)
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        written = write_sheet(d, target, paper=paper, balance=rb)
    except OSError as exc:  # a full disk, a read-only folder; write_sheet leaves the old sheet
        raise OutputError(
            f"{target}: cannot be written ({exc.strerror or exc}); the old sheet is kept"
        ) from None
    click.echo(f"written: {written}")


@cli.command()
@click.argument("requirement", metavar="REQUIREMENT.toml")
@click.option(
    "--top", type=click.IntRange(1, 20), default=5, show_default=True, help="candidates to list and write"
)
@click.option(
    "--out",
    "out",
    type=click.Path(file_okay=False),
    default=None,
    help="folder for the design files, table and picture [default: out/NAME-size]",
)
@click.option("--json", "as_json", is_flag=True, help="print a JSON object for scripts")
def size(requirement, top, out, as_json):
    """Designs from a requirement: screen many candidates, re-check the best in full, rank."""
    from fab.fit import check_parts
    from fab.report import to_json
    from fab.sizing import printed_size_mm, size_json, size_text, write_size
    from layout.requirement import load_requirement
    from layout.sizing import size as run_size

    req = load_requirement(requirement)
    s = run_size(req, top=top, progress=_progress(), accept=check_parts, printed_mm=printed_size_mm)
    folder = Path(out) if out else Path("out") / f"{req.name}-size"
    files = write_size(s, folder, top)
    if as_json:
        click.echo(to_json(size_json(s, top, files)))
    else:
        click.echo(size_text(s, top))
        click.echo(f"written: {folder} ({len(files)} design files, size.txt, tradeoff.svg)")


def main(argv: list[str] | None = None) -> None:
    """Console entry point with our error contract."""
    args = sys.argv[1:] if argv is None else argv
    if not args:
        click.echo(cli.get_help(click.Context(cli, info_name="statorsmith")))
        sys.exit(0)
    before = {signum: signal.signal(signum, _on_signal) for signum in Stopped.WORDS}
    _RECEIVED.clear()
    try:
        cli.main(args=args, prog_name="statorsmith", standalone_mode=False)
    except BaseException as exc:  # noqa: BLE001 - each kind is mapped below, the rest re-raised
        sys.exit(_exit_code(exc))
    finally:
        for signum, handler in before.items():  # as we found them, for callers in-process
            signal.signal(signum, handler)


def _exit_code(exc: BaseException) -> int:
    """Print the one line an exception deserves and return the exit code; re-raise bugs."""
    # A signal that lands inside a native import (the CAD kernel's) surfaces as an ImportError
    # or worse; once a signal has come, whatever follows is that signal.
    if isinstance(exc, Stopped) or _RECEIVED:
        signum = exc.signum if isinstance(exc, Stopped) else _RECEIVED[0]
        click.echo(f"{Stopped.WORDS[signum]}; nothing was changed.", err=True)
        return 128 + signum
    if isinstance(exc, DesignError | OutputError | MassListError):
        click.echo(f"Error: {exc}", err=True)
        return EXIT_USER_ERROR
    if isinstance(exc, KeyboardInterrupt | click.exceptions.Abort):
        click.echo("Interrupted; nothing was changed.", err=True)
        return 128 + signal.SIGINT
    if isinstance(exc, click.UsageError):
        click.echo(f"Error: {exc.format_message()}", err=True)
        return EXIT_USER_ERROR
    if isinstance(exc, click.exceptions.Exit):
        return exc.exit_code
    if isinstance(exc, BrokenPipeError):
        return 0
    if isinstance(exc, SystemExit):
        return exc.code if isinstance(exc.code, int) else 1
    raise exc


if __name__ == "__main__":
    main()
