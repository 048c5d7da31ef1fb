"""``fieldlimits generate OUT_DIR``: write a synthetic (invented) network."""

from __future__ import annotations

from pathlib import Path

from pipeline.errors import BadInput

NAME = "generate"
HELP = "write a synthetic invented network of N airfields (for trials and benchmarks)"


def add_arguments(parser) -> None:
    parser.add_argument("out_dir", metavar="OUT_DIR", help="folder to write the input tables to")
    parser.add_argument("--airfields", type=int, default=200, metavar="N",
                        help="number of airfields (default 200)")
    parser.add_argument("--seed", type=int, default=1, help="random seed (default 1)")


def run(args) -> int:
    from demo_network.synthetic import generate_network

    if args.airfields < 1:
        raise BadInput("--airfields must be at least 1")
    out = Path(args.out_dir)
    out.mkdir(parents=True, exist_ok=True)
    generate_network(args.airfields, args.seed, out)
    print(f"wrote a synthetic network of {args.airfields} airfields to {out}")
    return 0
