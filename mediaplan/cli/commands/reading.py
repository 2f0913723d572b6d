"""mediaplan reading: an osmometer reading of a batch against its plan (exit 0 consistent, 1 not, 2 bad input).

Prints the instrument's predicted reading with its 95 % interval (the model's uncertainty budget and the
instrument's repeatability), the reading, the deviation and a verdict; when the reading disagrees, the
single preparation slips that would explain it, most likely first. ``--record`` appends the reading to the
plan's own ``[[readings]]`` (an in-place edit: every other byte of the file stays). A stored calibration of
the instrument (``mediaplan osmometer calibrate``) is applied, with a note.
"""

from __future__ import annotations

from mediaplan.cli.common import add_mismatch_arguments, catalog_from, plan_under_policy, print_json

INSTRUMENT_CHOICES = ("freezing-point", "vapour-pressure")


def add_arguments(p) -> None:
    p.add_argument("plan", metavar="PLAN", help="the plan the batch was made from")
    p.add_argument("value", metavar="VALUE", help='what the osmometer displayed, e.g. "182 mOsm/kg"')
    p.add_argument("--instrument", choices=INSTRUMENT_CHOICES, default="freezing-point",
                   help="kind of osmometer (default freezing-point)")
    p.add_argument("--chamber", metavar="T",
                   help='chamber temperature of a vapour-pressure osmometer, e.g. "25 degC" (default: the plan\'s)')
    p.add_argument("--repeatability", metavar="SD",
                   help='s.d. of one reading, "2 mOsm/kg" or "0.5 %%" (default: the lab\'s setting, else a '
                        "common-practice figure for the instrument)")
    p.add_argument("--raw", action="store_true", help="ignore the instrument's stored calibration")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--record", action="store_true",
                   help="append the reading to the plan's [[readings]] (the file is edited in place)")
    p.add_argument("--operator", metavar="NAME", help="with --record: who measured")
    p.add_argument("--note", metavar="TEXT", help="with --record: a note (batch, vessel...)")
    p.add_argument("--date", metavar="YYYY-MM-DD", help="with --record: day of the reading (default today)")
    add_mismatch_arguments(p)
    p.epilog = "Exit status: 0 when the reading is consistent with the plan, 1 when it is not, 2 for bad input."


def _date(text: str | None):
    import datetime

    from mediaplan.medium.errors import AmountError

    if text is None:
        return datetime.date.today()
    try:
        return datetime.date.fromisoformat(text.strip())
    except ValueError:
        raise AmountError(f"cannot read {text[:40]!r} as a day", field="reading.date",
                          hint="write it as YYYY-MM-DD, e.g. 2026-12-05") from None


def run(args) -> int:
    from mediaplan.cli.common import note
    from mediaplan.files import osmometers
    from mediaplan.files.sharing import shadow_notes
    from mediaplan.medium.errors import AmountError
    from mediaplan.tasks.reading import check_reading, parse_reading

    displayed = parse_reading(args.value)  # bad input first: before any file is read
    if not args.record and (args.operator or args.note or args.date):
        raise AmountError("an operator, note or date is only kept with the record", field="reading.record",
                          asks_for="reading.record", hint="record the reading too")
    day = _date(args.date) if args.record else None
    inst, cal = osmometers.reading_setup(args.instrument, chamber=args.chamber, repeatability=args.repeatability,
                                         calibrated=not args.raw)
    catalog = catalog_from(args)
    for n in shadow_notes(catalog):
        note(n)
    notes: list[str] = []
    plan, cat = plan_under_policy(args.plan, catalog, args, notes)  # files/sharing.MISMATCH_POLICY
    for n in notes:
        note(n)
    result = check_reading(plan.recipe, cat, displayed, instrument=inst, calibration=cal,
                           osmotica_named=osmometers.osmotica_named(plan))
    if args.record:
        _record(plan, cat, args, day, note)
    if args.json:
        print_json(result.to_dict())
    else:
        from mediaplan.files.output import write_output
        from mediaplan.views.reading import reading_text

        write_output(reading_text(result.to_dict(), title=f"{args.plan}: {plan.title}"))
    return 0 if result.verdict == "consistent" else 1


def _record(plan, cat, args, day, note) -> None:
    """Append the reading to the plan's ``[[readings]]`` and say so on standard error."""
    from dataclasses import replace

    from mediaplan.files import planfile
    from mediaplan.files.plan_tables import ReadingRecord

    rec = ReadingRecord(value=args.value.strip(), instrument=args.instrument, date=day,
                        operator=args.operator or None, note=args.note or None,
                        chamber_temperature=args.chamber.strip() if args.chamber else None)
    said: list[str] = []
    planfile.write(replace(plan, readings=(*plan.readings, rec)), plan.path, catalog=cat, notes=said)
    note(f"{plan.path}: reading recorded ({len(plan.readings) + 1} in [[readings]])")
    for n in said:
        note(n)
