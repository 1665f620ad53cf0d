"""Writes the invented Marsh of Aldery for tinct's demo: five Sentinel-2-like L2A
scenes (18 April to 23 August 2026) as band files at 10, 20 and 60 m with a
scene-classification band, a 5 m colour orthophoto in another CRS for 14 June,
dated trap-site labels (breeding / non_breeding) and land-cover points as
GeoJSON, and the answer key. All invented; see README.md. Needs Debian's
/usr/bin/python3 with numpy and the GDAL bindings only.

usage: make_scenes.py OUTPUT_FOLDER [--small] [--seed N]"""
import argparse
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from aldery import build, scenario  # noqa: E402


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("output", help="folder to write (replaced if it exists)")
    parser.add_argument("--small", action="store_true", help="a 1.92 km district for tests (seconds)")
    parser.add_argument("--seed", type=int, default=2026)
    args = parser.parse_args()
    size = scenario.SIZES["small" if args.small else "demo"]
    summary = build.build(args.output, size, args.seed)
    print(f"aldery: wrote {args.output} ({size.name}, {summary['seconds']} s)")


if __name__ == "__main__":
    main()
