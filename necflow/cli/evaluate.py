"""``necflow check`` and ``necflow evaluate``: one design, its rules and its solve."""

from __future__ import annotations

import dataclasses
import sys
import warnings
from pathlib import Path

from rich.console import Console

from necflow import fileio
from necflow.chain import Chain, load_design, report_data
from necflow.chain.convergence import check_convergence
from necflow.cli.progress import steps_of
from necflow.cli.status import NOT_MET, OK
from necflow.errors import ConfigError, NecflowWarning, RulesBroken
from necflow.model import summarize
from necflow.report import run_folder
from necflow.report.results import write_json
from necflow.report.tables import band_table

SAFETY_LINE = ("caution: high RF voltages appear on series capacitors and open-wire line; "
               "keep antennas clear of power lines, mind RF exposure and lightning, and "
               "follow local codes and licensed practice.")


def _finding_line(fd) -> str:
    where = f" [{fd.wire}]" if getattr(fd, "wire", None) else ""
    return f"{fd.severity}: {fd.rule}{where}: {fd.message}"


def cmd_check(args) -> int:
    steps = steps_of(args, "check", sys.stderr)
    steps.note(f"reading {args.design}")
    design = load_design(args.design)
    chain = Chain(design)
    summary = summarize(chain.wire_model, design, chain.f_min, chain.f_max)
    findings = chain.findings
    broken = any(fd.severity == "error" for fd in findings)
    report = None
    if not args.no_convergence and not broken:
        steps(0, None, "convergence check (the top of each band with twice the segments)")
        report = _convergence(design)
    steps.close()
    if args.json:
        return _check_json(args, design, summary, findings, broken, report)
    print(f"{args.design}: design '{design.name}' is valid.")
    for line in summary.format():
        print(line)
    if not findings:
        print("Modelling rules: all satisfied.")
    for fd in findings:
        print(_finding_line(fd))
    if not args.no_convergence:
        if broken:
            print("Convergence check skipped: the model breaks a modelling rule.")
        elif isinstance(report, str):
            print(f"Convergence check skipped: {report}")
        else:
            for line in report.format():
                print(line)
            for c in report.cautions:
                print(f"caution: {c}")
    return _rule_status(findings, print)


def _finding_dict(fd) -> dict:
    return {"severity": fd.severity, "rule": fd.rule, "wire": getattr(fd, "wire", None),
            "message": fd.message}


def _check_json(args, design, summary, findings, broken, report) -> int:
    """``check --json``: the model summary, the findings, the convergence
    check and the exit status, as one document."""
    model = dataclasses.asdict(summary)
    model.pop("findings", None)                 # given once, below
    if args.no_convergence:
        convergence = {"skipped": "--no-convergence"}
    elif broken:
        convergence = {"skipped": "the model breaks a modelling rule"}
    elif isinstance(report, str):
        convergence = {"skipped": report}
    else:
        convergence = report.to_dict()
    status = _rule_status(findings, lambda text: print(text, file=sys.stderr))
    sys.stdout.write(fileio.json_text({
        "design": str(args.design), "name": design.name, "valid": True, "model": model,
        "findings": [_finding_dict(fd) for fd in findings], "convergence": convergence,
        "status": status}))
    return status


def _convergence(design):
    """The convergence check's report, or why it was skipped (text)."""
    try:
        return check_convergence(design)
    except ConfigError as exc:
        if exc.field != "model.max_segments":
            raise
        return exc.message


def _rule_status(findings, say) -> int:
    """Exit status of ``check``: 1 when the model breaks a modelling rule at
    error level (``evaluate`` then refuses to solve it), else 0."""
    errors = sum(1 for fd in findings if fd.severity == "error")
    if errors:
        say(f"the model breaks {errors} modelling rule{'s' if errors > 1 else ''} at error "
            f"level: 'necflow evaluate' will not solve it (exit status {NOT_MET})")
        return NOT_MET
    return OK


def _check_out(out: Path) -> None:
    """Refuse a run folder that cannot be made (a file in its way) before
    anything is solved."""
    for p in (out, *out.parents):
        if p.exists():
            if not p.is_dir():
                raise ConfigError(f"cannot create the run folder {out}: '{p}' is a file",
                                  field="--out")
            return


def cmd_evaluate(args) -> int:
    started = run_folder.now_utc()
    steps = steps_of(args, "evaluate", sys.stderr)
    steps.note(f"reading {args.design}")
    study, option = compare_study(args)
    design = load_design(args.design)
    if study is not None and not (Path(study) / "best.yaml").is_file():
        raise ConfigError(f"'{study}' is not a study's run folder (it holds no best.yaml); "
                          "expected the --out folder of 'necflow optimize'", field=option)
    chain = Chain(design)
    try:
        chain.require_sound_model()
    except RulesBroken as exc:
        for fd in exc.findings:
            if fd.severity == "error":
                print(_finding_line(fd), file=sys.stderr if args.json else sys.stdout)
        raise
    out = Path(args.out) if args.out else run_folder.default_run_dir(design.name)
    _check_out(out)
    chain.solve(steps)
    evaluation = chain.evaluation
    report_doc = report_data(chain, study_dir=study, on_step=steps)
    steps(0, None, "writing the run folder (tables, plots, report)")
    doc = run_folder.write_run_folder(evaluation, report_doc, out,
                                      config_path=str(args.design), started=started,
                                      argv=["necflow", *sys.argv[1:]])
    convergence = None
    if args.convergence:
        steps(0, None, "convergence check (the top of each band with twice the segments)")
        report = _convergence(design)
        if isinstance(report, str):
            doc["convergence"] = {"skipped": report}
        else:
            convergence = report
            doc["convergence"] = convergence.to_dict()
        write_json(doc, out / "results.json")
    steps.close()
    if args.json:
        sys.stdout.write(fileio.json_text({**doc, "run_folder": str(out),
                                           "report": str(out / "report.html")}))
        return OK
    console = Console(width=120, highlight=False)
    for fd in evaluation.findings:
        if fd.severity != "note":
            console.print(f"{fd.severity}: {fd.rule}: {fd.message}")
    console.print(band_table(evaluation.band_summaries(), design.goal.swr_limit,
                             title=f"{design.name}: {len(evaluation.frequency_hz)} points, "
                             f"{design.radio.power:g} W from a {design.radio.impedance:g} ohm "
                             "radio"))
    cm_record = (report_doc.get("common_mode") or {}).get("bands") or []
    for rec in cm_record:
        parts = [f"{v:.3g} A at {k}" for k, v in rec["current_a_max"].items()]
        parts += [f"{v:.3g} W in {k}" for k, v in rec["heat_w_max"].items()]
        parts.append(f"SWR max {rec['swr_max']:.2f} (ideal line {rec['swr_max_ideal_line']:.2f})")
        console.print(f"common mode on the line, {rec['band']}: " + ", ".join(parts),
                      markup=False)
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
    console.print(f"report: {out / 'report.html'}")
    return OK


def compare_study(args) -> tuple[str | None, str]:
    """The study folder to compare with and the option that named it
    (``--study``, the old spelling, still works, with a warning)."""
    old = getattr(args, "study_folder", None)
    new = getattr(args, "compare_study", None)
    if old is not None and new is not None:
        raise ConfigError("give the study folder once, as --compare-study DIR",
                          field="--study")
    if old is not None:
        warnings.warn("--study DIR is deprecated in 'evaluate' (in 'optimize' --study is a "
                      "study's name); write --compare-study DIR", NecflowWarning, stacklevel=2)
        return old, "--study"
    return new, "--compare-study"
