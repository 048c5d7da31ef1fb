"""``fieldlimits explain``: one runway direction × month × type × condition, step by step."""

from __future__ import annotations

NAME = "explain"
HELP = "explain one case step by step: atmosphere, speeds, thrust, distances, climb, the limit"
DESCRIPTION = (
    "Solve one airfield, runway direction, month, aircraft type and runway condition on the "
    "design day and print every step of the calculation with its units: the atmosphere "
    "(station pressure, density, pressure and density altitude, ISA deviation), the speeds "
    "(VS, VMCG, V1, VR, VLOF, V2), the thrust, every distance and the climb gradient against "
    "what is available, the V1 chosen, the takeoff-weight limit and what sets it. With "
    "--landing, the landing on that runway direction instead: VREF and the touchdown speed, "
    "the airborne distance from 50 ft (approach, flare), the free roll and the braking roll, "
    "the required landing distance under the dispatch rule against the LDA, the approach "
    "and landing climb, and the landing-mass limit and what sets it."
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
    parser.add_argument("--landing", action="store_true",
                        help="explain the landing on this runway direction (the destination case) "
                             "instead of the takeoff")
    parser.add_argument("--landing-jet-share", type=float, default=0.6, metavar="S",
                        help="with --landing: share of the LDA a jet's dry landing distance may use "
                             "(default 0.6, 14 CFR 121.195(b))")
    parser.add_argument("--landing-turboprop-share", type=float, default=0.6, metavar="S",
                        help="with --landing: the same for propeller types (default 0.6; 0.7 under "
                             "the turboprop rule, 14 CFR 121.195(c))")
    parser.add_argument("--landing-wet-increase", type=float, default=0.15, metavar="F",
                        help="with --landing: wet-runway increase of the required distance "
                             "(default 0.15, 14 CFR 121.195(d))")


def run(args) -> int:
    from fieldlimits.pipeline.explain import explain_case

    if getattr(args, "landing", False):
        from fieldlimits.pipeline.explain_landing import explain_landing
        from fieldlimits.pipeline.steps import RunParams

        rule = RunParams(landing_jet_share=args.landing_jet_share,
                         landing_turboprop_share=args.landing_turboprop_share,
                         landing_wet_increase=args.landing_wet_increase).as_dict()  # checked there
        print(explain_landing(args.input_dir, args.airfield, args.runway, args.month, args.aircraft_type,
                              args.condition, args.temperature_offset, rule).text)
        return 0

    result = explain_case(args.input_dir, args.airfield, args.runway, args.month, args.aircraft_type,
                          args.condition, args.temperature_offset)
    print(result.text)
    return 0
