"""``fieldlimits generate OUT_DIR``: write a synthetic (invented) network."""

from __future__ import annotations

import time
from pathlib import Path

from fieldlimits.pipeline.errors import BadInput

NAME = "generate"
HELP = "write a synthetic invented network of N airfields (for trials and benchmarks)"


def add_arguments(parser) -> None:
    parser.add_argument("out_dir", metavar="OUT_DIR", help="folder to write the input tables to")
    parser.add_argument("--airfields", type=int, default=200, metavar="N",
                        help="number of airfields (default 200; 1 gives no routes table)")
    parser.add_argument("--seed", type=int, default=1,
                        help="random seed, a whole number ≥ 0 (default 1)")
    parser.add_argument("--obstacle-share", type=float, default=None, metavar="S",
                        help="share of runway directions with 1 to 10 obstacles past the end of "
                             "TODA (default 0.1; 0: no obstacles table)")


def run(args) -> int:
    from fieldlimits.demo_network.synthetic import OBSTACLE_SHARE, generate_network

    if args.airfields < 1:
        raise BadInput(f"--airfields must be at least 1; got {args.airfields}")
    if args.seed < 0:
        raise BadInput(f"--seed must be a whole number ≥ 0; got {args.seed}")
    share = OBSTACLE_SHARE if args.obstacle_share is None else args.obstacle_share
    if not 0.0 <= share <= 1.0:
        raise BadInput(f"--obstacle-share must be a share from 0 to 1; got {share}")
    out = Path(args.out_dir)
    if out.exists() and not out.is_dir():
        raise BadInput(f"{out} exists and is not a folder: give a folder for the tables")
    t0 = time.perf_counter()
    generate_network(args.airfields, args.seed, out, obstacle_share=share)
    fields = "airfield" if args.airfields == 1 else "airfields"
    print(f"wrote a synthetic network of {args.airfields} {fields} to {out} "
          f"in {time.perf_counter() - t0:.1f} s")
    return 0
