"""mediaplan osmometer: the lab's osmometers.

``osmometer calibrate NOMINAL=DISPLAYED ...`` fits an offset and slope from readings of osmometer standards
(100, 290 and 1000 mOsm/kg are the usual ones; common practice) and stores them in the user config; later
readings of that instrument are corrected, with a note. ``osmometer repeatability SD`` sets the lab's own
repeatability of an instrument (instead of the common-practice default); ``osmometer show`` prints what is
stored,
``osmometer forget`` removes a calibration. ``osmometer report PLAN...`` checks every reading recorded in
the plans (``[[readings]]``) against its plan: a facility's record of its batches and its instruments
(Markdown, CSV or HTML with a measured-against-predicted plot).
"""

from __future__ import annotations

import sys

from mediaplan.cli.common import add_output_arguments, catalog_from, print_json

_ACTIONS = ("calibrate", "repeatability", "show", "forget", "report")


def add_arguments(p) -> None:
    p.add_argument("action", choices=_ACTIONS, help="what to do")
    p.add_argument("items", nargs="*", metavar="ITEM",
                   help="calibrate: NOMINAL=DISPLAYED pairs in mOsm/kg (e.g. 290=292.5); repeatability: the s.d. of "
                        "one reading ('2 mOsm/kg' or '0.5 %%'); report: plan files")
    p.add_argument("--instrument", choices=("freezing-point", "vapour-pressure"), default="freezing-point",
                   help="kind of osmometer (default freezing-point)")
    p.add_argument("--date", metavar="YYYY-MM-DD", help="calibrate: day of the standard readings (default today)")
    p.add_argument("--raw", action="store_true", help="report: ignore the stored calibrations")
    add_output_arguments(p, ("md", "csv", "html"), "md", format_help="report format")


def _pairs(items: list[str]) -> list[tuple[float, float]]:
    from mediaplan.medium.errors import AmountError

    out = []
    for item in items:
        nominal, sep, shown = item.partition("=")
        try:
            if not sep:
                raise ValueError
            out.append((float(nominal), float(shown)))
        except ValueError:
            raise AmountError(f"cannot read {item[:40]!r} as a standard reading", field="standards",
                              hint="write NOMINAL=DISPLAYED in mOsm/kg, e.g. 290=292.5") from None
    return out


def run(args) -> int:
    from mediaplan.cli.common import note
    from mediaplan.files import osmometers
    from mediaplan.medium.errors import AmountError

    if args.action != "report" and (args.format or args.output or args.raw):
        raise AmountError(f"{args.action} takes no report options", field="format", hint="leave them out")
    if args.action == "calibrate":
        import datetime

        from mediaplan.cli.commands.reading import _date

        day = _date(args.date) if args.date else datetime.date.today()
        cal, path = osmometers.calibrate(args.instrument, _pairs(args.items), date=day.isoformat())
        note(f"calibration of the {args.instrument} osmometer stored in {path}")
        if args.json:
            print_json(cal.to_dict())
        else:
            print(cal.note().replace(" calibration applied", " calibration"))
        return 0
    if args.action == "repeatability":
        if len(args.items) != 1:
            raise AmountError("give one repeatability", field="repeatability", hint='e.g. "2 mOsm/kg" or "0.5 %"')
        path = osmometers.save_repeatability(args.instrument, args.items[0])
        note(f"repeatability of the {args.instrument} osmometer stored in {path}")
        return 0
    if args.items and args.action in ("show", "forget"):
        raise AmountError(f"{args.action} takes no items", field="standards", hint="leave them out")
    if args.action == "show":
        cals = {k: osmometers.calibration_of(k) for k in ("freezing-point", "vapour-pressure")}
        if args.json:
            print_json({k: (c.to_dict() if c else None) for k, c in cals.items()}
                       | {f"{k} repeatability": osmometers.repeatability_of(k) for k in cals})
        else:
            for k, c in cals.items():
                print(c.note().replace(" calibration applied", " calibration") if c else f"{k}: not calibrated")
                inst = osmometers.instrument(k)
                own = osmometers.repeatability_of(k)
                print(f"{k}: repeatability {inst.sd_floor:g} mOsm/kg or {100 * inst.sd_fraction:g} % s.d."
                      + (f" (the lab's: {own})" if own else " (common practice)"))
            print(f"settings: {osmometers.settings_path()}")
        return 0
    if args.action == "forget":
        had = osmometers.forget_calibration(args.instrument)
        note(f"{args.instrument} calibration " + ("removed" if had else "was not stored"))
        return 0
    if not args.items:
        raise AmountError("no plans given", field="plans", hint="name the plan files whose readings to report")
    rows = report_rows(args.items, catalog_from(args), raw=args.raw)
    if args.json:
        from mediaplan.medium.evaluate import finite

        print_json(finite(rows), args.output, force=args.force, reads=tuple(args.items))
    else:
        from mediaplan.files.output import write_output
        from mediaplan.views.readings_report import facility_report

        write_output(facility_report(rows, args.format or "md"), args.output, force=args.force,
                     reads=tuple(args.items))
    if any(r.get("error") for r in rows):
        print(f"mediaplan: {sum(1 for r in rows if r.get('error'))} reading(s) could not be checked",
              file=sys.stderr)
        return 1
    return 0


def report_rows(paths: list[str], catalog, *, raw: bool = False) -> list[dict]:
    """One row per recorded reading of every plan, checked against its plan (a calibration applies to the
    readings made on or after its day)."""
    import datetime

    from mediaplan.files import osmometers
    from mediaplan.files.sharing import read_plan
    from mediaplan.medium.errors import MediaplanError
    from mediaplan.tasks.reading import check_reading

    cals = {} if raw else {k: osmometers.calibration_of(k) for k in ("freezing-point", "vapour-pressure")}
    rows: list[dict] = []
    for path in paths:
        try:
            plan, cat, _ = read_plan(path, catalog)
        except MediaplanError as exc:
            rows.append({"plan": path, "error": str(exc)})
            continue
        for rec in plan.readings:
            row = {"plan": path, "title": plan.title, "date": str(rec.date) if rec.date is not None else None,
                   "instrument": rec.instrument, "operator": rec.operator, "note": rec.note, "value": rec.value}
            try:
                chamber = None
                if rec.chamber_temperature:
                    from mediaplan.medium.units import parse_temperature

                    chamber = parse_temperature(rec.chamber_temperature, field="readings.chamber_temperature")
                inst = osmometers.instrument(rec.instrument or "freezing-point", chamber_temperature_k=chamber)
                cal = cals.get(inst.kind)
                if cal is not None and cal.date and rec.date is not None:
                    try:
                        if datetime.date.fromisoformat(str(rec.date)) < datetime.date.fromisoformat(cal.date):
                            cal = None
                    except ValueError:
                        pass
                res = check_reading(plan.recipe, cat, rec.value or "", instrument=inst, calibration=cal)
            except MediaplanError as exc:
                row["error"] = str(exc)
                rows.append(row)
                continue
            lo, hi = res.interval_mosmol_per_kg
            top = res.explanations[0].description if res.explanations and not res.none_explains else None
            row.update(reading_mosmol_per_kg=res.reading_mosmol_per_kg, predicted_mosmol_per_kg=res.predicted_mosmol_per_kg,
                       low=lo, high=hi, deviation_percent=res.deviation_percent, verdict=res.verdict, slip=top,
                       calibrated=cal is not None)
            rows.append(row)
    return rows
