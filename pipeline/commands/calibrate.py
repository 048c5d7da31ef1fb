"""``fieldlimits calibrate DIR --out OUT``: fit type coefficients to published reference points."""

from __future__ import annotations

import sys

from fieldlimits.schemas.caution import CAUTION

NAME = "calibrate"
HELP = "fit aircraft-type coefficients to published field lengths (reference_points) and write a calibrated copy"
DESCRIPTION = (
    "Validate the input folder DIR, then fit the coefficients of every aircraft type that has\n"
    "rows in reference_points (published takeoff field lengths and climb-limited masses) by\n"
    "bounded least squares, each coefficient pulled towards its starting value (the table's\n"
    "or its class default). Write OUT: a copy of DIR whose aircraft_types carries the fitted\n"
    "coefficients (and, made explicit, the class defaults the fit used), ready for check and\n"
    "run; and OUT/calibration/ with the fit report (index.html: each point's published and\n"
    "model value and residual, each coefficient before and after, which ones the points could\n"
    "not pin down; coefficients.csv, points.csv, a chart per type). DIR is never changed."
)


def add_arguments(parser) -> None:
    from fieldlimits.physics.calibration import POINT_SHARE_SD
    from fieldlimits.pipeline.calibration import FIT_COLUMNS

    parser.add_argument("input_dir", metavar="DIR", help="input folder with a reference_points table")
    parser.add_argument("--out", required=True, metavar="OUT",
                        help="new folder for the calibrated tables and the report")
    parser.add_argument("--fit", default="blank", metavar="WHAT",
                        help="coefficients to fit: 'blank' (default: those the table leaves blank, "
                             "i.e. class defaults), 'all', or a comma-separated list of "
                             + ", ".join(FIT_COLUMNS))
    parser.add_argument("--type", action="append", default=[], dest="types", metavar="TYPE_ID",
                        help="calibrate only this type (repeat for more); the others are copied unchanged")
    parser.add_argument("--point-uncertainty", type=float, default=100 * POINT_SHARE_SD, metavar="PCT",
                        help=f"uncertainty of a published value, %% (default {100 * POINT_SHARE_SD:g}); "
                             "smaller lets the points pull harder against the priors")
    parser.add_argument("--overwrite", action="store_true", help="replace OUT if it exists")
    parser.add_argument("--quiet", action="store_true", help="print nothing but errors")


def run(args) -> int:
    from fieldlimits.pipeline import calibration, calibration_report

    fit = calibration.parse_fit_choice(args.fit)
    live = not args.quiet and sys.stderr.isatty()

    def progress(message: str) -> None:
        if live:
            print(f"\r  fitted {message}   ", end="", file=sys.stderr, flush=True)

    result = calibration.calibrate(args.input_dir, fit=fit, type_ids=args.types or None,
                                   point_share_sd=args.point_uncertainty / 100.0, progress=progress)
    index = calibration.write_calibration(result, args.out, overwrite=args.overwrite)
    if live:
        print("", file=sys.stderr)
    if not args.quiet:
        for tf in result.fits:
            s = calibration_report.summary(tf, result.point_share_sd)
            loose = f"; not pinned down: {', '.join(s['not_pinned_down'])}" if s["not_pinned_down"] else ""
            if not s["coefficients"]:
                print(f"{tf.aircraft_type_id}: {s['points']} points, residual RMS {s['rms_before_pct']:.2f} % "
                      f"(largest {s['max_after_pct']:.2f} %); nothing to fit: every coefficient of --fit "
                      f"{args.fit} is given in the table (--fit all refits them)")
                continue
            print(f"{tf.aircraft_type_id}: {s['points']} points, residual RMS {s['rms_before_pct']:.2f} % -> "
                  f"{s['rms_after_pct']:.2f} % (largest {s['max_after_pct']:.2f} %), {s['determined']} of "
                  f"{s['coefficients']} coefficients determined{loose} ({s['seconds']:.1f} s)")
        if result.without_points:
            print(f"unchanged (no reference points): {', '.join(result.without_points)}")
        print(f"calibrated input folder: {args.out}")
        print(f"fit report: {index}")
        print(CAUTION)
    return 0
