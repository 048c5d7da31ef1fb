"""``fieldlimits explain``: one runway direction × month × type × condition, step by step."""

from __future__ import annotations

NAME = "explain"
HELP = "explain one case step by step: atmosphere, speeds, thrust, distances, climb, the limit"
DESCRIPTION = (
    "Solve one airfield, runway direction, month, aircraft type and runway condition on the "
    "design day and print every step of the calculation with its units: the atmosphere "
    "(station pressure, density, pressure and density altitude, ISA deviation), the speeds "
    "(VS, VMCG, V1, VR, VLOF, V2), the thrust, every distance and the climb gradient against "
    "what is available, the V1 chosen, the takeoff-weight limit and what sets it."
)


def add_arguments(parser) -> None:
    parser.add_argument("input_dir", metavar="DIR", nargs="?", default=None,
                        help="input folder (default: the bundled demo network)")
    parser.add_argument("--airfield", required=True, help="airfield id, e.g. saltmere")
    parser.add_argument("--runway", required=True, help="runway direction (designator), e.g. 08")
    parser.add_argument("--month", required=True, type=int, help="month 1-12")
    parser.add_argument("--type", required=True, dest="aircraft_type", help="aircraft type id")
    parser.add_argument("--condition", choices=("dry", "wet"), default="dry", help="runway condition (default dry)")
    parser.add_argument("--temperature-offset", type=float, default=0.0, metavar="K",
                        help="climate scenario: kelvin added to the month's temperature (default 0)")


def run(args) -> int:
    from pipeline.explain import explain_case

    result = explain_case(args.input_dir, args.airfield, args.runway, args.month, args.aircraft_type,
                          args.condition, args.temperature_offset)
    print(result.text)
    return 0
