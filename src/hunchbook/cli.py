"""The ``hunchbook`` command line: thin commands over :mod:`hunchbook.api`.

Each command imports what it needs when it runs, so that ``--version``, help and the
catalogue commands start without loading the engine, pandas or the statistics.
"""

from __future__ import annotations

import argparse
import contextlib
import dataclasses
import io
import json
import os
import sys
from collections.abc import Callable, Iterator, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

from hunchbook import __version__
from hunchbook.cli_catalogue import author, open_catalogue, use_help_text
from hunchbook.cli_catalogue import register as register_catalogue_commands
from hunchbook.cli_committee import register as register_committee_commands
from hunchbook.cli_data import register as register_data_commands
from hunchbook.cli_desk import register as register_desk_command
from hunchbook.cli_holdout import register as register_holdout_commands
from hunchbook.cli_settings import register as register_settings_commands
from hunchbook.core.errors import HunchbookError, RuleError
from hunchbook.core.plain import json_safe
from hunchbook.core.verdict import CAUTION
from hunchbook.window_options import WINDOW_FLAGS, add_window_options

if TYPE_CHECKING:
    from hunchbook.api import SetResult
    from hunchbook.core.results import RunSummary
    from hunchbook.core.sweep import SweepRunner
    from hunchbook.core.sweep_estimate import SweepEstimate



def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``hunchbook`` console script; returns the exit status.

    With no command (or only window options such as ``--demo``) it opens the desktop window.
    """
    argv = list(sys.argv[1:] if argv is None else argv)
    if not argv or argv[0].split("=")[0] in WINDOW_FLAGS:
        from hunchbook.gui.app import main as window_main

        return window_main(argv)
    parser = _build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.handler(args) or 0)
    except HunchbookError as exc:
        print(f"hunchbook: error: {exc}", file=sys.stderr)
        return 1
    except BrokenPipeError:  # the reader went away (`... | head`): stop quietly
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 141
    except OSError as exc:
        where = f"{exc.filename}: " if exc.filename else ""
        print(f"hunchbook: error: {where}{exc.strerror or exc}", file=sys.stderr)
        return 1
    except KeyboardInterrupt:
        print("hunchbook: interrupted", file=sys.stderr)
        return 130


def _build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="hunchbook", usage="hunchbook [WINDOW OPTIONS] | hunchbook COMMAND ...",
        description="Research journal and quick-run backtests for futures ideas. Without a "
                    "command it opens the desktop window.")
    parser.add_argument("--version", action="version", version=f"hunchbook {__version__}")
    add_window_options(parser.add_argument_group(
        "the desktop window (given instead of a command)"))
    commands = parser.add_subparsers(dest="command", required=True, metavar="COMMAND",
                                     prog="hunchbook")

    run = commands.add_parser(
        "run", help="run a rule file over a data folder and print gross/net results",
        description="Run a rule file over a data folder: every declared parameter set runs "
                    "and counts as a trial. With one set print its gross/net table; with "
                    "several print the best ones and judge the best (or the one --params "
                    "picks, still counting every declared set).",
        epilog="Example: hunchbook run examples/demo.toml --data build/demo-data "
               "--pnl-csv pnl.csv")
    run.add_argument("rules", metavar="RULEFILE", help="rule file (TOML)")
    run.add_argument("--data", required=True, metavar="DIR",
                     help="data folder with markets.toml and one <market>.csv per market")
    run.add_argument("--params", metavar="NAME=VALUE,...", type=_parse_params, default={},
                     help="judge the set with these values (each must be a declared value; "
                          "every declared set still runs and counts as a trial)")
    run.add_argument("--json", metavar="PATH", type=Path,
                     help="write parameters and per-market/portfolio metrics as JSON")
    run.add_argument("--capital", type=_positive_number, metavar="AMOUNT",
                     help="measure returns and drawdowns in %% of this capital (in the "
                          "markets' currency) when the rule file's [sizing] gives none")
    run.add_argument("--monthly", action="store_true",
                     help="also print the chosen set's net returns month by month")
    run.add_argument("--pnl-csv", metavar="PATH", type=Path,
                     help="write the judged set's daily P&L, one row per (date, market)")
    run.add_argument("--workers", type=_positive_int, default=None, metavar="N",
                     help="worker processes for a sweep (default: CPU count; with --cluster "
                          "local: the local cluster's, default 2)")
    run.add_argument("--cluster", metavar="ADDRESS",
                     help="run the sweep on a Dask cluster: tcp://HOST:PORT of a running "
                          "scheduler, or 'local' for worker processes started here (needs the "
                          "cluster extra; see docs/cluster.md)")
    run.add_argument("--yes", action="store_true",
                     help="run a long or large sweep without asking (the estimate of its time "
                          "and memory is still printed; one that cannot fit is still refused)")
    run.add_argument("--idea", type=_positive_int, metavar="ID",
                     help="save the rule file as this idea's revision and record the run, its "
                          "trial count and verdict on the idea (on the dates before the "
                          "catalogue's holdout boundary)")
    run.add_argument("--catalogue", type=Path, metavar="PATH",
                     help="catalogue for --idea (default: $HUNCHBOOK_CATALOGUE or the user data "
                          "folder)")
    run.add_argument("--by", metavar="NAME",
                     help="who runs it, for --idea (default: $HUNCHBOOK_USER or login name)")
    run.set_defaults(handler=_cmd_run)

    stats = commands.add_parser(
        "stats", help="statistics and a verdict for any daily P&L file",
        description="Compute the first-pass statistics of a daily P&L CSV (columns date and "
                    "net_pnl at least; gross_pnl and cost when present; several markets' rows "
                    "are summed by date). Give --trials (and --trial-sharpe-var, the variance "
                    "of the trials' annualised Sharpe ratios) so that the deflated Sharpe ratio "
                    "counts every trial behind the P&L: without them the result is uncorrected "
                    "for selection and cannot be promoted.",
        epilog="Example: hunchbook stats pnl.csv --trials 120 --trial-sharpe-var 0.25")
    stats.add_argument("pnl", metavar="PNL.csv", type=Path)
    stats.add_argument("--trials", type=_positive_int, metavar="N",
                       help="number of trials behind this result (without it the result is "
                            "uncorrected for selection: no verdict better than 'No verdict')")
    stats.add_argument("--trial-sharpe-var", type=float, metavar="V",
                       help="variance of the trials' annualised Sharpe ratios")
    stats.add_argument("--spa-reps", type=int, default=1000, metavar="N",
                       help="bootstrap replications of the SPA test (0 skips it; default 1000)")
    stats.add_argument("--json", metavar="PATH", type=Path, help="write the statistics as JSON")
    stats.set_defaults(handler=_cmd_stats)

    groups = register_catalogue_commands(commands)
    register_settings_commands(groups)
    register_committee_commands(groups)
    register_holdout_commands(commands)
    register_desk_command(commands)

    data = commands.add_parser(
        "data", help="data folder tools",
        description="Data folder tools: check that every market's file reads and splices.")
    data_commands = data.add_subparsers(dest="data_command", required=True, metavar="COMMAND")
    check = data_commands.add_parser(
        "check", help="check a data folder: library, files, rows, dates, continuous series",
        description="Check a data folder: the market library loads, every market has a file "
                    "that reads, and each series splices with the default roll. Exits 1 when "
                    "any problem is found.",
        epilog="Example: hunchbook data check build/demo-data")
    check.add_argument("folder", metavar="DIR", type=Path)
    check.set_defaults(handler=_cmd_data_check)
    register_data_commands(data_commands)

    demo = commands.add_parser(
        "demo-data", help="write the invented demo desk's market library and price files",
        description="Write the invented demo scenario (market library and contract-level "
                    "price files, generated from a seed) into a folder. All invented data.",
        epilog="Example: hunchbook demo-data build/demo-data")
    demo.add_argument("folder", metavar="DIR", type=Path)
    demo.add_argument("--seed", type=int, default=None, help="generator seed (default: fixed)")
    demo.set_defaults(handler=_cmd_demo_data)
    return use_help_text(parser)


def _positive_number(text: str) -> float:
    try:
        value = float(text.replace("_", ""))
    except ValueError:
        value = 0.0
    if not value > 0 or value == float("inf"):
        raise argparse.ArgumentTypeError(f"expected a number above 0, got {text!r}")
    return value


def _positive_int(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        value = 0
    if value < 1:
        raise argparse.ArgumentTypeError(f"expected a whole number of at least 1, got {text!r}")
    return value


def _parse_params(text: str) -> dict[str, float]:
    params: dict[str, float] = {}
    for item in filter(None, (s.strip() for s in text.split(","))):
        name, sep, value = item.partition("=")
        try:
            if not sep:
                raise ValueError
            params[name.strip()] = float(value)
        except ValueError:
            raise argparse.ArgumentTypeError(
                f"expected NAME=VALUE pairs separated by commas, got {item!r}") from None
    return params


@contextlib.contextmanager
def _runner(args: argparse.Namespace) -> Iterator[SweepRunner]:
    """The sweep runner that ``--workers`` and ``--cluster`` ask for (a cluster connected,
    or started, for the command's sweeps and closed after them)."""
    if args.cluster is None:
        from hunchbook.core.runners import LocalProcesses

        yield LocalProcesses(workers=args.workers)
        return
    from hunchbook.cluster import LOCAL, DaskRunner, require_dask

    require_dask()
    if args.workers is not None and args.cluster != LOCAL:
        raise HunchbookError("--workers sets the worker processes of this machine or of "
                             "--cluster local; a scheduler's workers are those started with "
                             "`dask worker`")
    with DaskRunner(args.cluster, n_workers=args.workers or 2) as runner:
        yield runner


def _confirmer(args: argparse.Namespace) -> Callable[[SweepEstimate], bool]:
    """Asks before a long or large sweep: yes with ``--yes``, else at the terminal; without
    a terminal the sweep is not started and the message says to add ``--yes``."""

    def confirm(estimate: SweepEstimate) -> bool:
        print(f"This sweep: {estimate.describe()}.", file=sys.stderr)
        if args.yes:
            return True
        if not sys.stdin.isatty():
            print("Not started: add --yes to run it without asking.", file=sys.stderr)
            return False
        answer = input("Run it? [y/N] ")
        return answer.strip().lower() in ("y", "yes")

    return confirm


def _cmd_run(args: argparse.Namespace) -> int:
    if args.idea is not None:
        return _run_for_idea(args)
    from hunchbook.api import Study

    study = Study.from_file(args.rules, args.data)
    n_sets = len(study.parameter_sets())
    if args.params:
        study.parameter_sets(args.params)  # a value that is not declared is refused here
    with _runner(args) as runner:
        report = study.sweep(pick=args.params or None, runner=runner,
                             progress=_progress_printer(n_sets), confirm=_confirmer(args))
    chosen = study.run_set(report.sets[report.chosen])
    run = report.summarise(chosen, currency=study.panel.currency, data_folder=str(args.data),
                           capital=args.capital)
    _print_and_write(args, run, chosen)
    if args.params and n_sets > 1:
        print(f"The set judged was picked with --params out of the {n_sets:,} declared sets: "
              f"all of them ran and count as trials.")
    return 0


def _run_for_idea(args: argparse.Namespace) -> int:
    """Run an idea's whole declared space and record the run, its trials and verdict on it."""
    if args.params:
        raise HunchbookError("--idea runs the whole declared parameter space, so it takes no "
                             "--params (every set run counts as a trial)")
    path = Path(args.rules)
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise RuleError(f"cannot read the rule file ({exc})", file=str(path)) from None
    from hunchbook.services import run_idea

    with open_catalogue(args) as catalogue, _runner(args) as runner:
        outcome = run_idea(catalogue, args.idea, text, args.data, by=author(args),
                           rule_file=str(path), runner=runner, progress=_progress_printer(2),
                           confirm=_confirmer(args), capital=args.capital)
    _print_and_write(args, outcome.summary, outcome.chosen)
    print(f"Recorded as run {outcome.run_id} of idea {args.idea} (rule revision "
          f"{outcome.revision_number}); the idea now counts {outcome.summary.statistics.n_trials} "
          "trials.")
    print(f"In-sample up to {outcome.boundary} (the holdout boundary, not included); "
          f"{outcome.held_out_days:,} held-out days locked.")
    if outcome.summary.data_changes is not None:
        print(outcome.summary.data_changes.sentence())
    return 0


def _print_and_write(args: argparse.Namespace, run: RunSummary, chosen: SetResult) -> None:
    """Print a run's tables, statistics and verdict; write the JSON record and daily P&L."""
    from hunchbook.report import format_judgement, format_single, format_sweep

    print(format_single(run) if len(run.sets) == 1 else format_sweep(run))
    if len(run.sets) > 1:  # the chosen set in full: its figures against capital and years
        print()
        print(format_single(run))
    if args.monthly:
        from hunchbook.core.capital_figures import monthly_returns
        from hunchbook.report import format_monthly

        capital = None if run.capital is None else run.capital.capital
        print()
        print(format_monthly(run, monthly_returns(chosen.portfolio["net_pnl"], capital)))
    print()
    print(format_judgement(run))
    print(CAUTION)
    if args.json:
        # one line, by json's C encoder: a sweep's record holds every set, and indenting (or
        # json.dump to a file) takes the pure-Python encoder, about three times slower
        text = json.dumps({**run.to_dict(), "caution": CAUTION}, allow_nan=False) + "\n"
        _write_atomic(args.json, lambda f: f.write(text))
    if args.pnl_csv:
        table = chosen.pnl.assign(date=lambda t: t["date"].dt.strftime("%Y-%m-%d"))
        _write_atomic(args.pnl_csv, lambda f: table.to_csv(f, index=False, float_format="%.10g"))


def _progress_printer(total: int) -> Callable[[int, int], None] | None:
    """Progress on stderr for long sweeps in a terminal; silent otherwise."""
    if total < 50 or not sys.stderr.isatty():
        return None

    def show(done: int, of: int) -> None:
        print(f"\rsets run: {done:,} / {of:,}", end="\n" if done == of else "",
              file=sys.stderr, flush=True)

    return show


def _cmd_stats(args: argparse.Namespace) -> int:
    from hunchbook.core.periods import DAYS_PER_YEAR
    from hunchbook.core.pnl_file import read_pnl_csv
    from hunchbook.core.stats import first_pass_statistics
    from hunchbook.core.verdict import decide
    from hunchbook.report import format_statistics

    daily = read_pnl_csv(args.pnl)
    if (args.trials is None) != (args.trial_sharpe_var is None) and args.trials is None:
        raise HunchbookError("--trial-sharpe-var needs --trials (the number of trials)")
    trial_sharpe_var = args.trial_sharpe_var
    if args.trials is not None and args.trials > 1 and trial_sharpe_var is None:
        # the sampling variance of a skill-less trial's annualised Sharpe ratio over these days
        # (Lo (2002), Financial Analysts Journal 58(4): Var(SR) ~ 1/T per day at SR 0)
        trial_sharpe_var = DAYS_PER_YEAR / len(daily)
        print(f"No --trial-sharpe-var: taking {trial_sharpe_var:.4f}, the sampling variance of "
              f"a skill-less annualised Sharpe ratio over {len(daily):,} days.")
    stats = first_pass_statistics(daily["gross_pnl"].to_numpy(), daily["cost"].to_numpy(),
                                  n_trials=args.trials, trial_sharpe_var=trial_sharpe_var,
                                  selection_known=args.trials is not None,
                                  spa_reps=args.spa_reps)
    verdict = decide(stats)
    print(f"{args.pnl}: {len(daily):,} days, {daily.index[0].date()} to "
          f"{daily.index[-1].date()}")
    print(format_statistics(stats, verdict))
    print(CAUTION)
    if args.json:
        payload = {"file": str(args.pnl), "days": len(daily),
                   "statistics": stats.to_dict(), "verdict": dataclasses.asdict(verdict)}
        _write_atomic(args.json, lambda f: json.dump(json_safe(payload), f, indent=2))
    return 0


def _cmd_data_check(args: argparse.Namespace) -> int:
    from hunchbook.core.data_check import check_data_folder, format_data_check

    report = check_data_folder(args.folder)
    print(format_data_check(report))
    return 0 if report.ok else 1


def _cmd_demo_data(args: argparse.Namespace) -> int:
    from hunchbook.demo import write_demo_data

    kwargs = {} if args.seed is None else {"seed": args.seed}
    folder = write_demo_data(args.folder, **kwargs)
    print(f"Invented demo data written to {folder}")
    return 0


def _write_atomic(path: Path, write: Callable[[Any], None]) -> None:
    """Write a text file whole or not at all (``write`` fills a text buffer)."""
    from hunchbook.core.atomic import write_atomically

    buffer = io.StringIO(newline="")
    write(buffer)
    write_atomically(path, buffer.getvalue().encode("utf-8"))


if __name__ == "__main__":
    sys.exit(main())
