"""The ``fit``, ``trim`` and ``tolerance`` sub-commands: parse, call, print.

The jobs themselves are :func:`necflow.calibrate.fit.fit_design`,
:func:`necflow.calibrate.trim.trim_design` and
:func:`necflow.calibrate.tolerance.monte_carlo`; they return results and
never print.
"""

from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

from necflow import fileio, units
from necflow.calibrate.fit import fit_design
from necflow.calibrate.overlay import compare, overlay_figure
from necflow.calibrate.response import Responder
from necflow.calibrate.tolerance import monte_carlo, tolerance_figure
from necflow.calibrate.trim import resolve_targets, trim_design
from necflow.catalog.bands import resolve_bands
from necflow.chain import load_design
from necflow.cli.progress import steps_of
from necflow.cli.status import OK
from necflow.config.fields import build_params, parse_range_option
from necflow.config.resolve import resolved_yaml
from necflow.errors import ConfigError, GoalNotMet, NecflowError
from necflow.measure import check_overlap, read_measurement

#: Most tolerance cases in one run (each case is a feed-chain evaluation over
#: every point; 100,000 cases of 100 points take minutes and hundreds of MB).
MAX_SAMPLES = 100_000


def _ranges(options: list[str], option: str) -> dict:
    return dict(parse_range_option(o, option) for o in options)


def _checked_ranges(design, options: list[str], option: str) -> dict:
    """Ranges from the command line, checked against the design; errors name
    the option (the design file does not hold them)."""

    section = _ranges(options, option)
    try:
        build_params(design, section, key="range")
    except ConfigError as exc:
        path = (exc.field or "").removeprefix("range.")
        message = exc.message if f"'{path}'" in exc.message else f"{path}: {exc.message}"
        raise ConfigError(message, field=option) from None
    return section


def _seed(value: int | None, option: str = "--seed") -> None:
    if value is not None and not 0 <= value < 2 ** 32:
        raise ConfigError(f"{value} is not a seed; expected a whole number from 0 to "
                          f"{2 ** 32 - 1}", field=option)


def _out_folder(path: Path) -> Path:
    for p in (path, *path.parents):
        if p.exists() and not p.is_dir():
            raise ConfigError(f"'{p}' is a file; expected a folder to write into",
                              field="--out")
    return path


def _fmt(p, v) -> str:
    return p.text(v) if p.dimension else f"{v:.6g}"


def cmd_fit(args) -> int:
    steps = steps_of(args, "fit", sys.stderr)
    steps.note(f"reading {args.design} and the sweeps")
    design = load_design(args.design)
    if not 1 <= args.starts <= 1000:
        raise ConfigError(f"give 1 to 1000 starting points, got {args.starts}",
                          field="--starts")
    _seed(args.seed)
    z_ref = design.radio.impedance
    if args.reference:
        try:
            z_ref = units.parse(args.reference if not args.reference.replace(".", "").isdigit()
                                else f"{args.reference} ohm", "resistance")
        except units.UnitError as exc:
            raise ConfigError(str(exc), field="--reference") from None
    sweeps = [read_measurement(p, at=args.at, frequency_unit=args.frequency_unit, z_ref=z_ref)
              for p in args.measured]
    bands = resolve_bands(design)
    for s in sweeps:
        check_overlap(s, bands)
    section = {**design.uncertain, **_checked_ranges(design, args.vary, "--vary")}
    params = build_params(design, section, key="uncertain", file=args.design)
    out = _out_folder(Path(args.out) if args.out else Path("runs") / f"{design.name}-fit")
    responder = Responder(design, sweeps)
    result = fit_design(design, sweeps, params, starts=args.starts, seed=args.seed,
                        responder=responder, on_step=steps)
    steps(0, None, "the model before and after against the sweeps")
    before, model = compare(design, sweeps, responder)
    after, calibrated = compare(result.design, sweeps, responder)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise NecflowError(f"cannot create output folder {out}: {exc.strerror}") from None
    fileio.write_text(out / "design.calibrated.yaml", resolved_yaml(result.design))
    fileio.save_figure(overlay_figure(sweeps, model, calibrated_mags=calibrated,
                                      title=f"{design.name}: model and measurement"),
                       out / "overlay.png", dpi=110)
    steps.close()
    files = {"calibrated_design": str(out / "design.calibrated.yaml"),
             "overlay": str(out / "overlay.png")}
    if args.json:
        sys.stdout.write(fileio.json_text({
            "design": design.name, "sweeps": [str(p) for p in args.measured],
            "complex_data": result.complex_data, "solves": result.solves,
            "fields": [{"path": p.path, "unit": p.dimension and units.DIMENSIONS[p.dimension][1],
                        "before": result.start[p.path], "fitted": result.values[p.path],
                        "sigma": result.sigma[p.path], "at_range_end": result.at_bound[p.path]}
                       for p in params],
            "residual_rms_before": result.rms_before, "residual_rms_after": result.rms_after,
            "bands": [{"band": b.band, "sweep": b.source,
                       "measured_f_swr_min_hz": b.measured_f_min_hz,
                       "model_f_swr_min_hz_before": b.model_f_min_hz,
                       "model_f_swr_min_hz_after": a.model_f_min_hz,
                       "shift_before_hz": b.shift_hz} for b, a in zip(before, after)],
            "notes": result.notes, "files": files}))
        return OK
    print(f"{design.name}: fitted {len(params)} field(s) to {len(sweeps)} sweep(s) "
          f"({'complex reflection' if result.complex_data else 'SWR magnitude only'}), "
          f"{result.solves} antenna solves")
    print(f"{'field':32s} {'before':>14s} {'fitted':>14s} {'+-1 sigma':>14s}")
    for p in params:
        s = result.sigma[p.path]
        sig = _fmt(p, s) if s == s and s != float("inf") else "undetermined"
        flag = "  (at range end)" if result.at_bound[p.path] else ""
        print(f"{p.path:32s} {_fmt(p, result.start[p.path]):>14s} "
              f"{_fmt(p, result.values[p.path]):>14s} {sig:>14s}{flag}")
    print(f"residual (rms, reflection): {result.rms_before:.4f} before, "
          f"{result.rms_after:.4f} after")
    print("lowest SWR per band (MHz): measured / model before / model after, shift before")
    for b, a in zip(before, after):
        print(f"  {b.band:5s} {b.source}: {b.measured_f_min_hz / 1e6:.4f} / "
              f"{b.model_f_min_hz / 1e6:.4f} / {a.model_f_min_hz / 1e6:.4f}, "
              f"shift {b.shift_hz / 1e3:+.1f} kHz")
    for n in result.notes:
        print(f"note: {n}")
    print(f"calibrated design: {out / 'design.calibrated.yaml'}")
    print(f"overlay plot: {out / 'overlay.png'}")
    return OK


def _band_line(b) -> str:
    return (f"  {b.band:5s} SWR min {b.swr_min:6.2f} at {b.frequency_swr_min_hz / 1e6:8.4f} MHz, "
            f"edges {b.swr_low_edge:6.2f} / {b.swr_high_edge:6.2f}, within limit "
            f"{100 * b.fraction_within_limit:3.0f} %")


def cmd_trim(args) -> int:
    steps = steps_of(args, "trim", sys.stderr)
    steps.note(f"reading {args.design}")
    design = load_design(args.design)
    _seed(args.seed)
    given = {}
    for t in args.target:
        if "=" not in t:
            raise ConfigError(f"'{t}' is not BAND=FREQ or BAND=centre", field="--target")
        k, v = t.split("=", 1)
        given[k.strip()] = v.strip()
    if given:
        try:
            resolve_targets(design, given)
        except ConfigError as exc:
            band = (exc.field or "").removeprefix("targets.")
            raise ConfigError(f"{band}: {exc.message}", field="--target") from None
    targets = {**design.targets, **given}
    adjust = _checked_ranges(design, args.adjust, "--adjust") if args.adjust else None
    r = trim_design(design, targets, adjust, seed=args.seed, on_step=steps)
    steps.close()
    if args.write:
        fileio.write_text(args.write, resolved_yaml(r.design))
    if args.json:
        _trim_json(design, r, args.write)
    else:
        _trim_text(design, r, args.write)
    if r.targets and all(t.band.name in r.unreachable for t in r.targets):
        raise GoalNotMet("no targeted band was reached ("
                         + ", ".join(t.band.name for t in r.targets) + "); see "
                         + ("'unreachable' in the output" if args.json else
                            "'cannot reach' above") + " for why")
    return OK


def _trim_json(design, r, written: str | None) -> None:
    sys.stdout.write(fileio.json_text({
        "design": design.name,
        "targets": [{"band": t.band.name, "frequency_hz": t.frequency_hz, "how": t.how}
                    for t in r.targets],
        "before": [dataclasses.asdict(b) for b in r.before],
        "steps": [{"path": s.path, "old": s.old, "new": s.new, "instruction": s.text,
                   "bands": [dataclasses.asdict(b) for b in s.bands],
                   "pushed_out": s.pushed_out} for s in r.steps],
        "reached_hz": r.reached, "unreachable": r.unreachable, "warnings": r.warnings,
        "solves": r.solves, "files": {"trimmed_design": written}}))


def _trim_text(design, r, written: str | None) -> None:
    print(f"{design.name}: targets " + ", ".join(
        f"{t.band.name} {t.frequency_hz / 1e6:.4g} MHz" + (" (centre)" if t.how == "centre"
                                                           else "") for t in r.targets))
    print("before:")
    for b in r.before:
        print(_band_line(b))
    if not r.steps:
        print("no change proposed: no adjustable field brings a target closer"
              if r.unreachable else "no change needed: every target is already met")
    for i, s in enumerate(r.steps, start=1):
        print(f"step {i}: {s.text}")
        for b in s.bands:
            print(_band_line(b))
    for t in r.targets:
        name = t.band.name
        f = r.reached[name]
        if name in r.unreachable:
            print(f"cannot reach {name}: {r.unreachable[name]}")
        else:
            print(f"{name}: lowest SWR at {f / 1e6:.4f} MHz, "
                  f"{100 * (f / t.frequency_hz - 1):+.2f} % from the target")
    for w in r.warnings:
        print(f"warning: {w}")
    if written:
        print(f"trimmed design: {written}")


def cmd_tolerance(args) -> int:
    steps = steps_of(args, "tolerance", sys.stderr)
    steps.note(f"reading {args.design}")
    design = load_design(args.design)
    if args.samples is not None and not 1 <= args.samples <= MAX_SAMPLES:
        raise ConfigError(f"give 1 to {MAX_SAMPLES:,} cases, got {args.samples}",
                          field="--samples")
    _seed(args.seed)
    r = monte_carlo(design, samples=args.samples, seed=args.seed, on_step=steps)
    if args.plot:
        steps(0, None, f"plotting {args.plot}")
        fileio.save_figure(tolerance_figure(r, title=f"{design.name}: tolerance, "
                                            f"{r.swr.shape[0]} cases, seed {r.seed}"),
                           args.plot, dpi=110)
    steps.close()
    rows = r.band_table()
    if args.json:
        sys.stdout.write(fileio.json_text({
            "design": design.name, "seed": r.seed, "cases": int(r.swr.shape[0]),
            "geometry_states": r.states, "swr_limit": r.swr_limit, "bands": rows,
            "files": {"plot": args.plot}}))
    else:
        print(f"{design.name}: {r.swr.shape[0]} cases, seed {r.seed}, {r.states} geometry "
              f"states solved, SWR limit {r.swr_limit:g}")
        print(f"{'band':6s} {'yield':>6s} {'within':>7s} {'loss p5':>8s} {'p50':>6s} "
              f"{'p95 dB':>7s} {'SWRmax p95':>11s}")
        for x in rows:
            print(f"{x['band']:6s} {100 * x['yield']:5.0f}% {100 * x['within_mean']:6.0f}% "
                  f"{x['loss_p5']:8.2f} {x['loss_p50']:6.2f} {x['loss_p95']:7.2f} "
                  f"{x['swr_max_p95']:11.2f}")
        print("yield: share of cases within the SWR limit across the whole band; within: "
              "mean share of the band's points within it")
    if args.plot and not args.json:
        print(f"plot: {args.plot}")
    return OK
