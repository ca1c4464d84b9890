"""The statorsmith command line: parse, call one library function, print.

Every user error ends as one line on stderr and exit code 2, never a traceback.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import click

from fab import OutputError
from layout.balance import MassListError
from layout.spec import DesignError, load_spec

EXIT_USER_ERROR = 2


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
    type=click.Choice(["coils", "magnets", "winding_factor", "cogging_steps"]),
    default="coils",
    show_default=True,
)
@click.option("--balanced-only", is_flag=True, help="leave out combinations that cannot work")
@click.option("--json", "as_json", is_flag=True, help="print a JSON array for scripts")
def pairs(phases, coils, magnets, sort, balanced_only, as_json):
    """Coil/magnet count combinations with winding factors, balance and notes."""
    from fab.report import pairs_rows_json, pairs_text
    from layout.pairs import combinations

    rows = combinations(coils, magnets, int(phases), balanced_only=balanced_only, sort=sort)
    if as_json:
        click.echo(json.dumps(pairs_rows_json(rows), indent=2))
    else:
        click.echo(pairs_text(rows, int(phases)))


@cli.command()
@click.argument("design", metavar="DESIGN.toml")
@click.option("--json", "as_json", is_flag=True, help="print a JSON object for scripts")
def plan(design, as_json):
    """Winding layout, predicted performance and warnings for one design."""
    from fab.report import plan_json, plan_text
    from layout.design import compute_design

    d = compute_design(load_spec(design))
    if as_json:
        click.echo(json.dumps(plan_json(d), indent=2))
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

    progress = None
    if sys.stderr.isatty():

        def progress(step: str) -> None:
            click.echo(f"  {step}", err=True)

    result = build_package(design, out, progress=progress)
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
    from fab.massprops import disc_bodies
    from fab.report import balance_json, balance_text
    from layout.balance import balance_rotor, read_masses
    from layout.design import compute_design

    d = compute_design(load_spec(design))
    masses = None
    if masses_csv is not None:
        path = Path(masses_csv)
        try:
            text = path.read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError) as exc:
            raise click.UsageError(
                f"{path.name}: cannot be read ({getattr(exc, 'strerror', None) or exc})"
            ) from None
        n = d.spec.magnets.count * len({m.disc for m in d.geometry.magnets})
        masses = read_masses(text, path.name, n)
    rb = balance_rotor(d, disc_bodies(d), masses, grade)
    if as_json:
        click.echo(json.dumps(balance_json(rb), indent=2))
    else:
        click.echo(balance_text(rb, d.spec.name))


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
    from fab.massprops import disc_bodies
    from fab.sheet import write_sheet
    from layout.balance import balance_rotor
    from layout.design import compute_design

    d = compute_design(load_spec(design))
    target = Path(out) if out else Path("out") / d.spec.name / f"{d.spec.name}-sheet.pdf"
    target.parent.mkdir(parents=True, exist_ok=True)
    rb = balance_rotor(d, disc_bodies(d), None)
    written = write_sheet(d, target, paper=paper, balance=rb)
    click.echo(f"written: {written}")


def main(argv: list[str] | None = None) -> None:
    """Console entry point with our error contract."""
    args = sys.argv[1:] if argv is None else argv
    if not args:
        click.echo(cli.get_help(click.Context(cli, info_name="statorsmith")))
        sys.exit(0)
    try:
        cli.main(args=args, prog_name="statorsmith", standalone_mode=False)
    except (DesignError, OutputError, MassListError) as exc:
        click.echo(f"Error: {exc}", err=True)
        sys.exit(EXIT_USER_ERROR)
    except KeyboardInterrupt:
        click.echo("Interrupted; nothing was changed.", err=True)
        sys.exit(130)
    except click.UsageError as exc:
        click.echo(f"Error: {exc.format_message()}", err=True)
        sys.exit(EXIT_USER_ERROR)
    except click.exceptions.Abort:
        click.echo("Aborted.", err=True)
        sys.exit(1)
    except click.exceptions.Exit as exc:
        sys.exit(exc.exit_code)
    except BrokenPipeError:
        sys.exit(0)


if __name__ == "__main__":
    main()
