#!/usr/bin/env python3
"""Wall time of `candor memo` for each example deal, one whole process per run (see
bench/README.md): start, reading and checking the deal, the analysis, the charts, the
markup, typesetting, the PDF and writing it. Each deal is run `--runs` times after one
warm-up run; the best and the median are printed, with the load average.

    python3 bench/memo.py [CANDOR] [--runs N]
"""

import argparse
import glob
import os
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("candor", nargs="?", default=os.path.join(ROOT, "target/release/candor"))
    parser.add_argument("--runs", type=int, default=11)
    args = parser.parse_args()
    env = dict(os.environ, SOURCE_DATE_EPOCH="1798675200")
    deals = sorted(glob.glob(os.path.join(ROOT, "example-deals", "*.yaml")))
    load = os.getloadavg()
    print(f"candor: {args.candor}; runs: {args.runs} per deal (after one warm-up)")
    print(f"load average at the start: {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}")
    print(f"{'deal':32s} {'best ms':>8s} {'median ms':>10s}")
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "memo.pdf")
        for deal in deals:
            times = []
            for k in range(args.runs + 1):
                start = time.perf_counter()
                subprocess.run(
                    [args.candor, "memo", deal, "-o", out],
                    check=True,
                    stdout=subprocess.DEVNULL,
                    stderr=subprocess.DEVNULL,
                    env=env,
                )
                if k > 0:
                    times.append((time.perf_counter() - start) * 1000.0)
            name = os.path.basename(deal)
            print(f"{name:32s} {min(times):8.1f} {statistics.median(times):10.1f}")
    load = os.getloadavg()
    print(f"load average at the end: {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}")


if __name__ == "__main__":
    sys.exit(main())
