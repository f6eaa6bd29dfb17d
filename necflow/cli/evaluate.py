"""``necflow check`` and ``necflow evaluate``: one design, its rules and its solve."""

from __future__ import annotations

import json
import sys
from pathlib import Path

from necflow.cli import NOT_MET, OK
from necflow.errors import ConfigError, RulesBroken

SAFETY_LINE = ("caution: high RF voltages appear on series capacitors and open-wire line; "
               "keep antennas clear of power lines, mind RF exposure and lightning, and "
               "follow local codes and licensed practice.")


def add_parsers(sub) -> None:
    """Add ``check`` and ``evaluate`` to the command's sub-parsers."""
    c = sub.add_parser("check", help="validate a design and print its model summary and "
                       "every modelling rule it breaks")
    c.add_argument("design", help="design file (YAML)")
    c.add_argument("--no-convergence", action="store_true",
                   help="skip the convergence check (it solves the top of each band twice)")
    c.set_defaults(func=cmd_check)

    e = sub.add_parser("evaluate", help="solve a design and write its run folder")
    e.add_argument("design", help="design file (YAML)")
    e.add_argument("--out", metavar="DIR", help="run folder (default runs/<name>-<timestamp>)")
    e.add_argument("--json", action="store_true",
                   help="print results.json to stdout instead of the table")
    e.add_argument("--study", metavar="DIR", help="a study's run folder: show its best "
                   "design as the 'optimised' alternative in the report")
    e.add_argument("--convergence", action="store_true",
                   help="also solve the top of each band with the segments doubled and "
                   "store the change in results.json ('convergence')")
    e.set_defaults(func=cmd_evaluate)


def _finding_line(fd) -> str:
    where = f" [{fd.wire}]" if getattr(fd, "wire", None) else ""
    return f"{fd.severity}: {fd.rule}{where}: {fd.message}"


def cmd_check(args) -> int:
    from necflow.catalog.bands import resolve_bands  # lazy: start-up time
    from necflow.config.load import load_design  # lazy: start-up time
    from necflow.model import build_model, check_rules, summarize  # lazy: start-up time
    from necflow.pipeline import band_points  # lazy: start-up time

    design = load_design(args.design)
    f, _ = band_points(resolve_bands(design))
    f_min, f_max = float(f.min()), float(f.max())
    model = build_model(design, f_max)
    summary = summarize(model, design, f_min, f_max)
    findings = check_rules(model, design, f_min, f_max)
    print(f"{args.design}: design '{design.name}' is valid.")
    for line in summary.format():
        print(line)
    if not findings:
        print("Modelling rules: all satisfied.")
    for fd in findings:
        print(_finding_line(fd))
    broken = any(fd.severity == "error" for fd in findings)
    if not args.no_convergence:
        if broken:
            print("Convergence check skipped: the model breaks a modelling rule.")
        else:
            _print_convergence(design)
    return _rule_status(findings, print)


def _print_convergence(design) -> None:
    from necflow.analysis.convergence import check_convergence  # lazy: start-up time

    try:
        report = check_convergence(design)
    except ConfigError as exc:
        if exc.field != "model.max_segments":
            raise
        print(f"Convergence check skipped: {exc.message}")
        return
    for line in report.format():
        print(line)
    for c in report.cautions:
        print(f"caution: {c}")


def _rule_status(findings, say) -> int:
    """Exit status of ``check``: 1 when the model breaks a modelling rule at
    error level (``evaluate`` then refuses to solve it), else 0."""
    errors = sum(1 for fd in findings if fd.severity == "error")
    if errors:
        say(f"the model breaks {errors} modelling rule{'s' if errors > 1 else ''} at error "
            f"level: 'necflow evaluate' will not solve it (exit status {NOT_MET})")
        return NOT_MET
    return OK


def cmd_evaluate(args) -> int:
    from rich.console import Console  # lazy: start-up time

    from necflow.config.load import load_design  # lazy: start-up time
    from necflow.pipeline import evaluate  # lazy: start-up time
    from necflow.report import run_folder  # lazy: start-up time
    from necflow.report.tables import band_table  # lazy: start-up time

    started = run_folder.now_utc()
    design = load_design(args.design)
    if args.study is not None and not (Path(args.study) / "best.yaml").is_file():
        raise ConfigError(f"'{args.study}' is not a study's run folder (it holds no best.yaml); "
                          "expected the --out folder of 'necflow optimize'", field="--study")
    try:
        evaluation = evaluate(design, refuse_broken_rules=True)
    except RulesBroken as exc:
        for fd in exc.findings:
            if fd.severity == "error":
                print(_finding_line(fd))
        raise
    out = Path(args.out) if args.out else run_folder.default_run_dir(design.name)
    doc = run_folder.write_run_folder(evaluation, out, config_path=str(args.design),
                                      started=started, argv=["necflow", *sys.argv[1:]],
                                      study_dir=getattr(args, "study", None))
    convergence = None
    if getattr(args, "convergence", False):
        from necflow.analysis.convergence import check_convergence  # lazy: start-up time
        from necflow.report.results import write_json  # lazy: start-up time

        try:
            convergence = check_convergence(design)
            doc["convergence"] = convergence.to_dict()
        except ConfigError as exc:
            if exc.field != "model.max_segments":
                raise
            doc["convergence"] = {"skipped": exc.message}
        write_json(doc, out / "results.json")
    if args.json:
        json.dump(doc, sys.stdout, indent=1)
        print()
        return OK
    console = Console(width=120, highlight=False)
    for fd in evaluation.findings:
        if fd.severity != "note":
            console.print(f"{fd.severity}: {fd.rule}: {fd.message}")
    console.print(band_table(evaluation.band_summaries(), design.goal.swr_limit,
                             title=f"{design.name}: {len(evaluation.frequency_hz)} points, "
                             f"{design.radio.power:g} W from a {design.radio.impedance:g} ohm "
                             "radio"))
    for c in evaluation.cautions:
        console.print(f"caution: {c}")
    if convergence is not None:
        for line in convergence.format():
            console.print(line, markup=False)
        for c in convergence.cautions:
            console.print(f"caution: {c}", markup=False)
    elif "convergence" in doc:
        console.print(f"convergence check skipped: {doc['convergence']['skipped']}",
                      markup=False)
    if evaluation.cautions:
        console.print(SAFETY_LINE)
    console.print(f"run folder: {out}")
    return OK
