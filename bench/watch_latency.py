#!/usr/bin/env python3
"""Save-to-written latency of `candor memo --watch` (see bench/README.md).

Starts `candor memo --watch` on a copy of an example deal in a temporary folder, waits
for the first memo, then saves the deal file N times (each save changes the memo's
recommendation, the way an analyst edits it), and for each save measures the time from the
moment the save is complete (the file written and closed) to the moment the new memo
is in place (the output path names a new file: candor writes a temporary file and
renames it over the old one). The output path is polled every 0.5 ms, so a figure is
late by at most that. Saves are spaced a second apart so that each is built alone.

    python3 bench/watch_latency.py [CANDOR] [--deal FILE] [--saves N]
"""

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)


def stamp(path):
    try:
        st = os.stat(path)
    except FileNotFoundError:
        return None
    return (st.st_ino, st.st_mtime_ns, st.st_size)


def wait_for_change(path, before, timeout=30.0):
    start = time.perf_counter()
    while True:
        now = stamp(path)
        if now is not None and now != before:
            return time.perf_counter()
        if time.perf_counter() - start > timeout:
            raise SystemExit(f"no new memo at {path} within {timeout} s")
        time.sleep(0.0005)


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("candor", nargs="?", default=os.path.join(ROOT, "target/release/candor"))
    parser.add_argument("--deal", default=os.path.join(ROOT, "example-deals/brannock-mill-hydro.yaml"))
    parser.add_argument("--saves", type=int, default=20)
    args = parser.parse_args()

    with tempfile.TemporaryDirectory() as tmp:
        deal = os.path.join(tmp, "deal.yaml")
        pdf = os.path.join(tmp, "deal.pdf")
        with open(args.deal, encoding="utf-8") as f:
            original = f.read()
        if "  recommendation: " not in original:
            raise SystemExit(f"{args.deal} has no one-line recommendation to edit")
        with open(deal, "w", encoding="utf-8") as f:
            f.write(original)
        env = dict(os.environ, SOURCE_DATE_EPOCH="1798675200")
        child = subprocess.Popen(
            [args.candor, "memo", "--watch", deal, "-o", pdf],
            stdout=subprocess.DEVNULL,
            stderr=subprocess.DEVNULL,
            env=env,
        )
        try:
            wait_for_change(pdf, None)
            time.sleep(1.0)
            latencies = []
            for k in range(args.saves):
                before = stamp(pdf)
                # New words in the recommendation each time: the memo's text changes.
                text = original.replace(
                    "  recommendation: ", f"  recommendation: Revision {k + 1}. ", 1
                )
                with open(deal, "w", encoding="utf-8") as f:
                    f.write(text)
                saved = time.perf_counter()
                written = wait_for_change(pdf, before)
                latencies.append((written - saved) * 1000.0)
                time.sleep(1.0)
        finally:
            child.terminate()
            child.wait()
    latencies.sort()
    load = os.getloadavg()
    print(f"candor: {args.candor}; deal: {os.path.basename(args.deal)}; saves: {len(latencies)}")
    print(f"load average: {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}")
    print(
        "save to written, ms: min {:.1f}, median {:.1f}, 90th percentile {:.1f}, max {:.1f}".format(
            latencies[0],
            statistics.median(latencies),
            latencies[int(0.9 * (len(latencies) - 1))],
            latencies[-1],
        )
    )


if __name__ == "__main__":
    sys.exit(main())
